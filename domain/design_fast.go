package domain

import (
	"bytes"
	"strconv"
	"unicode/utf8"
)

// decodeDesignFast reads a well-formed, well-shaped design document in one
// pass over its bytes, without reflection or tokens. It accepts only what
// the strict path (the shape walker, then encoding/json) accepts, and
// gives the same Design for it; at anything else (an unknown or repeated
// key, a value of the wrong type, broken JSON, and rarities such as an
// escaped key, invalid UTF-8 or a surrogate escape) it gives up, and the
// strict path decodes the document again to describe every problem.
// FuzzDecodeDesign holds the two paths to the same answers.
func decodeDesignFast(data []byte) (Design, bool) {
	// Every node has a "type": counting `ype"` (a rare byte first, so the
	// count is quick) sizes the node list and the blocks its parts are
	// handed out from. It only sizes them (a list grows past it), and no
	// node is shorter than minNodeBytes, which keeps what they take in
	// proportion to the document whatever it says.
	hint := min(bytes.Count(data, []byte(`ype"`)), len(data)/minNodeBytes, MaxDesignNodes+1)
	f := fastDecoder{data: data, hint: max(hint, 1)}
	var d Design
	f.space()
	if f.peek() != '{' || !f.design(&d) {
		return Design{}, false
	}
	f.space()
	return d, f.pos == len(f.data)
}

// minNodeBytes is about the fewest bytes a node takes: {"id":"a","type":"load"}.
const minNodeBytes = 24

type fastDecoder struct {
	data []byte
	pos  int
	hint int // about how many nodes the document holds
	// text is data as a string, made at the first string value: every
	// plain string of the document is a slice of it, one allocation for
	// all of them.
	text string

	// The parts a design points to are handed out from shared blocks, an
	// allocation per block rather than per part.
	floats blocks[float64]
	ints   blocks[int]
	ids    blocks[int64]
	feeds  blocks[Feed]
	wires  blocks[Wire]
	fuses  blocks[Fuse]
	conns  []Connector // every feed's connectors, each feed's a capped slice of it
}

// blocks hands out zeroed elements of shared blocks. A full block is left
// to the pointers into it and a new one started.
type blocks[T any] struct{ block []T }

func (b *blocks[T]) next(size int) *T {
	if len(b.block) == cap(b.block) {
		b.block = make([]T, 0, size)
	}
	b.block = b.block[:len(b.block)+1]
	return &b.block[len(b.block)-1]
}

// blockSize is how many parts a block holds: about perNode for each node
// the document seems to hold, within [1, most].
func (f *fastDecoder) blockSize(perNode, most int) int {
	return min(max(perNode*f.hint, 1), most)
}

func (f *fastDecoder) peek() byte {
	if f.pos < len(f.data) {
		return f.data[f.pos]
	}
	return 0
}

func (f *fastDecoder) space() {
	for f.pos < len(f.data) {
		switch f.data[f.pos] {
		case ' ', '\t', '\n', '\r':
			f.pos++
		default:
			return
		}
	}
}

// null consumes a JSON null, which leaves a field out, as encoding/json
// does.
func (f *fastDecoder) null() bool { return f.literal("null") }

func (f *fastDecoder) literal(word string) bool {
	if len(f.data)-f.pos >= len(word) && string(f.data[f.pos:f.pos+len(word)]) == word {
		f.pos += len(word)
		return true
	}
	return false
}

// members walks an object, calling member with each key once the value's
// first byte is next; member reads the value and reports success. Keys
// must be plain ASCII without escapes: every known key is, and anything
// else goes to the strict path.
func (f *fastDecoder) members(member func(key []byte) bool) bool {
	if f.peek() != '{' {
		return false
	}
	f.pos++
	f.space()
	if f.peek() == '}' {
		f.pos++
		return true
	}
	for {
		f.space()
		if f.peek() != '"' {
			return false
		}
		start := f.pos + 1
		end := start
		for end < len(f.data) && f.data[end] != '"' {
			if c := f.data[end]; c == '\\' || c < 0x20 || c >= utf8.RuneSelf {
				return false
			}
			end++
		}
		if end == len(f.data) {
			return false
		}
		f.pos = end + 1
		f.space()
		if f.peek() != ':' {
			return false
		}
		f.pos++
		f.space()
		if !member(f.data[start:end]) {
			return false
		}
		f.space()
		switch f.peek() {
		case ',':
			f.pos++
		case '}':
			f.pos++
			return true
		default:
			return false
		}
	}
}

// elements walks an array, calling element with each element's first byte
// next.
func (f *fastDecoder) elements(element func() bool) bool {
	if f.peek() != '[' {
		return false
	}
	f.pos++
	f.space()
	if f.peek() == ']' {
		f.pos++
		return true
	}
	for {
		f.space()
		if !element() {
			return false
		}
		f.space()
		switch f.peek() {
		case ',':
			f.pos++
		case ']':
			f.pos++
			return true
		default:
			return false
		}
	}
}

// once records key number bit in seen, and fails on a key given twice.
func once(seen *uint64, bit uint) bool {
	if *seen&(1<<bit) != 0 {
		return false
	}
	*seen |= 1 << bit
	return true
}

func (f *fastDecoder) str(dst *string) bool {
	if f.peek() == 'n' {
		return f.null()
	}
	if f.peek() != '"' {
		return false
	}
	start := f.pos + 1
	plain, ascii := true, true
	end := start
	for ; end < len(f.data); end++ {
		c := f.data[end]
		if c == '"' {
			break
		}
		switch {
		case c < 0x20:
			return false
		case c == '\\':
			plain = false
			end++ // the escaped byte cannot end the string
		case c >= utf8.RuneSelf:
			ascii = false
		}
	}
	if end >= len(f.data) {
		return false
	}
	raw := f.data[start:end]
	f.pos = end + 1
	// encoding/json would replace invalid UTF-8; leave that to it.
	if !ascii && !utf8.Valid(raw) {
		return false
	}
	if plain {
		if f.text == "" {
			f.text = string(f.data)
		}
		*dst = f.text[start:end]
		return true
	}
	s, ok := unescape(raw)
	*dst = s
	return ok
}

// unescape decodes a string body's escapes. A \u escape of a surrogate is
// left to the strict path, which pairs or replaces it.
func unescape(raw []byte) (string, bool) {
	out := make([]byte, 0, len(raw))
	for i := 0; i < len(raw); i++ {
		c := raw[i]
		if c != '\\' {
			out = append(out, c)
			continue
		}
		i++
		if i >= len(raw) {
			return "", false
		}
		switch raw[i] {
		case '"', '\\', '/':
			out = append(out, raw[i])
		case 'b':
			out = append(out, '\b')
		case 'f':
			out = append(out, '\f')
		case 'n':
			out = append(out, '\n')
		case 'r':
			out = append(out, '\r')
		case 't':
			out = append(out, '\t')
		case 'u':
			if i+4 >= len(raw) {
				return "", false
			}
			r, err := strconv.ParseUint(string(raw[i+1:i+5]), 16, 16)
			if err != nil || utf8.RuneLen(rune(r)) < 0 {
				return "", false
			}
			out = utf8.AppendRune(out, rune(r))
			i += 4
		default:
			return "", false
		}
	}
	return string(out), true
}

func (f *fastDecoder) boolean(dst *bool) bool {
	switch {
	case f.literal("true"):
		*dst = true
	case f.literal("false"):
		*dst = false
	default:
		return f.null()
	}
	return true
}

// number consumes a JSON number and returns its text.
func (f *fastDecoder) number() ([]byte, bool) {
	d, i := f.data, f.pos
	digits := func() bool {
		j := i
		for i < len(d) && d[i] >= '0' && d[i] <= '9' {
			i++
		}
		return i > j
	}
	if i < len(d) && d[i] == '-' {
		i++
	}
	switch {
	case i < len(d) && d[i] == '0':
		i++
	case !digits():
		return nil, false
	}
	if i < len(d) && d[i] == '.' {
		i++
		if !digits() {
			return nil, false
		}
	}
	if i < len(d) && (d[i] == 'e' || d[i] == 'E') {
		i++
		if i < len(d) && (d[i] == '+' || d[i] == '-') {
			i++
		}
		if !digits() {
			return nil, false
		}
	}
	text := d[f.pos:i]
	f.pos = i
	return text, true
}

func (f *fastDecoder) float(dst *float64) bool {
	if f.peek() == 'n' {
		return f.null()
	}
	text, ok := f.number()
	if !ok {
		return false
	}
	if v, ok := shortDecimal(text); ok {
		*dst = v
		return true
	}
	v, err := strconv.ParseFloat(string(text), 64)
	*dst = v
	return err == nil
}

// shortDecimal reads a JSON number of at most 15 digits and no exponent,
// the way nearly every value of a design is written, as m / 10^k: both
// are exact in a float64 and one division rounds correctly, so it gives
// what ParseFloat gives (strconv takes the same shortcut, after reading
// the text in a more general way).
func shortDecimal(text []byte) (float64, bool) {
	negative := len(text) > 0 && text[0] == '-'
	if negative {
		text = text[1:]
	}
	m, div, digits, fraction := uint64(0), uint64(1), 0, false
	for _, c := range text {
		switch {
		case '0' <= c && c <= '9':
			m = m*10 + uint64(c-'0')
			digits++
			if fraction {
				div *= 10
			}
		case c == '.' && !fraction:
			fraction = true
		default:
			return 0, false
		}
	}
	if digits == 0 || digits > 15 {
		return 0, false
	}
	v := float64(m) / float64(div)
	if negative {
		v = -v
	}
	return v, true
}

func (f *fastDecoder) optFloat(dst **float64) bool {
	if f.peek() == 'n' {
		return f.null()
	}
	var v float64
	if !f.float(&v) {
		return false
	}
	p := f.floats.next(f.blockSize(12, 512)) // a node carries up to a dozen
	*p = v
	*dst = p
	return true
}

// int64Value reads a whole number as encoding/json does for an integer
// field: no fraction and no exponent.
func (f *fastDecoder) int64Value() (int64, bool) {
	text, ok := f.number()
	if !ok {
		return 0, false
	}
	v, err := strconv.ParseInt(string(text), 10, 64)
	return v, err == nil
}

func (f *fastDecoder) integer(dst *int) bool {
	if f.peek() == 'n' {
		return f.null()
	}
	v, ok := f.int64Value()
	if !ok || int64(int(v)) != v {
		return false
	}
	*dst = int(v)
	return true
}

func (f *fastDecoder) optInt(dst **int) bool {
	if f.peek() == 'n' {
		return f.null()
	}
	var v int
	if !f.integer(&v) {
		return false
	}
	p := f.ints.next(f.blockSize(2, 256))
	*p = v
	*dst = p
	return true
}

func (f *fastDecoder) optInt64(dst **int64) bool {
	if f.peek() == 'n' {
		return f.null()
	}
	v, ok := f.int64Value()
	if !ok {
		return false
	}
	p := f.ids.next(f.blockSize(1, 256))
	*p = v
	*dst = p
	return true
}

func (f *fastDecoder) design(d *Design) bool {
	var seen uint64
	return f.members(func(key []byte) bool {
		switch string(key) {
		case "format":
			return once(&seen, 0) && f.integer(&d.Format)
		case "name":
			return once(&seen, 1) && f.str(&d.Name)
		case "description":
			return once(&seen, 2) && f.str(&d.Description)
		case "ambient_c":
			return once(&seen, 3) && f.optFloat(&d.AmbientC)
		case "target_runtime_h":
			return once(&seen, 4) && f.optFloat(&d.TargetRuntimeH)
		case "nodes":
			if !once(&seen, 5) {
				return false
			}
			if f.peek() == 'n' {
				return f.null()
			}
			d.Nodes = make([]Node, 0, f.hint)
			return f.elements(func() bool {
				// Room past the length is zero, in a new array as in a
				// grown one: taking it writes nothing.
				if len(d.Nodes) < cap(d.Nodes) {
					d.Nodes = d.Nodes[:len(d.Nodes)+1]
				} else {
					d.Nodes = append(d.Nodes, Node{})
				}
				return f.peek() == 'n' && f.null() || f.node(&d.Nodes[len(d.Nodes)-1])
			})
		}
		return false
	})
}

func (f *fastDecoder) node(n *Node) bool {
	var seen uint64
	return f.members(func(key []byte) bool {
		switch string(key) {
		case "id":
			return once(&seen, 0) && f.str(&n.ID)
		case "type":
			return once(&seen, 1) && f.str(&n.Type)
		case "component_id":
			return once(&seen, 2) && f.optInt64(&n.ComponentID)
		case "mains":
			return once(&seen, 3) && f.boolean(&n.Mains)
		case "feed":
			if !once(&seen, 4) {
				return false
			}
			if f.peek() == 'n' {
				return f.null()
			}
			n.Feed = f.feeds.next(f.blockSize(1, 256))
			return f.feed(n.Feed)
		case "chemistry":
			return once(&seen, 5) && f.str(&n.Chemistry)
		case "series":
			return once(&seen, 6) && f.optInt(&n.Series)
		case "parallel":
			return once(&seen, 7) && f.optInt(&n.Parallel)
		case "cell_capacity_mah":
			return once(&seen, 8) && f.optFloat(&n.CellCapacityMAh)
		case "cell_full_v":
			return once(&seen, 9) && f.optFloat(&n.CellFullV)
		case "cell_nominal_v":
			return once(&seen, 10) && f.optFloat(&n.CellNominalV)
		case "cell_cutoff_v":
			return once(&seen, 11) && f.optFloat(&n.CellCutoffV)
		case "cell_internal_ohm":
			return once(&seen, 12) && f.optFloat(&n.CellInternalOhm)
		case "max_discharge_a":
			return once(&seen, 13) && f.optFloat(&n.MaxDischargeA)
		case "output_v":
			return once(&seen, 14) && f.optFloat(&n.OutputV)
		case "max_a":
			return once(&seen, 15) && f.optFloat(&n.MaxA)
		case "topology":
			return once(&seen, 16) && f.str(&n.Topology)
		case "max_output_a":
			return once(&seen, 17) && f.optFloat(&n.MaxOutputA)
		case "quiescent_a":
			return once(&seen, 18) && f.optFloat(&n.QuiescentA)
		case "dropout_v":
			return once(&seen, 19) && f.optFloat(&n.DropoutV)
		case "theta_ja_c_per_w":
			return once(&seen, 20) && f.optFloat(&n.ThetaJACPerW)
		case "tj_max_c":
			return once(&seen, 21) && f.optFloat(&n.TjMaxC)
		case "efficiency":
			return once(&seen, 22) && f.optFloat(&n.Efficiency)
		case "min_input_v":
			return once(&seen, 23) && f.optFloat(&n.MinInputV)
		case "max_input_v":
			return once(&seen, 24) && f.optFloat(&n.MaxInputV)
		case "continuous_a":
			return once(&seen, 25) && f.optFloat(&n.ContinuousA)
		case "peak_a":
			return once(&seen, 26) && f.optFloat(&n.PeakA)
		case "rated_v":
			return once(&seen, 27) && f.optFloat(&n.RatedV)
		case "no_load_a":
			return once(&seen, 28) && f.optFloat(&n.NoLoadA)
		case "stall_a":
			return once(&seen, 29) && f.optFloat(&n.StallA)
		case "running_a":
			return once(&seen, 30) && f.optFloat(&n.RunningA)
		case "min_v":
			return once(&seen, 31) && f.optFloat(&n.MinV)
		case "max_v":
			return once(&seen, 32) && f.optFloat(&n.MaxV)
		case "duty":
			return once(&seen, 33) && f.optFloat(&n.Duty)
		case "current_a":
			return once(&seen, 34) && f.optFloat(&n.CurrentA)
		case "critical":
			return once(&seen, 35) && f.boolean(&n.Critical)
		}
		return false
	})
}

func (f *fastDecoder) feed(fd *Feed) bool {
	var seen uint64
	return f.members(func(key []byte) bool {
		switch string(key) {
		case "from":
			return once(&seen, 0) && f.str(&fd.From)
		case "wire":
			if !once(&seen, 1) {
				return false
			}
			if f.peek() == 'n' {
				return f.null()
			}
			fd.Wire = f.wires.next(f.blockSize(1, 256))
			return f.wire(fd.Wire)
		case "fuse":
			if !once(&seen, 2) {
				return false
			}
			if f.peek() == 'n' {
				return f.null()
			}
			fd.Fuse = f.fuses.next(f.blockSize(1, 64))
			return f.fuse(fd.Fuse)
		case "connectors":
			if !once(&seen, 3) {
				return false
			}
			if f.peek() == 'n' {
				return f.null()
			}
			// A feed's connectors are parsed one after the other, so they
			// lie together at the end of f.conns. When the block is full,
			// the feed's so far move to a new one; earlier feeds keep theirs.
			start := len(f.conns)
			ok := f.elements(func() bool {
				if len(f.conns) == cap(f.conns) {
					run := f.conns[start:]
					f.conns = append(make([]Connector, 0, max(2*len(run), f.blockSize(1, 64))), run...)
					start = 0
				}
				f.conns = append(f.conns, Connector{})
				return f.peek() == 'n' && f.null() || f.connector(&f.conns[len(f.conns)-1])
			})
			if end := len(f.conns); end > start {
				fd.Connectors = f.conns[start:end:end]
			} else {
				fd.Connectors = []Connector{}
			}
			return ok
		}
		return false
	})
}

func (f *fastDecoder) wire(w *Wire) bool {
	var seen uint64
	return f.members(func(key []byte) bool {
		switch string(key) {
		case "gauge":
			return once(&seen, 0) && f.str(&w.Gauge)
		case "length_m":
			return once(&seen, 1) && f.float(&w.LengthM)
		case "insulation_c":
			return once(&seen, 2) && f.optFloat(&w.InsulationC)
		case "bundled":
			return once(&seen, 3) && f.optInt(&w.Bundled)
		}
		return false
	})
}

func (f *fastDecoder) fuse(fu *Fuse) bool {
	var seen uint64
	return f.members(func(key []byte) bool {
		switch string(key) {
		case "rating_a":
			return once(&seen, 0) && f.float(&fu.RatingA)
		case "speed":
			return once(&seen, 1) && f.str(&fu.Speed)
		case "voltage_rating_v":
			return once(&seen, 2) && f.optFloat(&fu.VoltageRatingV)
		case "distance_from_source_m":
			return once(&seen, 3) && f.optFloat(&fu.DistanceFromSourceM)
		case "sheathed":
			return once(&seen, 4) && f.boolean(&fu.Sheathed)
		case "family":
			return once(&seen, 5) && f.str(&fu.Family)
		}
		return false
	})
}

func (f *fastDecoder) connector(c *Connector) bool {
	var seen uint64
	return f.members(func(key []byte) bool {
		switch string(key) {
		case "family":
			return once(&seen, 0) && f.str(&c.Family)
		case "rating_a":
			return once(&seen, 1) && f.optFloat(&c.RatingA)
		case "rating_v":
			return once(&seen, 2) && f.optFloat(&c.RatingV)
		}
		return false
	})
}
