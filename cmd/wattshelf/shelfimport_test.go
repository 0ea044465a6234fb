package main

import (
	"context"
	"encoding/csv"
	"errors"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// Text the export guards against spreadsheet formulas reads back as it
// was: the import takes off exactly the apostrophes the export added.
func TestSpreadsheetGuardRoundTrips(t *testing.T) {
	texts := []string{"+5 V fan", "=1+1", "x;=1+1", "'=already quoted", "''+two", "-12 V rail; @home", "\ttab first",
		"plain", "", "'", "a,b\nc", `say "=hi"`, " =spaced", "M1;\r-x"}
	rng := rand.New(rand.NewPCG(1, 2))
	// No carriage return before a line feed: a CSV reader, like a
	// spreadsheet, keeps a quoted cell's line breaks as \n alone.
	const alphabet = "a'=+-@;,\t\n\" 5"
	for range 2000 {
		b := make([]byte, rng.IntN(12))
		for i := range b {
			b[i] = alphabet[rng.IntN(len(alphabet))]
		}
		texts = append(texts, string(b))
	}
	for _, text := range texts {
		line := spreadsheetCell(text) + "\n"
		cells, err := csv.NewReader(strings.NewReader(line)).Read()
		if text == "" && err != nil {
			continue // an empty line is no record
		}
		if err != nil || len(cells) != 1 {
			t.Fatalf("%q wrote %q, which reads as %q (%v)", text, line, cells, err)
		}
		if got := unguardCell(cells[0]); got != text {
			t.Errorf("%q wrote %q and read back as %q", text, line, got)
		}
	}
}

// A CSV export of the demo shelf, edited in three rows and imported,
// changes exactly those three parts; a dry run stores nothing; a file
// with one bad row is refused whole, naming its line and column.
func TestShelfCSVRoundTrip(t *testing.T) {
	ctx := context.Background()
	env := envWith(storetest.NewDatabaseURL(t))
	runOK(t, env, "seed-demo")
	before := runOK(t, env, "export", "--format", "csv")
	records, err := csv.NewReader(strings.NewReader(before)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	header := records[0]
	col := func(name string) int { return slices.Index(header, name) }
	// Three edits a member makes in a spreadsheet: a count, a bin, and a
	// name that starts like a formula.
	records[1][col("quantity")] = "7"
	records[2][col("bin")] = "M9 new drawer"
	records[3][col("name")] = "+5 V fan"
	write := func(name string, rows [][]string) string {
		path := filepath.Join(t.TempDir(), name)
		f, err := os.Create(path)
		if err != nil {
			t.Fatal(err)
		}
		w := csv.NewWriter(f)
		if err := w.WriteAll(rows); err != nil {
			t.Fatal(err)
		}
		f.Close()
		return path
	}
	edited := write("edited.csv", records)

	out := runOK(t, env, "import", "--format", "csv", "--dry-run", edited)
	if !strings.Contains(out, "3 parts changed") || !strings.Contains(out, "dry run") {
		t.Errorf("dry run said %q", out)
	}
	if runOK(t, env, "export", "--format", "csv") != before {
		t.Fatal("a dry run changed the shelf")
	}

	out = runOK(t, env, "import", "--format", "csv", edited)
	if !strings.Contains(out, "0 parts added, 3 parts changed") {
		t.Errorf("import said %q", out)
	}
	after, err := csv.NewReader(strings.NewReader(runOK(t, env, "export", "--format", "csv"))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(after) != len(records) {
		t.Fatalf("%d rows after the import, %d before", len(after), len(records))
	}
	// The shelf's order follows names and bins, so rows are matched by id.
	byID := func(rows [][]string) map[string][]string {
		m := map[string][]string{}
		for _, r := range rows[1:] {
			m[r[col("id")]] = r
		}
		return m
	}
	updated := col("updated_at")
	edits := map[string]bool{records[1][col("id")]: true, records[2][col("id")]: true, records[3][col("id")]: true}
	was, now := byID(records), byID(after)
	for id, w := range was {
		n := slices.Clone(now[id])
		w = slices.Clone(w)
		if !edits[id] {
			if !slices.Equal(w, n) {
				t.Errorf("part %s changed: %q → %q", id, w, n)
			}
			continue
		}
		w[updated], n[updated] = "", "" // a changed part's time moves
		if w[col("name")] == "+5 V fan" {
			w[col("name")] = "'+5 V fan" // as typed; the export guards it again
		}
		if !slices.Equal(w, n) {
			t.Errorf("part %s reads back as %q, want %q", id, n, w)
		}
	}
	st := openStoreAt(t, env)
	if c, err := st.Component(ctx, mustID(t, records[3][col("id")])); err != nil || c.Name != "+5 V fan" {
		t.Errorf("the part renamed +5 V fan is stored as %q (%v)", c.Name, err)
	}

	// One bad row: nothing stored, the line and column named.
	bad := slices.Clone(after)
	bad[5] = slices.Clone(bad[5])
	bad[5][col("quantity")] = "lots"
	bad[2] = slices.Clone(bad[2])
	bad[2][col("quantity")] = "99" // a good edit, refused with the bad one
	path := write("bad.csv", bad)
	_, _, err = runCLI(ctx, env, "import", "--format", "csv", path)
	var ee *exitError
	if !errors.As(err, &ee) || ee.code != 1 || !strings.Contains(ee.msg, `line 6, column quantity: "lots" is not a whole number`) {
		t.Fatalf("a bad row: %v", err)
	}
	if now, _ := csv.NewReader(strings.NewReader(runOK(t, env, "export", "--format", "csv"))).ReadAll(); !slices.EqualFunc(now, after, slices.Equal) {
		t.Error("a refused import changed the shelf")
	}
}

func openStoreAt(t *testing.T, getenv func(string) string) *store.Store {
	t.Helper()
	st, err := store.Open(context.Background(), getenv("DATABASE_URL"))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(st.Close)
	return st
}

func mustID(t *testing.T, s string) int64 {
	t.Helper()
	id, err := strconv.ParseInt(s, 10, 64)
	if err != nil {
		t.Fatal(err)
	}
	return id
}
