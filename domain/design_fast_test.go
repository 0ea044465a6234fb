package domain

import (
	"bytes"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// sameAsStrict fails unless DecodeDesign, fast path or not, gives what the
// strict path alone gives for data: the same Design, or the same error.
func sameAsStrict(t *testing.T, data []byte) {
	t.Helper()
	got, gotErr := DecodeDesign(data)
	if len(bytes.TrimSpace(data)) == 0 {
		if gotErr == nil {
			t.Fatalf("an empty body was accepted")
		}
		return
	}
	want, wantErr := decodeDesignStrict(data)
	switch {
	case (gotErr == nil) != (wantErr == nil):
		t.Fatalf("DecodeDesign says %v, the strict path %v, for %q", gotErr, wantErr, data)
	case gotErr != nil && gotErr.Error() != wantErr.Error():
		t.Fatalf("DecodeDesign says %q, the strict path %q", gotErr, wantErr)
	case !reflect.DeepEqual(got, want):
		t.Fatalf("DecodeDesign gives %+v, the strict path %+v, for %q", got, want, data)
	}
}

// everyField writes an object of kind name with every field the walker's
// table (kept in step with the struct tags) knows, nested objects and
// arrays included, strings with escapes and non-ASCII text, and an array
// element that is null. The key dup, when this object has it, is written
// twice.
func everyField(name, dup string) string {
	fields := objectFields(name)
	keys := make([]string, 0, len(fields))
	for k := range fields {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	var b strings.Builder
	b.WriteString("{\n")
	for i, k := range keys {
		times := 1
		if k == dup {
			times = 2
		}
		for range times {
			if b.Len() > 2 {
				b.WriteString(",\n ")
			}
			b.WriteString(strconv.Quote(k) + " : ")
			switch want := fields[k]; want.kind {
			case "number":
				b.WriteString([]string{"12.5", "-0.25", "3e-2", "7E+1", "0", "1.0e0"}[i%6])
			case "integer":
				b.WriteString(strconv.Itoa(i + 1))
			case "string":
				b.WriteString(`"grün \"q\" \\ \/ \b\f\n\r\t \u00e9\u20ac ` + k + `"`)
			case "bool":
				b.WriteString([]string{"true", "false"}[i%2])
			case "object":
				b.WriteString(everyField(want.name, dup))
			case "array":
				b.WriteString("[" + everyField(want.name, dup) + ", null, {}]")
			}
		}
	}
	b.WriteString("}")
	return b.String()
}

// The fast path reads every field of every object, as the strict path
// does; a field added to the structs and not to the fast path fails here.
func TestFastDecodeReadsEveryField(t *testing.T) {
	doc := []byte(everyField("design", ""))
	got, ok := decodeDesignFast(doc)
	if !ok {
		t.Fatalf("the fast path gave up on a document of every field:\n%s", doc)
	}
	want, err := decodeDesignStrict(doc)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, want) {
		t.Fatalf("fast %+v\nstrict %+v", got, want)
	}
	if n := got.Nodes[0]; n.Feed == nil || n.Feed.Wire == nil || n.Feed.Fuse == nil || len(n.Feed.Connectors) != 3 ||
		n.CurrentA == nil || n.Series == nil || !strings.HasPrefix(n.ID, "grün \"q\" \\ / \b\f\n\r\t é€ ") {
		t.Errorf("first node decoded as %+v", n)
	}
}

// A key given twice in any object is left to the strict path, which says
// so with its pointer.
func TestFastDecodeLeavesRepeatedKeysToTheStrictPath(t *testing.T) {
	for _, name := range []string{"design", "node", "feed", "wire", "fuse", "connector"} {
		for key := range objectFields(name) {
			doc := []byte(everyField("design", key))
			if _, ok := decodeDesignFast(doc); ok {
				t.Errorf("%s.%s given twice: the fast path accepted it", name, key)
				continue
			}
			_, err := DecodeDesign(doc)
			if ps := problemsOf(t, err); !slices.ContainsFunc(ps, func(p FieldProblem) bool {
				return strings.HasSuffix(p.Pointer, "/"+key) && strings.Contains(p.Detail, "twice")
			}) {
				t.Errorf("%s.%s given twice: problems %v", name, key, ps)
			}
		}
	}
}

// Documents that only the strict path takes, or that it refuses, give
// the same answer through DecodeDesign as through the strict path alone.
func TestDecodeDesignPathsAgree(t *testing.T) {
	cases := map[string]string{
		"valid":             validDoc,
		"every field":       everyField("design", ""),
		"nulls":             `{"format": null, "name": null, "ambient_c": null, "nodes": [null, {"id": null, "feed": null, "series": null}]}`,
		"empty containers":  `{"nodes": [], "name": "", "description": ""}`,
		"empty feed":        `{"nodes": [{"feed": {"connectors": []}}, {"feed": {"wire": {}, "fuse": {}}}]}`,
		"escaped key":       `{"form\u0061t": 1, "nodes": []}`,
		"key in capitals":   `{"Format": 1}`,
		"folded key":        `{"ſeries": 1}`,
		"unknown key":       `{"format": 1, "colour": "red"}`,
		"invalid UTF-8":     "{\"name\": \"bad \xff byte\"}",
		"surrogate pair":    `{"name": "\ud83d\udd0b pack"}`,
		"lone surrogate":    `{"name": "\ud83d"}`,
		"control character": "{\"name\": \"tab\there\"}",
		"bad escape":        `{"name": "\x41"}`,
		"short escape":      `{"name": "\u12"}`,
		"fraction in int":   `{"format": 1.0}`,
		"exponent in int":   `{"format": 1e0}`,
		"huge int":          `{"format": 99999999999999999999}`,
		"huge float":        `{"ambient_c": 1e400}`,
		"tiny float":        `{"ambient_c": 1e-400}`,
		"negative zero":     `{"format": -0, "ambient_c": -0.0}`,
		"leading zero":      `{"format": 01}`,
		"bare minus":        `{"format": -}`,
		"dot without digit": `{"ambient_c": 1.}`,
		"string for number": `{"format": "1"}`,
		"number for string": `{"name": 5}`,
		"object for array":  `{"nodes": {}}`,
		"number in nodes":   `{"nodes": [1]}`,
		"trailing comma":    `{"format": 1,}`,
		"trailing data":     `{"format": 1} x`,
		"two documents":     `{"format": 1} {}`,
		"top-level null":    `null`,
		"top-level array":   `[]`,
		"truncated":         `{"nodes": [{"id": "a"`,
		"byte order mark":   "\ufeff{\"format\": 1}",
		"spaces everywhere": " \r\n\t{ \"format\" \t:\n1 , \"nodes\" : [ ] } \n",
		"true for bool":     `{"nodes": [{"mains": true, "critical": false}]}`,
		"word for bool":     `{"nodes": [{"mains": "yes"}]}`,
		"misspelt literal":  `{"nodes": [{"mains": tru}]}`,
		"empty":             "  ",
	}
	// Well-shaped documents, however they are spaced or whatever they
	// leave out, need not take the slow path.
	fast := []string{"valid", "every field", "nulls", "empty containers", "empty feed", "tiny float",
		"negative zero", "spaces everywhere", "true for bool"}
	for name, doc := range cases {
		t.Run(name, func(t *testing.T) {
			sameAsStrict(t, []byte(doc))
			if _, ok := decodeDesignFast([]byte(doc)); ok != slices.Contains(fast, name) {
				t.Errorf("fast path took it: %t", ok)
			}
		})
	}
}

// The demo designs and large generated ones take the fast path.
func TestFastDecodeTakesRealDesigns(t *testing.T) {
	docs := map[string][]byte{"bench 1000": benchDocument(t, 1000)}
	paths, err := filepath.Glob("../testdata/demo/designs/*.json")
	if err != nil || len(paths) == 0 {
		t.Fatalf("no demo designs: %v", err)
	}
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		docs[filepath.Base(p)] = data
	}
	for name, data := range docs {
		if _, ok := decodeDesignFast(data); !ok {
			t.Errorf("%s: the fast path gave up on it", name)
		}
		sameAsStrict(t, data)
	}
}

// FuzzDecodeDesign holds the fast path to the strict one: whatever the
// input, DecodeDesign gives the strict path's Design or error.
func FuzzDecodeDesign(f *testing.F) {
	f.Add([]byte(validDoc))
	f.Add([]byte(everyField("design", "")))
	f.Add([]byte(everyField("design", "gauge")))
	err := fs.WalkDir(os.DirFS("../testdata/demo/designs"), ".", func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		data, err := os.ReadFile(filepath.Join("../testdata/demo/designs", p))
		f.Add(data)
		return err
	})
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		sameAsStrict(t, data)
	})
}

// TestFastPathSharedBlocks covers the blocks the fast path hands parts out
// from: designs whose feeds, fuses, wires and connectors outnumber the
// nodes the document seems to hold (so blocks fill up, some in the middle
// of a feed's connectors), each decoded as the strict path decodes it,
// and no feed's connectors overlapping another's.
func TestFastPathSharedBlocks(t *testing.T) {
	for _, nodes := range []int{2, 3, 10, 65, 300} {
		for _, perFeed := range []int{0, 1, 3, 7, 70} {
			var b strings.Builder
			b.WriteString(`{"format": 1, "name": "blocks", "nodes": [{"id": "pack", "type": "supply", "output_v": 12, "max_a": 5}`)
			for i := 1; i < nodes; i++ {
				b.WriteString(`, {"id": "l` + strconv.Itoa(i) + `", "type": "load", "current_a": 0.1, "series": 2, "feed": {"from": "pack",` +
					` "wire": {"gauge": "20AWG", "length_m": 0.5, "bundled": 2}, "fuse": {"rating_a": 1, "voltage_rating_v": 32}, "connectors": [`)
				for k := range (i * perFeed) % 11 {
					if k > 0 {
						b.WriteString(", ")
					}
					if k%4 == 3 {
						b.WriteString("null")
						continue
					}
					b.WriteString(`{"family": "f` + strconv.Itoa(i) + `", "rating_a": ` + strconv.Itoa(k+1) + `}`)
				}
				b.WriteString(`]}}`)
			}
			b.WriteString(`]}`)
			data := []byte(b.String())
			if _, ok := decodeDesignFast(data); !ok {
				t.Fatalf("%d nodes, %d connectors a feed: the fast path gave up", nodes, perFeed)
			}
			sameAsStrict(t, data)
			d, _ := DecodeDesign(data)
			for i := range d.Nodes {
				if fd := d.Nodes[i].Feed; fd != nil {
					// Growing one feed's list must not write into another's.
					fd.Connectors = append(fd.Connectors, Connector{Family: "added"})
				}
			}
			for i := range d.Nodes {
				fd := d.Nodes[i].Feed
				if fd == nil {
					continue
				}
				for k, c := range fd.Connectors[:len(fd.Connectors)-1] {
					if c.Family != "" && c.Family != "f"+strconv.Itoa(i) {
						t.Fatalf("%d nodes: connector %d of node %d is %q, another feed's", nodes, k, i, c.Family)
					}
				}
			}
		}
	}
}

// TestShortDecimalMatchesParseFloat holds the fast path's reading of
// short numbers to strconv's, bit for bit, on random decimals of every
// length it takes and on the edges of what it takes.
func TestShortDecimalMatchesParseFloat(t *testing.T) {
	same := func(text string) {
		t.Helper()
		want, err := strconv.ParseFloat(text, 64)
		got, ok := shortDecimal([]byte(text))
		if !ok {
			return // left to strconv
		}
		if err != nil || math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("shortDecimal(%q) = %v (%#x), ParseFloat %v (%#x), %v", text, got, math.Float64bits(got), want,
				math.Float64bits(want), err)
		}
	}
	rng := rand.New(rand.NewPCG(5, 6))
	taken := 0
	for range 300_000 {
		whole := strconv.FormatUint(rng.Uint64N(uint64(math.Pow10(1+rng.IntN(9)))), 10)
		text := whole
		if rng.IntN(4) > 0 {
			frac := strconv.FormatUint(rng.Uint64()%1_000_000_000_000_000, 10)
			text += "." + frac[:1+rng.IntN(len(frac))]
		}
		if rng.IntN(3) == 0 {
			text = "-" + text
		}
		if _, ok := shortDecimal([]byte(text)); ok {
			taken++
		}
		same(text)
	}
	if taken < 100_000 {
		t.Errorf("only %d of 300000 short decimals took the shortcut", taken)
	}
	for _, text := range []string{"0", "-0", "0.0", "-0.0", "1", "0.1", "0.3", "0.7", "2.5", "1.005", "999999999999999",
		"99999999999999.9", "0.000000000000001", "9007199254740993", "123456789012345", "1234567890123456", "0.1234567890123456",
		"1e3", "1E-3", "1.5e2", ".", "-", ""} {
		same(text)
	}
	for _, text := range []string{"1234567890123456", "1e3", "-", "", "."} {
		if _, ok := shortDecimal([]byte(text)); ok {
			t.Errorf("shortDecimal took %q, which it should leave to strconv", text)
		}
	}
}
