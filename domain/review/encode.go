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
	e := reportEncoder{b: b}
	e.report(rep)
	if e.bad {
		return b, fmt.Errorf("encode report: a number is NaN or infinite")
	}
	return e.b, nil
}

type reportEncoder struct {
	b   []byte
	bad bool // a number JSON cannot hold was met
	// Every check carries the basis of its kind: a few sentences, each
	// written many times. Once escaped, a basis is copied from where it was
	// first written.
	bases  [16]written
	nBases int
}

// written is a string and where its encoding lies in the output.
type written struct {
	s          string
	start, end int
}

// repeated writes s, a string the report holds many times over.
func (e *reportEncoder) repeated(s string) {
	for _, w := range e.bases[:e.nBases] {
		if w.s == s {
			e.b = append(e.b, e.b[w.start:w.end]...)
			return
		}
	}
	start := len(e.b)
	e.str(s)
	if e.nBases < len(e.bases) {
		e.bases[e.nBases] = written{s, start, len(e.b)}
		e.nBases++
	}
}

func (e *reportEncoder) report(rep *Report) {
	e.b = append(e.b, `{"status":`...)
	e.str(string(rep.Status))
	e.b = append(e.b, `,"limits_version":`...)
	e.b = strconv.AppendInt(e.b, int64(rep.LimitsVersion), 10)
	e.b = append(e.b, `,"engine_version":`...)
	e.str(rep.EngineVersion)
	c := rep.Counts
	e.b = append(e.b, `,"counts":{"pass":`...)
	e.b = strconv.AppendInt(e.b, int64(c.Pass), 10)
	e.b = append(e.b, `,"warn":`...)
	e.b = strconv.AppendInt(e.b, int64(c.Warn), 10)
	e.b = append(e.b, `,"fail":`...)
	e.b = strconv.AppendInt(e.b, int64(c.Fail), 10)
	e.b = append(e.b, `,"out_of_scope":`...)
	e.b = strconv.AppendInt(e.b, int64(c.OutOfScope), 10)

	e.b = append(e.b, `},"checks":`...)
	if e.null(rep.Checks == nil) {
		e.b = append(e.b, '[')
		for i := range rep.Checks {
			e.comma(i)
			e.check(&rep.Checks[i])
		}
		e.b = append(e.b, ']')
	}
	e.b = append(e.b, `,"nodes":`...)
	if e.null(rep.Nodes == nil) {
		e.b = append(e.b, '[')
		for i := range rep.Nodes {
			e.comma(i)
			e.node(&rep.Nodes[i])
		}
		e.b = append(e.b, ']')
	}
	e.b = append(e.b, `,"feeds":`...)
	if e.null(rep.Feeds == nil) {
		e.b = append(e.b, '[')
		for i := range rep.Feeds {
			e.comma(i)
			e.feed(&rep.Feeds[i])
		}
		e.b = append(e.b, ']')
	}
	e.b = append(e.b, `,"runtime":`...)
	if e.null(rep.Runtime == nil) {
		e.b = append(e.b, '[')
		for i := range rep.Runtime {
			e.comma(i)
			e.runtime(&rep.Runtime[i])
		}
		e.b = append(e.b, ']')
	}
	e.b = append(e.b, `,"cautions":`...)
	if e.null(rep.Cautions == nil) {
		e.b = append(e.b, '[')
		for i, s := range rep.Cautions {
			e.comma(i)
			e.str(s)
		}
		e.b = append(e.b, ']')
	}
	e.b = append(e.b, '}')
}

func (e *reportEncoder) check(c *Check) {
	e.b = append(e.b, `{"check":`...)
	e.str(c.Check)
	e.b = append(e.b, `,"node":`...)
	e.str(c.Node)
	e.b = append(e.b, `,"pointer":`...)
	e.str(c.Pointer)
	e.b = append(e.b, `,"status":`...)
	e.str(string(c.Status))
	e.b = append(e.b, `,"value":`...)
	e.num(c.Value)
	e.b = append(e.b, `,"limit":`...)
	e.num(c.Limit)
	e.b = append(e.b, `,"unit":`...)
	e.str(c.Unit)
	e.b = append(e.b, `,"message":`...)
	e.str(c.Message)
	e.b = append(e.b, `,"basis":`...)
	e.repeated(c.Basis)
	e.b = append(e.b, '}')
}

func (e *reportEncoder) node(n *NodeResult) {
	e.b = append(e.b, `{"id":`...)
	e.str(n.ID)
	e.b = append(e.b, `,"type":`...)
	e.str(n.Type)
	if n.Parent != "" {
		e.b = append(e.b, `,"parent":`...)
		e.str(n.Parent)
	}
	e.b = append(e.b, `,"v_low":`...)
	e.num(n.VLow)
	e.b = append(e.b, `,"v_nominal":`...)
	e.num(n.VNominal)
	e.b = append(e.b, `,"v_high":`...)
	e.num(n.VHigh)
	e.b = append(e.b, `,"run_a":`...)
	e.num(n.RunA)
	e.b = append(e.b, `,"peak_a":`...)
	e.num(n.PeakA)
	e.b = append(e.b, `,"avg_a":`...)
	e.num(n.AvgA)
	e.optNum(`,"out_v_low":`, n.OutVLow)
	e.optNum(`,"out_v_nominal":`, n.OutVNominal)
	e.optNum(`,"out_v_high":`, n.OutVHigh)
	e.optNum(`,"dissipation_w":`, n.DissipationW)
	e.optNum(`,"junction_c":`, n.JunctionC)
	if n.Collapsed {
		e.b = append(e.b, `,"collapsed":true`...)
	}
	e.b = append(e.b, '}')
}

func (e *reportEncoder) feed(f *FeedResult) {
	e.b = append(e.b, `{"node":`...)
	e.str(f.Node)
	e.b = append(e.b, `,"from":`...)
	e.str(f.From)
	e.b = append(e.b, `,"gauge":`...)
	e.str(f.Gauge)
	e.b = append(e.b, `,"length_m":`...)
	e.num(f.LengthM)
	e.b = append(e.b, `,"resistance_ohm":`...)
	e.num(f.ResistanceOhm)
	e.b = append(e.b, `,"run_a":`...)
	e.num(f.RunA)
	e.b = append(e.b, `,"peak_a":`...)
	e.num(f.PeakA)
	e.b = append(e.b, `,"drop_v":`...)
	e.num(f.DropV)
	e.b = append(e.b, `,"drop_pct":`...)
	e.num(f.DropPct)
	e.b = append(e.b, `,"ampacity_a":`...)
	e.num(f.AmpacityA)
	e.optNum(`,"fuse_a":`, f.FuseA)
	e.b = append(e.b, '}')
}

func (e *reportEncoder) runtime(r *RuntimeResult) {
	e.b = append(e.b, `{"source":`...)
	e.str(r.Source)
	e.b = append(e.b, `,"hours":`...)
	if e.null(r.Hours == nil) {
		e.num(*r.Hours)
	}
	e.b = append(e.b, `,"usable_share":`...)
	e.num(r.UsableShare)
	e.b = append(e.b, `,"limited_by":`...)
	e.str(r.LimitedBy)

	p := &r.Pack
	e.b = append(e.b, `,"pack":{"chemistry":`...)
	e.str(p.Chemistry)
	e.b = append(e.b, `,"series":`...)
	e.b = strconv.AppendInt(e.b, int64(p.Series), 10)
	e.b = append(e.b, `,"parallel":`...)
	e.b = strconv.AppendInt(e.b, int64(p.Parallel), 10)
	e.b = append(e.b, `,"capacity_ah":`...)
	e.num(p.CapacityAh)
	e.b = append(e.b, `,"full_v":`...)
	e.num(p.FullV)
	e.b = append(e.b, `,"nominal_v":`...)
	e.num(p.NominalV)
	e.b = append(e.b, `,"cutoff_v":`...)
	e.num(p.CutoffV)
	e.b = append(e.b, `,"full_soc":`...)
	e.num(p.FullSOC)
	e.b = append(e.b, `,"curve":`...)
	if e.null(p.Curve == nil) {
		e.b = append(e.b, '[')
		for i, pt := range p.Curve {
			e.comma(i)
			e.b = append(e.b, `{"soc":`...)
			e.num(pt.SOC)
			e.b = append(e.b, `,"pack_v":`...)
			e.num(pt.PackV)
			e.b = append(e.b, '}')
		}
		e.b = append(e.b, ']')
	}
	e.b = append(e.b, `},"brownouts":`...)
	if e.null(r.Brownouts == nil) {
		e.b = append(e.b, '[')
		for i := range r.Brownouts {
			bo := &r.Brownouts[i]
			e.comma(i)
			e.b = append(e.b, `{"node":`...)
			e.str(bo.Node)
			e.b = append(e.b, `,"outcome":`...)
			e.str(bo.Outcome)
			e.optNum(`,"pack_v":`, bo.PackV)
			e.optNum(`,"soc":`, bo.SOC)
			e.b = append(e.b, '}')
		}
		e.b = append(e.b, ']')
	}
	e.b = append(e.b, '}')
}

// null writes null when isNil holds, and reports whether the caller
// should write the value instead.
func (e *reportEncoder) null(isNil bool) bool {
	if isNil {
		e.b = append(e.b, "null"...)
	}
	return !isNil
}

func (e *reportEncoder) comma(i int) {
	if i > 0 {
		e.b = append(e.b, ',')
	}
}

// optNum writes key and *x unless x is nil: an omitempty pointer.
func (e *reportEncoder) optNum(key string, x *float64) {
	if x != nil {
		e.b = append(e.b, key...)
		e.num(*x)
	}
}

// num writes a float64 as encoding/json does: the shortest decimal that
// reads back the same, in exponent form below 1e-6 and from 1e21, with
// the exponent unpadded.
func (e *reportEncoder) num(x float64) {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		e.bad = true
		e.b = append(e.b, '0')
		return
	}
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
			e.b = appendFixed(e.b, x < 0, uint64(k), q, true)
			return
		}
	}
	if abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		e.b = strconv.AppendFloat(e.b, x, 'e', -1, 64)
		if n := len(e.b); n >= 4 && e.b[n-4] == 'e' && e.b[n-3] == '-' && e.b[n-2] == '0' {
			e.b[n-2] = e.b[n-1]
			e.b = e.b[:n-1]
		}
		return
	}
	e.b = strconv.AppendFloat(e.b, x, 'f', -1, 64)
}

// str writes a JSON string as encoding/json does with HTML escaping on:
// <, > and & as \u003c, \u003e and \u0026, U+2028 and U+2029 escaped,
// invalid UTF-8 as U+FFFD. Plain ASCII goes eight bytes at a time, then a
// byte at a time through plainBytes to the end of the word; only what is
// left is looked at as a rune.
func (e *reportEncoder) str(s string) {
	b := append(e.b, '"')
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
	e.b = append(b, '"')
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
