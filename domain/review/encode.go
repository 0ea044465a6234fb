package review

import (
	"fmt"
	"math"
	"strconv"
	"unicode/utf8"
)

// AppendJSON appends the report as encoding/json's Marshal writes it, byte
// for byte, without reflection: a 30-node report is tens of kilobytes and
// the service writes one per review. The field names and order are those
// of the struct tags, and TestAppendJSONMatchesEncodingJSON holds the two
// together, so a field added to a report type must be added here too.
// Like Marshal it refuses NaN and ±Inf.
func (rep *Report) AppendJSON(b []byte) ([]byte, error) {
	var e reportEncoder
	out := e.report(b, rep)
	if e.bad {
		return b, fmt.Errorf("encode report: a number is NaN or infinite")
	}
	return out, nil
}

// reportEncoder is what AppendJSON remembers while it writes. The output
// itself is passed along and returned, not kept here: a slice stored
// through a pointer costs a write barrier while the collector runs, and a
// report is thousands of appends.
type reportEncoder struct {
	bad bool // a number JSON cannot hold was met
	// Every check carries the basis of its kind: a few sentences, each
	// written many times. Once escaped, a basis is copied from where it was
	// first written.
	bases  [16]written
	nBases int
	// A report holds the same numbers many times over (a 30-node one
	// writes 679 numbers, 115 of them different): the last number written
	// in each slot of a small table keyed by its bits is copied from where
	// it was written instead of formatted again.
	numbers [64]writtenNumber
}

// writtenNumber is a number and where its encoding lies in the output.
type writtenNumber struct {
	bits       uint64
	start, end int32
}

// written is a string and where its encoding lies in the output.
type written struct {
	s          string
	start, end int
}

// repeated writes s, a string the report holds many times over.
func (e *reportEncoder) repeated(b []byte, s string) []byte {
	for _, w := range e.bases[:e.nBases] {
		if w.s == s {
			return append(b, b[w.start:w.end]...)
		}
	}
	start := len(b)
	b = e.str(b, s)
	if e.nBases < len(e.bases) {
		e.bases[e.nBases] = written{s, start, len(b)}
		e.nBases++
	}
	return b
}

func (e *reportEncoder) report(b []byte, rep *Report) []byte {
	b = e.strField(b, `{"status":`, string(rep.Status))
	b = append(b, `,"limits_version":`...)
	b = strconv.AppendInt(b, int64(rep.LimitsVersion), 10)
	b = e.strField(b, `,"engine_version":`, rep.EngineVersion)
	c := rep.Counts
	b = append(b, `,"counts":{"pass":`...)
	b = strconv.AppendInt(b, int64(c.Pass), 10)
	b = append(b, `,"warn":`...)
	b = strconv.AppendInt(b, int64(c.Warn), 10)
	b = append(b, `,"fail":`...)
	b = strconv.AppendInt(b, int64(c.Fail), 10)
	b = append(b, `,"out_of_scope":`...)
	b = strconv.AppendInt(b, int64(c.OutOfScope), 10)

	b = append(b, `},"checks":`...)
	if rep.Checks == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i := range rep.Checks {
			b = comma(b, i)
			b = e.check(b, &rep.Checks[i])
		}
		b = append(b, ']')
	}
	b = append(b, `,"nodes":`...)
	if rep.Nodes == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i := range rep.Nodes {
			b = comma(b, i)
			b = e.node(b, &rep.Nodes[i])
		}
		b = append(b, ']')
	}
	b = append(b, `,"feeds":`...)
	if rep.Feeds == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i := range rep.Feeds {
			b = comma(b, i)
			b = e.feed(b, &rep.Feeds[i])
		}
		b = append(b, ']')
	}
	b = append(b, `,"runtime":`...)
	if rep.Runtime == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i := range rep.Runtime {
			b = comma(b, i)
			b = e.runtime(b, &rep.Runtime[i])
		}
		b = append(b, ']')
	}
	b = append(b, `,"cautions":`...)
	if rep.Cautions == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i, s := range rep.Cautions {
			b = comma(b, i)
			b = e.str(b, s)
		}
		b = append(b, ']')
	}
	b = append(b, '}')
	return b
}

func (e *reportEncoder) check(b []byte, c *Check) []byte {
	b = e.strField(b, `{"check":`, c.Check)
	b = e.strField(b, `,"node":`, c.Node)
	b = e.strField(b, `,"pointer":`, c.Pointer)
	b = e.strField(b, `,"status":`, string(c.Status))
	b = e.numField(b, `,"value":`, c.Value)
	b = e.numField(b, `,"limit":`, c.Limit)
	b = e.strField(b, `,"unit":`, c.Unit)
	b = e.strField(b, `,"message":`, c.Message)
	b = append(b, `,"basis":`...)
	b = e.repeated(b, c.Basis)
	b = append(b, '}')
	return b
}

func (e *reportEncoder) node(b []byte, n *NodeResult) []byte {
	b = e.strField(b, `{"id":`, n.ID)
	b = e.strField(b, `,"type":`, n.Type)
	if n.Parent != "" {
		b = e.strField(b, `,"parent":`, n.Parent)
	}
	b = e.numField(b, `,"v_low":`, n.VLow)
	b = e.numField(b, `,"v_nominal":`, n.VNominal)
	b = e.numField(b, `,"v_high":`, n.VHigh)
	b = e.numField(b, `,"run_a":`, n.RunA)
	b = e.numField(b, `,"peak_a":`, n.PeakA)
	b = e.numField(b, `,"avg_a":`, n.AvgA)
	b = e.optNum(b, `,"out_v_low":`, n.OutVLow)
	b = e.optNum(b, `,"out_v_nominal":`, n.OutVNominal)
	b = e.optNum(b, `,"out_v_high":`, n.OutVHigh)
	b = e.optNum(b, `,"dissipation_w":`, n.DissipationW)
	b = e.optNum(b, `,"junction_c":`, n.JunctionC)
	if n.Collapsed {
		b = append(b, `,"collapsed":true`...)
	}
	b = append(b, '}')
	return b
}

func (e *reportEncoder) feed(b []byte, f *FeedResult) []byte {
	b = e.strField(b, `{"node":`, f.Node)
	b = e.strField(b, `,"from":`, f.From)
	b = e.strField(b, `,"gauge":`, f.Gauge)
	b = e.numField(b, `,"length_m":`, f.LengthM)
	b = e.numField(b, `,"resistance_ohm":`, f.ResistanceOhm)
	b = e.numField(b, `,"run_a":`, f.RunA)
	b = e.numField(b, `,"peak_a":`, f.PeakA)
	b = e.numField(b, `,"drop_v":`, f.DropV)
	b = e.numField(b, `,"drop_pct":`, f.DropPct)
	b = e.numField(b, `,"ampacity_a":`, f.AmpacityA)
	b = e.optNum(b, `,"fuse_a":`, f.FuseA)
	b = append(b, '}')
	return b
}

func (e *reportEncoder) runtime(b []byte, r *RuntimeResult) []byte {
	b = e.strField(b, `{"source":`, r.Source)
	b = append(b, `,"hours":`...)
	if r.Hours == nil {
		b = append(b, "null"...)
	} else {
		b = e.num(b, *r.Hours)
	}
	b = e.numField(b, `,"usable_share":`, r.UsableShare)
	b = e.strField(b, `,"limited_by":`, r.LimitedBy)

	p := &r.Pack
	b = e.strField(b, `,"pack":{"chemistry":`, p.Chemistry)
	b = append(b, `,"series":`...)
	b = strconv.AppendInt(b, int64(p.Series), 10)
	b = append(b, `,"parallel":`...)
	b = strconv.AppendInt(b, int64(p.Parallel), 10)
	b = e.numField(b, `,"capacity_ah":`, p.CapacityAh)
	b = e.numField(b, `,"full_v":`, p.FullV)
	b = e.numField(b, `,"nominal_v":`, p.NominalV)
	b = e.numField(b, `,"cutoff_v":`, p.CutoffV)
	b = e.numField(b, `,"full_soc":`, p.FullSOC)
	b = append(b, `,"curve":`...)
	if p.Curve == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i, pt := range p.Curve {
			b = comma(b, i)
			b = e.numField(b, `{"soc":`, pt.SOC)
			b = e.numField(b, `,"pack_v":`, pt.PackV)
			b = append(b, '}')
		}
		b = append(b, ']')
	}
	b = append(b, `},"brownouts":`...)
	if r.Brownouts == nil {
		b = append(b, "null"...)
	} else {
		b = append(b, '[')
		for i := range r.Brownouts {
			bo := &r.Brownouts[i]
			b = comma(b, i)
			b = e.strField(b, `{"node":`, bo.Node)
			b = e.strField(b, `,"outcome":`, bo.Outcome)
			b = e.optNum(b, `,"pack_v":`, bo.PackV)
			b = e.optNum(b, `,"soc":`, bo.SOC)
			b = append(b, '}')
		}
		b = append(b, ']')
	}
	b = append(b, '}')
	return b
}

func comma(b []byte, i int) []byte {
	if i > 0 {
		b = append(b, ',')
	}
	return b
}

// optNum writes key and *x unless x is nil: an omitempty pointer.
// numField and strField write a key (with its leading comma or brace)
// and its value.
func (e *reportEncoder) numField(b []byte, key string, x float64) []byte {
	return e.num(append(b, key...), x)
}

func (e *reportEncoder) strField(b []byte, key string, s string) []byte {
	return e.str(append(b, key...), s)
}

func (e *reportEncoder) optNum(b []byte, key string, x *float64) []byte {
	if x == nil {
		return b
	}
	return e.numField(b, key, *x)
}

// num writes a float64 as encoding/json does: the shortest decimal that
// reads back the same, in exponent form below 1e-6 and from 1e21, with
// the exponent unpadded.
func (e *reportEncoder) num(b []byte, x float64) []byte {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		e.bad = true
		return append(b, '0')
	}
	bits := math.Float64bits(x)
	w := &e.numbers[(bits*0x9e3779b97f4a7c15)>>58]
	if w.end > w.start && w.bits == bits {
		return append(b, b[w.start:w.end]...)
	}
	start := len(b)
	b = formatNumber(b, x)
	if len(b) <= math.MaxInt32 {
		*w = writtenNumber{bits, int32(start), int32(len(b))}
	}
	return b
}

// formatNumber writes a finite float64 as encoding/json does.
func formatNumber(b []byte, x float64) []byte {
	abs := math.Abs(x)
	// A number clean left at eight significant digits, k × 10^−q, reads
	// back from exactly those digits (q ≤ 22 makes 10^q exact, so clean's
	// division rounded k / 10^q correctly), and no shorter decimal is
	// within a rounding step of it: its shortest form is k's digits, trailing zeros
	// dropped. Anything else, strconv writes.
	if abs >= 1e-6 && abs < 1e8 {
		q := 7 - decimalExponent(abs)
		scale := powerOfTen(q)
		if k := math.Round(abs * scale); k/scale == abs {
			return appendFixed(b, x < 0, uint64(k), q, true)
		}
	}
	if abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		b = strconv.AppendFloat(b, x, 'e', -1, 64)
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
		return b
	}
	return strconv.AppendFloat(b, x, 'f', -1, 64)
}

// str writes a JSON string as encoding/json does with HTML escaping on:
// <, > and & as \u003c, \u003e and \u0026, U+2028 and U+2029 escaped,
// invalid UTF-8 as U+FFFD. Plain ASCII goes eight bytes at a time, then a
// byte at a time through plainBytes to the end of the word; only what is
// left is looked at as a rune.
func (e *reportEncoder) str(b []byte, s string) []byte {
	b = append(b, '"')
	start := 0
	for i := 0; ; {
		i = skipPlain(s, i)
		end := min(i+8, len(s))
		for i < end && plainBytes[s[i]] == '1' {
			i++
		}
		if i == end {
			if i == len(s) {
				break
			}
			continue
		}
		c := s[i]
		if c < utf8.RuneSelf {
			b = append(b, s[start:i]...)
			b = appendEscape(b, c)
			i++
			start = i
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		switch {
		case r == utf8.RuneError && size == 1:
			b = append(b, s[start:i]...)
			b = append(b, `\ufffd`...)
		case r == '\u2028' || r == '\u2029':
			b = append(b, s[start:i]...)
			b = append(b, '\\', 'u', '2', '0', '2', hexDigit(byte(r&0xF)))
		default:
			i += size
			continue
		}
		i += size
		start = i
	}
	b = append(b, s[start:]...)
	return append(b, '"')
}

// plainBytes marks with '1' each byte str copies as it is: printable ASCII
// (and DEL) other than " \ < > &. A constant, so the table cannot be
// changed; TestPlainBytesMatchEncodingJSON checks every entry.
const plainBytes = "" +
	"00000000000000000000000000000000" + // 0x00–0x1f: control characters
	"11011101111111111111111111110101" + // 0x20–0x3f: " & < >
	"11111111111111111111111111110111" + // 0x40–0x5f: \
	"11111111111111111111111111111111" + // 0x60–0x7f
	"00000000000000000000000000000000" + // 0x80–0xff: past ASCII, read as runes
	"00000000000000000000000000000000" +
	"00000000000000000000000000000000" +
	"00000000000000000000000000000000"

// appendEscape writes an ASCII byte JSON needs escaped.
func appendEscape(b []byte, c byte) []byte {
	switch c {
	case '"', '\\':
		return append(b, '\\', c)
	case '\b':
		return append(b, '\\', 'b')
	case '\f':
		return append(b, '\\', 'f')
	case '\n':
		return append(b, '\\', 'n')
	case '\r':
		return append(b, '\\', 'r')
	case '\t':
		return append(b, '\\', 't')
	}
	return append(b, '\\', 'u', '0', '0', hexDigit(c>>4), hexDigit(c&0xF))
}

func hexDigit(x byte) byte { return "0123456789abcdef"[x] }

// skipPlain returns the index of the first byte from i on that str must
// look at on its own, testing eight bytes at once: a control character,
// " \ < > &, or a byte past ASCII. The tests are the zero-byte trick: a
// byte of v is zero exactly where (v − 0x01…01) &^ v has its high bit
// set, and a byte is under 0x20 where (x − 0x20…20) &^ x has it (a borrow
// only flows out of a byte that is itself under 0x20). Setting bit 2
// makes " (0x22) read as & (0x26), and setting bit 1 makes < (0x3c) read
// as > (0x3e), so three comparisons cover the five characters; only " and
// & become 0x26 that way, and only < and > become 0x3e.
func skipPlain(s string, i int) int {
	const ones, highs = 0x0101010101010101, 0x8080808080808080
	for ; i+8 <= len(s); i += 8 {
		w := s[i : i+8]
		x := uint64(w[0]) | uint64(w[1])<<8 | uint64(w[2])<<16 | uint64(w[3])<<24 |
			uint64(w[4])<<32 | uint64(w[5])<<40 | uint64(w[6])<<48 | uint64(w[7])<<56
		qa := (x | 0x04*ones) ^ ('&' * ones)
		lg := (x | 0x02*ones) ^ ('>' * ones)
		bs := x ^ ('\\' * ones)
		found := x | (x-0x20*ones)&^x | (qa-ones)&^qa | (lg-ones)&^lg | (bs-ones)&^bs
		if found&highs != 0 {
			return i
		}
	}
	return i
}
