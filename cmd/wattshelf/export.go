package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
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
	return []string{
		"min_v", "max_v", "nominal_v", "current_a", "peak_a",
		"rated_v", "no_load_a", "no_load_rpm", "stall_a", "running_a",
		"topology", "output_v", "max_output_a", "min_input_v", "max_input_v", "dropout_v", "quiescent_a",
		"efficiency", "theta_ja_c_per_w", "tj_max_c", "continuous_a", "max_discharge_a",
		"chemistry", "series", "parallel", "cell_capacity_mah",
		"rating_a", "rating_v", "gauge",
	}
}

// writeShelfCSV writes the public shelf: a header row, then one component
// per row; a field the part lacks is an empty cell.
func writeShelfCSV(w io.Writer, items []domain.ShelfItem) error {
	cw := csv.NewWriter(w)
	header := append(shelfCSVTextColumns(), electricalCSVColumns()...)
	header = append(header, "updated_at")
	if err := cw.Write(header); err != nil {
		return fmt.Errorf("write shelf csv: %w", err)
	}
	for _, it := range items {
		row := []string{
			strconv.FormatInt(it.ID, 10), spreadsheetText(it.Name), it.Kind, spreadsheetText(it.Bin),
			strconv.Itoa(it.Quantity), it.Condition, it.SpecSource, spreadsheetText(it.Origin),
			strconv.FormatBool(it.MainsOrigin), spreadsheetText(it.Description),
		}
		fields, err := electricalCells(it.Electrical)
		if err != nil {
			return fmt.Errorf("write shelf csv: component %d: %w", it.ID, err)
		}
		row = append(row, fields...)
		row = append(row, it.UpdatedAt.UTC().Format(time.RFC3339))
		if err := cw.Write(row); err != nil {
			return fmt.Errorf("write shelf csv: %w", err)
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("write shelf csv: %w", err)
	}
	return nil
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
			cells = append(cells, spreadsheetText(s))
		default:
			cells = append(cells, string(v))
		}
	}
	return cells, nil
}

// spreadsheetText keeps a member's free text from being run as a formula
// when the file is opened in a spreadsheet: a cell that starts like one
// gets a leading apostrophe, which spreadsheets show as plain text.
func spreadsheetText(s string) string {
	if s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		return "'" + s
	}
	return s
}
