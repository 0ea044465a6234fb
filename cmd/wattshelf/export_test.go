package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"wattshelf/domain"
	"wattshelf/domain/store/storetest"
)

func envWith(dbURL string) func(string) string {
	return func(k string) string {
		if k == "DATABASE_URL" {
			return dbURL
		}
		return ""
	}
}

func runOK(t *testing.T, getenv func(string) string, args ...string) string {
	t.Helper()
	var stdout, stderr bytes.Buffer
	if err := run(context.Background(), args, getenv, &stdout, &stderr); err != nil {
		t.Fatalf("wattshelf %s: %v\nstderr: %s", strings.Join(args, " "), err, stderr.String())
	}
	return stdout.String()
}

// TestExportImportExportThroughTheCommandLine restores a backup of the
// demo database into a new one and backs that up again: the two files
// must be the same bytes.
func TestExportImportExportThroughTheCommandLine(t *testing.T) {
	dir := t.TempDir()
	srcEnv := envWith(storetest.NewDatabaseURL(t))
	runOK(t, srcEnv, "seed-demo")
	runOK(t, srcEnv, "token", "create", "--name", "keeper", "--role", "staff")
	first := filepath.Join(dir, "first.json")
	runOK(t, srcEnv, "export", "--out", first)

	dstEnv := envWith(storetest.NewDatabaseURL(t))
	out := runOK(t, dstEnv, "import", first)
	if !strings.Contains(out, "imported") || !strings.Contains(out, "token create") {
		t.Errorf("import summary: %q", out)
	}
	second := filepath.Join(dir, "second.json")
	runOK(t, dstEnv, "export", "--out", second)

	a, err := os.ReadFile(first)
	if err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(second)
	if err != nil {
		t.Fatal(err)
	}
	if len(a) < 1000 || !bytes.Equal(a, b) {
		t.Fatalf("round trip differs or is empty: %d bytes then %d bytes", len(a), len(b))
	}
	var doc map[string]json.RawMessage
	if err := json.Unmarshal(a, &doc); err != nil {
		t.Fatal(err)
	}
	if string(doc["format_version"]) != "1" {
		t.Errorf("format_version = %s", doc["format_version"])
	}
	if _, ok := doc["tokens"]; ok || bytes.Contains(a, []byte("wsh_")) {
		t.Error("the export carries tokens")
	}

	// A second import into the now full database is refused, saying why.
	var stdout, stderr bytes.Buffer
	err = run(context.Background(), []string{"import", first}, dstEnv, &stdout, &stderr)
	var ee *exitError
	if err == nil || !strings.Contains(err.Error(), "empty database") {
		t.Errorf("import into a full database: %v", err)
	} else if !errors.As(err, &ee) || ee.code != 1 {
		t.Errorf("import into a full database: want exit 1, got %v", err)
	}
}

func TestExportToStdoutMatchesTheFile(t *testing.T) {
	env := envWith(storetest.NewDatabaseURL(t))
	runOK(t, env, "seed-demo")
	file := filepath.Join(t.TempDir(), "shelf.json")
	runOK(t, env, "export", "--out", file)
	fromStdout := runOK(t, env, "export")
	fromFile, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	if fromStdout != string(fromFile) {
		t.Error("export to stdout differs from export to a file")
	}
}

func TestExportCSVIsTheShelfAsASpreadsheet(t *testing.T) {
	env := envWith(storetest.NewDatabaseURL(t))
	runOK(t, env, "seed-demo")
	out := runOK(t, env, "export", "--format", "csv")
	records, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatalf("not CSV: %v", err)
	}
	demo, err := loadDemo()
	if err != nil {
		t.Fatal(err)
	}
	if len(records) != len(demo.Components)+1 {
		t.Fatalf("%d rows, want a header and %d components", len(records), len(demo.Components))
	}
	header := records[0]
	col := func(name string) int {
		i := slices.Index(header, name)
		if i < 0 {
			t.Fatalf("no column %q in %v", name, header)
		}
		return i
	}
	for _, hidden := range []string{"notes", "owner"} {
		if slices.Contains(header, hidden) {
			t.Errorf("the public shelf export has a %s column", hidden)
		}
	}
	// The demo's 7805 regulator (invented demo data) reads back field for field.
	var found bool
	for _, r := range records[1:] {
		if !strings.HasPrefix(r[col("name")], "7805") {
			continue
		}
		found = true
		for name, want := range map[string]string{"kind": "regulator", "topology": "linear", "output_v": "5",
			"dropout_v": "2", "quiescent_a": "0.008", "max_input_v": "35", "rated_v": "", "mains_origin": "false"} {
			if got := r[col(name)]; got != want {
				t.Errorf("7805 %s = %q, want %q", name, got, want)
			}
		}
		if _, err := time.Parse(time.RFC3339, r[col("updated_at")]); err != nil {
			t.Errorf("updated_at: %v", err)
		}
	}
	if !found {
		t.Error("the demo's 7805 regulator is missing from the CSV")
	}
}

// Every field json writes for a part's ratings has its CSV column.
func TestElectricalCSVColumnsCoverTheType(t *testing.T) {
	var e domain.Electrical
	v := reflect.ValueOf(&e).Elem()
	for _, f := range reflect.VisibleFields(v.Type()) {
		if f.Anonymous {
			continue
		}
		fv := v.FieldByIndex(f.Index)
		switch fv.Kind() {
		case reflect.Pointer:
			fv.Set(reflect.New(f.Type.Elem()))
		case reflect.String:
			fv.SetString("x")
		case reflect.Bool:
			fv.SetBool(true)
		}
	}
	raw, err := json.Marshal(e)
	if err != nil {
		t.Fatal(err)
	}
	var byName map[string]any
	if err := json.Unmarshal(raw, &byName); err != nil {
		t.Fatal(err)
	}
	var names []string
	for k := range byName {
		names = append(names, k)
	}
	cols := electricalCSVColumns()
	slices.Sort(names)
	slices.Sort(cols)
	if !slices.Equal(names, cols) {
		t.Errorf("electrical fields %v, CSV columns %v", names, cols)
	}
}

func TestShelfCSVDisarmsFormulas(t *testing.T) {
	var buf bytes.Buffer
	items := []domain.ShelfItem{{ID: 1, Name: "=HYPERLINK(\"http://x\")", Bin: "+A1", Origin: "@SUM(1)",
		Description: "-2+3", Kind: "other", Electrical: domain.Electrical{Gauge: "=1"}}}
	if err := writeShelfCSV(&buf, items); err != nil {
		t.Fatal(err)
	}
	records, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	for i, cell := range records[1] {
		if cell != "" && strings.ContainsRune("=+-@", rune(cell[0])) {
			t.Errorf("column %s starts a formula: %q", records[0][i], cell)
		}
	}
}

func TestExportUsageErrors(t *testing.T) {
	for _, args := range [][]string{
		{"export", "--format", "xml"},
		{"export", "extra"},
		{"import"},
		{"import", "a", "b"},
	} {
		err := run(context.Background(), args, envWith("postgres://127.0.0.1:1/none"), &bytes.Buffer{}, &bytes.Buffer{})
		var ee *exitError
		if !errors.As(err, &ee) || ee.code != 2 {
			t.Errorf("%v: got %v, want a usage error", args, err)
		}
	}
}

func TestImportRejectsANonExport(t *testing.T) {
	file := filepath.Join(t.TempDir(), "shelf.csv")
	if err := os.WriteFile(file, []byte("id,name\n1,motor\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	err := run(context.Background(), []string{"import", file}, envWith(storetest.NewDatabaseURL(t)), &bytes.Buffer{}, &bytes.Buffer{})
	if err == nil || !strings.Contains(err.Error(), "export document") {
		t.Errorf("import of a CSV: %v", err)
	}
}
