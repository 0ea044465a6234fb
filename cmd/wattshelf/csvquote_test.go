package main

import (
	"bytes"
	"encoding/csv"
	"strings"
	"testing"

	"wattshelf/domain"
)

// TestShelfCSVSurvivesEverySeparator writes text that holds separators a
// spreadsheet may split on (comma, semicolon, tab, line breaks) and
// quotes. Read as RFC 4180 CSV, every cell comes back whole; read by a
// spreadsheet set to split on comma, semicolon or tab, no cell starts a
// formula (=, +, -, @: OWASP's CSV injection list, from memory).
func TestShelfCSVSurvivesEverySeparator(t *testing.T) {
	item := domain.ShelfItem{ID: 1, Kind: "other", Condition: "working", SpecSource: "measured",
		Name: "x;=1+1", Bin: "a,@SUM(1)", Origin: "tab\t+cmd", Description: "line\n-2+3 and \"=quoted\"; \"=HYPERLINK(1)",
		Electrical: domain.Electrical{Gauge: "22;=1", Ratings: domain.Ratings{Chemistry: "li,=2"}}}
	var buf bytes.Buffer
	if err := writeShelfCSV(&buf, []domain.ShelfItem{item}); err != nil {
		t.Fatal(err)
	}
	out := buf.String()

	records, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil {
		t.Fatalf("not RFC 4180 CSV: %v\n%s", err, out)
	}
	if len(records) != 2 || len(records[1]) != len(records[0]) {
		t.Fatalf("%d records, row of %d cells under %d headers", len(records), len(records[1]), len(records[0]))
	}
	cell := map[string]string{}
	for i, name := range records[0] {
		cell[name] = records[1][i]
	}
	// Each text keeps its words; only apostrophes may have been added.
	for col, want := range map[string]string{"name": item.Name, "bin": item.Bin, "origin": item.Origin,
		"description": item.Description, "gauge": item.Electrical.Gauge, "chemistry": item.Electrical.Chemistry} {
		if got := strings.ReplaceAll(cell[col], "'", ""); got != want {
			t.Errorf("%s reads back %q, want %q with at most apostrophes added", col, cell[col], want)
		}
	}
	for _, sep := range []byte{',', ';', '\t'} {
		for _, field := range splitLikeASpreadsheet(out, sep) {
			if f := strings.TrimLeft(field, " "); f != "" && strings.ContainsRune("=+-@", rune(f[0])) {
				t.Errorf("split on %q, a cell starts a formula: %q", sep, field)
			}
		}
	}
}

// splitLikeASpreadsheet cuts text into cells at sep and line breaks the
// way RFC 4180 section 2 reads a file: a cell is quoted only when it
// starts with a quote, a doubled quote inside stands for one, and text
// after the closing quote joins the cell.
func splitLikeASpreadsheet(text string, sep byte) []string {
	var cells []string
	var cur strings.Builder
	quoted, atStart := false, true
	for i := 0; i < len(text); i++ {
		ch := text[i]
		switch {
		case quoted && ch == '"' && i+1 < len(text) && text[i+1] == '"':
			cur.WriteByte('"')
			i++
		case quoted && ch == '"':
			quoted = false
		case quoted:
			cur.WriteByte(ch)
		case atStart && ch == '"':
			quoted = true
		case ch == sep || ch == '\n' || ch == '\r':
			cells = append(cells, cur.String())
			cur.Reset()
			atStart = true
			continue
		default:
			cur.WriteByte(ch)
		}
		atStart = false
	}
	return append(cells, cur.String())
}
