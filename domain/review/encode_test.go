package review

import (
	"bytes"
	"encoding/json"
	"math"
	"math/rand/v2"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
)

// sameAsMarshal fails t unless AppendJSON writes what encoding/json's
// Marshal writes for rep.
func sameAsMarshal(t *testing.T, what string, rep Report) {
	t.Helper()
	want, err := json.Marshal(rep)
	if err != nil {
		t.Fatalf("%s: Marshal: %v", what, err)
	}
	got, err := rep.AppendJSON([]byte("prefix"))
	if err != nil {
		t.Fatalf("%s: AppendJSON: %v", what, err)
	}
	if !bytes.HasPrefix(got, []byte("prefix")) {
		t.Fatalf("%s: AppendJSON dropped what the buffer held", what)
	}
	got = got[len("prefix"):]
	if !bytes.Equal(got, want) {
		i := 0
		for i < len(got) && i < len(want) && got[i] == want[i] {
			i++
		}
		lo := max(i-60, 0)
		t.Fatalf("%s: AppendJSON differs from Marshal at byte %d:\n got …%s\nwant …%s", what, i,
			got[lo:min(i+60, len(got))], want[lo:min(i+60, len(want))])
	}
}

// TestAppendJSONMatchesEncodingJSON compares the hand-written encoder with
// encoding/json on the demo designs, on random designs, and on reports
// whose every field is set by reflection, so a field added to a report
// type without being added to AppendJSON fails here.
func TestAppendJSONMatchesEncodingJSON(t *testing.T) {
	paths, err := filepath.Glob(filepath.Join(demoDir, "*.json"))
	if err != nil || len(paths) == 0 {
		t.Fatalf("no demo designs in %s: %v", demoDir, err)
	}
	for _, path := range paths {
		rep, err := Review(readDesign(t, path), DefaultLimits(), 1, nil)
		if err != nil {
			t.Fatal(err)
		}
		sameAsMarshal(t, path, rep)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for round := range 300 {
		rep, err := Review(randomDesign(rng, 1+rng.IntN(40)), DefaultLimits(), 1, nil)
		if err != nil {
			t.Fatalf("random design %d: %v", round, err)
		}
		sameAsMarshal(t, "random design", rep)
	}
	sameAsMarshal(t, "zero report", Report{})
	for round := range 200 {
		var rep Report
		fillAll(rng, reflect.ValueOf(&rep).Elem(), round%4 == 0)
		sameAsMarshal(t, "filled report", rep)
	}
}

// awkwardStrings need escaping, or look as if they did.
func awkwardStrings() []string {
	return []string{"", "plain", `quote " and \ backslash`, "<script>&amp;</script>", "tab\tnew\nline\rcr\bbs\fff",
		"\x00\x01\x1f\x7f", "bad utf-8 \xff\xfe end", "line\u2028para\u2029sep", "°C Ω·mm² √ 😀", "\xe2\x80"}
}

// awkwardFloats cover both number forms of encoding/json and their edges.
func awkwardFloats() []float64 {
	return []float64{0, math.Copysign(0, -1), 1, -1, 0.1, 1e-6, 9.99999e-7, 1e-7, 1.5e-9, 123456.789, 1e20, 1e21, -1e21,
		1.7976931348623157e308, 5e-324, 12.345678, 100}
}

// fillAll sets every field v holds, walking into structs, slices and
// pointers; sparse leaves pointers and slices nil now and then.
func fillAll(rng *rand.Rand, v reflect.Value, sparse bool) {
	switch v.Kind() {
	case reflect.Struct:
		for i := range v.NumField() {
			fillAll(rng, v.Field(i), sparse)
		}
	case reflect.Pointer:
		if sparse && rng.IntN(2) == 0 {
			return
		}
		v.Set(reflect.New(v.Type().Elem()))
		fillAll(rng, v.Elem(), sparse)
	case reflect.Slice:
		if sparse && rng.IntN(3) == 0 {
			return
		}
		n := rng.IntN(3)
		v.Set(reflect.MakeSlice(v.Type(), n, n))
		for i := range n {
			fillAll(rng, v.Index(i), sparse)
		}
	case reflect.String:
		s := awkwardStrings()
		v.SetString(s[rng.IntN(len(s))])
	case reflect.Float64:
		f := awkwardFloats()
		v.SetFloat(f[rng.IntN(len(f))] * float64(1-2*rng.IntN(2)))
	case reflect.Int:
		v.SetInt(rng.Int64N(1<<40) - 1<<39)
	case reflect.Bool:
		v.SetBool(!sparse || rng.IntN(2) == 0)
	default:
		panic("fillAll: add a case for " + v.Kind().String())
	}
}

func TestAppendJSONRefusesNonFiniteNumbers(t *testing.T) {
	for _, x := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		rep := Report{Checks: []Check{{Value: x}}}
		if _, err := rep.AppendJSON(nil); err == nil {
			t.Errorf("AppendJSON wrote a report holding %v", x)
		}
		if _, err := json.Marshal(rep); err == nil {
			t.Errorf("Marshal wrote a report holding %v; AppendJSON should follow it", x)
		}
	}
}

// TestCleanMatchesItsDefinition compares clean with the way it was first
// written, with Log10 and Pow, across the magnitudes reports hold. At the
// edges of the powers of ten, where Log10 can be slightly off, clean must
// give eight significant digits as strconv rounds them.
func TestCleanMatchesItsDefinition(t *testing.T) {
	byDefinition := func(x float64) float64 {
		if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) || math.Abs(x) > 1e12 || math.Abs(x) < 1e-12 {
			return x + 0
		}
		scale := math.Pow(10, 7-math.Floor(math.Log10(math.Abs(x))))
		return math.Round(x*scale)/scale + 0
	}
	same := func(x float64) {
		t.Helper()
		got, want := clean(x), byDefinition(x)
		if got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
			t.Fatalf("clean(%v) = %v, want %v", x, got, want)
		}
	}
	rng := rand.New(rand.NewPCG(5, 6))
	for range 300_000 {
		x := math.Pow(10, -13+26*rng.Float64())
		if rng.IntN(2) == 0 {
			x = -x
		}
		same(x)
	}
	eightDigits := func(x float64) {
		t.Helper()
		if math.Abs(x) > 1e12 || math.Abs(x) < 1e-12 {
			same(x)
			return
		}
		want, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'e', 7, 64), 64)
		if got := clean(x); got != want && got != byDefinition(x) {
			t.Fatalf("clean(%v) = %v, want %v", x, got, want)
		}
	}
	for k := -13; k <= 13; k++ {
		p := math.Pow(10, float64(k))
		for _, x := range []float64{p, math.Nextafter(p, 0), math.Nextafter(p, 2*p), p * (1 - 5e-9), p * (1 + 5e-9),
			p * (1 - 4e-9), p * (1 + 4e-9)} {
			eightDigits(x)
			eightDigits(-x)
		}
	}
	for _, x := range []float64{0, math.Copysign(0, -1), math.NaN(), math.Inf(1), math.Inf(-1), 1e-12, 1e12, 12.345678951} {
		same(x)
	}
}

// TestStringEscapingMatchesEncodingJSON puts every kind of byte that needs
// a look of its own at every place in and around an eight-byte word.
func TestStringEscapingMatchesEncodingJSON(t *testing.T) {
	specials := []string{"\x00", "\x1f", "\t", "\n", `"`, `\`, "<", ">", "&", "\x7f", "é", "–", "\u2028", "\u2029",
		"😀", "\xff", "\xe2\x80", "\xe2\x80\xa8"[:2], "~", " "}
	for _, sp := range specials {
		strMatchesMarshalAround(t, sp)
	}
}

// strMatchesMarshalAround writes piece with str at every place in and
// around an eight-byte word and compares it with encoding/json.
func strMatchesMarshalAround(t *testing.T, piece string) {
	t.Helper()
	for pre := range 18 {
		for _, post := range []int{0, 1, 7, 8, 9} {
			s := strings.Repeat("a", pre) + piece + strings.Repeat("b", post)
			want, err := json.Marshal(s)
			if err != nil {
				t.Fatal(err)
			}
			var e reportEncoder
			got := e.str(nil, s)
			if !bytes.Equal(got, want) {
				t.Fatalf("%q: got %s, want %s", s, got, want)
			}
		}
	}
}

// TestPlainBytesMatchEncodingJSON holds the escaping scan to
// encoding/json for every byte value: plainBytes marks exactly the bytes
// Marshal copies as they are, skipPlain stops at the word holding any
// other byte and at no word without one, and str writes what Marshal
// writes with the byte at every place in and around a word.
func TestPlainBytesMatchEncodingJSON(t *testing.T) {
	for c := range 256 {
		one := string([]byte{byte(c)})
		want, err := json.Marshal(one)
		if err != nil {
			t.Fatal(err)
		}
		copied := string(want) == `"`+one+`"`
		if got := plainBytes[c] == '1'; got != copied {
			t.Errorf("plainBytes[%#02x] = %t, but encoding/json copies it: %t (%s)", c, got, copied, want)
		}
		for at := range 8 {
			w := []byte("abcdefgh" + "ijklmnop")
			w[8+at] = byte(c)
			stop := skipPlain(string(w), 0)
			if wantStop := map[bool]int{true: 16, false: 8}[copied]; stop != wantStop {
				t.Errorf("byte %#02x at %d of the second word: skipPlain stops at %d, want %d", c, at, stop, wantStop)
			}
		}
		strMatchesMarshalAround(t, one)
	}
}

// TestAppendNumMatchesNum holds appendNum's own rounding to strconv's, on
// random values of every magnitude a report prints and on the decimal
// halves where float64 rounding could go the other way.
func TestAppendNumMatchesNum(t *testing.T) {
	byStrconv := func(x float64) string {
		switch ax := math.Abs(x); {
		case ax >= 100:
			return strconv.FormatFloat(x, 'f', 0, 64)
		case ax >= 10:
			return strconv.FormatFloat(x, 'f', 1, 64)
		case ax >= 1 || ax == 0:
			return strconv.FormatFloat(x, 'f', 2, 64)
		}
		return strconv.FormatFloat(x, 'g', 3, 64)
	}
	same := func(x float64) {
		t.Helper()
		if got, want := string(appendNum(nil, x)), byStrconv(x); got != want {
			t.Fatalf("appendNum(%v) = %s, want %s", x, got, want)
		}
	}
	rng := rand.New(rand.NewPCG(7, 8))
	for range 300_000 {
		x := math.Pow(10, -7+20*rng.Float64())
		if rng.IntN(4) == 0 {
			x = -x
		}
		same(x)
	}
	// Halves and near-halves at every place num rounds to.
	for _, scale := range []float64{1, 10, 100, 1e3, 1e4, 1e5, 1e6} {
		for k := range 3000 {
			for _, frac := range []float64{0.5, 0.4999999, 0.5000001, 0.995, 0.9995, 0.005, 0.0005} {
				x := (float64(k) + frac) / scale
				same(x)
				same(math.Nextafter(x, 0))
				same(math.Nextafter(x, math.Inf(1)))
				same(-x)
			}
		}
	}
	for _, x := range []float64{0, math.Copysign(0, -1), 1, 9.995, 99.95, 999.5, 1e-4, 0.99995, 1e11, 1e12, 1e15, 1e300,
		5e-324, math.Inf(1), math.NaN()} {
		same(x)
	}
}

// TestNumMatchesEncodingJSON checks the encoder's numbers, above all the
// shortcut for numbers clean has rounded, against encoding/json.
func TestNumMatchesEncodingJSON(t *testing.T) {
	same := func(x float64) {
		t.Helper()
		want, err := json.Marshal(x)
		if err != nil {
			t.Fatal(err)
		}
		var e reportEncoder
		got := e.num(nil, x)
		if !bytes.Equal(got, want) {
			t.Fatalf("num(%v) = %s, want %s", x, got, want)
		}
	}
	rng := rand.New(rand.NewPCG(9, 10))
	for range 300_000 {
		x := math.Pow(10, -13+26*rng.Float64())
		if rng.IntN(3) == 0 {
			x = -x
		}
		same(x)
		same(clean(x))
	}
	for k := 1; k <= 100_000; k++ {
		for _, q := range []float64{1, 1e3, 1e6, 1e8, 1e13} {
			same(clean(float64(k) / q))
			same(float64(k) / q)
		}
	}
	for _, x := range []float64{0, math.Copysign(0, -1), 1e-6, 9.99999999e-7, 1e8, 99999999.5, 99999999, 12345678.9, 0.1, 0.3} {
		same(x)
	}
}

// TestRepeatedNumbersMatchEncodingJSON writes long runs of numbers with
// one encoder, which copies a number it has written before from the
// output: values repeat, share table slots with others, and differ only
// in sign (0 and −0 among them), and the run must be what encoding/json
// writes for the same slice.
func TestRepeatedNumbersMatchEncodingJSON(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	pool := []float64{0, math.Copysign(0, -1), 1, -1, 0.1, 1e-7, 1e21, 5e-324, 12.345678}
	for range 200 {
		pool = append(pool, clean(math.Pow(10, -8+16*rng.Float64())))
	}
	for round := range 50 {
		values := make([]float64, 2000)
		for i := range values {
			values[i] = pool[rng.IntN(len(pool))]
			if rng.IntN(5) == 0 {
				values[i] = -values[i]
			}
		}
		want, err := json.Marshal(values)
		if err != nil {
			t.Fatal(err)
		}
		var e reportEncoder
		got := []byte("[")
		for i, x := range values {
			got = comma(got, i)
			got = e.num(got, x)
		}
		got = append(got, ']')
		if !bytes.Equal(got, want) {
			t.Fatalf("round %d: a run of numbers differs from encoding/json's", round)
		}
	}
}

// TestSaidNumbersMatchAppendNum says long runs of repeated, colliding and
// signed values through one saidNumbers, which copies what it wrote for a
// value before, and compares them with appendNum's.
func TestSaidNumbersMatchAppendNum(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	pool := []float64{0, math.Copysign(0, -1), 1, -1, 9.995, 0.00012345, 1e15, 1e300, 5e-324}
	for range 300 {
		pool = append(pool, math.Pow(10, -7+20*rng.Float64()))
	}
	var said saidNumbers
	var got, want []byte
	for range 100_000 {
		x := pool[rng.IntN(len(pool))]
		if rng.IntN(4) == 0 {
			x = -x
		}
		got = said.appendNum(append(got, ' '), x)
		want = appendNum(append(want, ' '), x)
	}
	if !bytes.Equal(got, want) {
		t.Fatal("numbers said through saidNumbers differ from appendNum's")
	}
}
