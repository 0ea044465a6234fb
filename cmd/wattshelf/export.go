package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"time"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

const exportUsage = "usage: wattshelf export [--format json|csv] [--out FILE]"

// exportCommand writes a backup of the whole database (JSON) or the shelf
// alone as a spreadsheet (CSV) to stdout or, atomically, to a file.
func exportCommand(ctx context.Context, args []string, env environment, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("export", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	format := fs.String("format", "json", "json (everything, for backups) or csv (the shelf, for spreadsheets)")
	out := fs.String("out", "", "file to write; standard output when empty")
	if err := fs.Parse(args); err != nil || fs.NArg() != 0 || (*format != "json" && *format != "csv") {
		return &exitError{code: 2, msg: exportUsage}
	}
	st, err := env.openCurrent(ctx)
	if err != nil {
		return err
	}
	defer st.Close()

	var buf bytes.Buffer
	switch *format {
	case "json":
		snap, err := st.Export(ctx)
		if err != nil {
			return err
		}
		if err := snap.WriteJSON(&buf); err != nil {
			return err
		}
		if *out != "" {
			fmt.Fprintf(stderr, "exported %s\n", snapshotCounts(snap))
		}
	case "csv":
		items, err := st.Shelf(ctx)
		if err != nil {
			return err
		}
		if err := writeShelfCSV(&buf, items); err != nil {
			return err
		}
	}
	if *out == "" {
		_, err := stdout.Write(buf.Bytes())
		return err
	}
	return writeFileAtomic(*out, buf.Bytes())
}

// openCurrent opens an existing database whose schema is the one this
// binary expects. Unlike openMigrated it changes nothing: a backup must
// not migrate the database it is taken from.
func (env environment) openCurrent(ctx context.Context) (*store.Store, error) {
	st, err := store.Open(ctx, env.databaseURL)
	if err != nil {
		return nil, fmt.Errorf("open database %s: %w", redactURL(env.databaseURL), err)
	}
	want, err := store.SchemaVersion()
	if err != nil {
		st.Close()
		return nil, err
	}
	if err := st.SchemaReady(ctx, want); err != nil {
		st.Close()
		return nil, fmt.Errorf("%w; run `wattshelf migrate up` first", err)
	}
	return st, nil
}

// writeFileAtomic writes data beside path and renames it into place, so a
// crash or a full disk never leaves a half-written backup under the name.
func writeFileAtomic(path string, data []byte) error {
	f, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".*.tmp")
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	tmp := f.Name()
	defer os.Remove(tmp) // fails harmlessly once renamed
	if _, err := f.Write(data); err != nil {
		f.Close()
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := os.Rename(tmp, path); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	return nil
}

// shelfCSVTextColumns come before the electrical ones, in the order a
// person reading the spreadsheet looks for them.
func shelfCSVTextColumns() []string {
	return []string{"id", "name", "kind", "bin", "quantity", "condition", "spec_source", "origin", "mains_origin", "description"}
}

// electricalCSVColumns are every field of domain.Electrical by its JSON
// name; a test keeps the list in step with the type.
func electricalCSVColumns() []string {
	var cols []string
	for _, f := range domain.FieldsOf(reflect.TypeFor[domain.Electrical]()) {
		cols = append(cols, f.Name)
	}
	return cols
}

// writeShelfCSV writes the public shelf: a header row, then one component
// per row; a field the part lacks is an empty cell. encoding/csv quotes a
// cell only when it holds a comma, a quote or a line break, and cannot be
// told to quote more, so the rows are written here: every text cell goes
// through spreadsheetCell, and the other cells are numbers, booleans and
// times, which hold nothing to quote.
func writeShelfCSV(w io.Writer, items []domain.ShelfItem) error {
	bw := bufio.NewWriter(w)
	header := append(shelfCSVTextColumns(), electricalCSVColumns()...)
	header = append(header, "updated_at")
	writeCSVRow(bw, header)
	for _, it := range items {
		row := []string{
			strconv.FormatInt(it.ID, 10), spreadsheetCell(it.Name), spreadsheetCell(it.Kind), spreadsheetCell(it.Bin),
			strconv.Itoa(it.Quantity), spreadsheetCell(it.Condition), spreadsheetCell(it.SpecSource), spreadsheetCell(it.Origin),
			strconv.FormatBool(it.MainsOrigin), spreadsheetCell(it.Description),
		}
		fields, err := electricalCells(it.Electrical)
		if err != nil {
			return fmt.Errorf("write shelf csv: component %d: %w", it.ID, err)
		}
		row = append(row, fields...)
		row = append(row, it.UpdatedAt.UTC().Format(time.RFC3339))
		writeCSVRow(bw, row)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("write shelf csv: %w", err)
	}
	return nil
}

// writeCSVRow writes cells already made safe, comma-separated, as one
// line; bufio keeps the first write error for Flush to report.
func writeCSVRow(w *bufio.Writer, cells []string) {
	for i, c := range cells {
		if i > 0 {
			w.WriteByte(',')
		}
		w.WriteString(c)
	}
	w.WriteByte('\n')
}

// electricalCells renders e in electricalCSVColumns order. Going through
// the JSON encoding keeps each number exactly as the API shows it.
func electricalCells(e domain.Electrical) ([]string, error) {
	raw, err := json.Marshal(e)
	if err != nil {
		return nil, err
	}
	var byName map[string]json.RawMessage
	if err := json.Unmarshal(raw, &byName); err != nil {
		return nil, err
	}
	cells := make([]string, 0, len(electricalCSVColumns()))
	for _, col := range electricalCSVColumns() {
		v, ok := byName[col]
		switch {
		case !ok:
			cells = append(cells, "")
		case len(v) > 0 && v[0] == '"':
			var s string
			if err := json.Unmarshal(v, &s); err != nil {
				return nil, err
			}
			cells = append(cells, spreadsheetCell(s))
		default:
			cells = append(cells, string(v))
		}
	}
	return cells, nil
}

// spreadsheetCell makes a member's free text one safe CSV cell. A
// spreadsheet may split a line on commas, semicolons or tabs (which one
// depends on its locale), and reads a cell that starts with =, +, - or @
// as a formula: so wherever a cell could start (the text's start, or
// after any separator or line break in it), text that starts like a
// formula, past quotes, spaces and apostrophes, gets an apostrophe, which
// spreadsheets show as plain text; so does a leading tab or carriage
// return (OWASP's CSV injection advice, from memory). Counting the
// apostrophes already there lets the import take exactly the added one
// off again (unguardCell). A cell holding a separator, a quote or a line
// break is then quoted as RFC 4180 section 2 says.
func spreadsheetCell(s string) string {
	var b strings.Builder
	cellStart := true
	for i := 0; i < len(s); i++ {
		if cellStart && guarded(s[i:]) {
			b.WriteByte('\'')
		}
		cellStart = strings.IndexByte(csvSplitters, s[i]) >= 0
		b.WriteByte(s[i])
	}
	text := b.String()
	if !strings.ContainsAny(text, csvSplitters+`"`) {
		return text
	}
	return `"` + strings.ReplaceAll(text, `"`, `""`) + `"`
}

// unguardCell takes off the apostrophes spreadsheetCell put in front of
// text that starts like a formula, so a part named "+5 V fan" survives
// the trip through a spreadsheet. s is the cell as the CSV reader gives
// it, unquoted.
func unguardCell(s string) string {
	var b strings.Builder
	cellStart := true
	for i := 0; i < len(s); i++ {
		if cellStart && s[i] == '\'' && guarded(s[i+1:]) {
			cellStart = false
			continue
		}
		cellStart = strings.IndexByte(csvSplitters, s[i]) >= 0
		b.WriteByte(s[i])
	}
	return b.String()
}

// guarded tells whether text at the start of a cell needs the guard:
// past any apostrophes, it starts like a formula or with a tab or a
// carriage return.
func guarded(s string) bool {
	s = strings.TrimLeft(s, "'")
	return startsLikeFormula(s) || strings.HasPrefix(s, "\t") || strings.HasPrefix(s, "\r")
}

// csvSplitters are where a spreadsheet may start a new cell.
const csvSplitters = ",;\t\r\n"

func startsLikeFormula(s string) bool {
	s = strings.TrimLeft(s, `" `)
	return s != "" && strings.IndexByte("=+-@", s[0]) >= 0
}
