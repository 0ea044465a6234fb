package main

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"maps"
	"os"
	"reflect"
	"slices"
	"strconv"
	"strings"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

// shelfImporter is who the shelf import writes as: staff, so it may
// change any part, and named for what it did in the audit trail.
func shelfImporter() domain.User { return domain.User{Name: "shelf-import", Role: domain.RoleStaff} }

// shelfRow is one row of a shelf spreadsheet, read and checked.
type shelfRow struct {
	line int
	id   int64 // 0: a new part
	in   domain.ComponentInput
}

// shelfCSVProblem is a bad cell, by its line and column in the file.
type shelfCSVProblem struct {
	line   int
	column string
	detail string
}

func (p shelfCSVProblem) String() string {
	if p.column == "" {
		return fmt.Sprintf("line %d: %s", p.line, p.detail)
	}
	return fmt.Sprintf("line %d, column %s: %s", p.line, p.column, p.detail)
}

// readShelfCSV reads a spreadsheet in the columns the CSV export writes
// (any of them may be left out but name and kind; updated_at is ignored),
// checks every row with the API's rules and returns them, or every
// problem found.
func readShelfCSV(r io.Reader) ([]shelfRow, []shelfCSVProblem, error) {
	cr := csv.NewReader(r)
	header, err := cr.Read()
	if err != nil {
		return nil, nil, fmt.Errorf("read the header: %w", err)
	}
	var problems []shelfCSVProblem
	known := append(append(shelfCSVTextColumns(), electricalCSVColumns()...), "updated_at")
	at := map[string]int{}
	for i, name := range header {
		name = strings.TrimSpace(strings.TrimPrefix(name, "\ufeff"))
		switch {
		case !slices.Contains(known, name):
			problems = append(problems, shelfCSVProblem{1, name, "is not a column of the shelf export"})
		case at[name] != 0:
			problems = append(problems, shelfCSVProblem{1, name, "appears twice"})
		}
		at[name] = i + 1 // 0 means absent
	}
	for _, need := range []string{"name", "kind"} {
		if at[need] == 0 {
			problems = append(problems, shelfCSVProblem{1, need, "is missing: every row needs it"})
		}
	}
	if len(problems) > 0 {
		return nil, problems, nil
	}
	var rows []shelfRow
	for {
		record, err := cr.Read()
		if err == io.EOF {
			break
		}
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			problems = append(problems, shelfCSVProblem{pe.Line, "", pe.Err.Error()})
			break
		}
		if err != nil {
			return nil, nil, err
		}
		line, _ := cr.FieldPos(0)
		cell := func(name string) string {
			if at[name] == 0 {
				return ""
			}
			return record[at[name]-1]
		}
		row, rowProblems := readShelfRow(line, cell)
		problems = append(problems, rowProblems...)
		rows = append(rows, row)
		if len(problems) > domain.MaxProblems {
			break
		}
	}
	return rows, problems, nil
}

// readShelfRow reads one row's cells into a component and checks it.
func readShelfRow(line int, cell func(string) string) (shelfRow, []shelfCSVProblem) {
	row := shelfRow{line: line}
	var problems []shelfCSVProblem
	bad := func(column, format string, args ...any) {
		problems = append(problems, shelfCSVProblem{line, column, fmt.Sprintf(format, args...)})
	}
	if s := strings.TrimSpace(cell("id")); s != "" {
		id, err := strconv.ParseInt(s, 10, 64)
		if err != nil || id < 1 {
			bad("id", "%q is not a component id (leave it empty for a new part)", s)
		}
		row.id = id
	}
	in := &row.in
	in.Name, in.Kind, in.Bin = unguardCell(cell("name")), unguardCell(cell("kind")), unguardCell(cell("bin"))
	in.Condition, in.SpecSource = unguardCell(cell("condition")), unguardCell(cell("spec_source"))
	in.Origin, in.Description = unguardCell(cell("origin")), unguardCell(cell("description"))
	if s := strings.TrimSpace(cell("quantity")); s != "" {
		n, err := strconv.Atoi(s)
		if err != nil {
			bad("quantity", "%q is not a whole number", s)
		}
		in.Quantity = n
	}
	if s := strings.TrimSpace(cell("mains_origin")); s != "" {
		b, err := strconv.ParseBool(s)
		if err != nil {
			bad("mains_origin", "%q is not true or false", s)
		}
		in.MainsOrigin = b
	}
	electrical := reflect.ValueOf(&in.Electrical).Elem()
	for _, f := range domain.FieldsOf(electrical.Type()) {
		s := strings.TrimSpace(cell(f.Name))
		if s == "" {
			continue
		}
		v := electrical.FieldByIndex(f.Index)
		switch f.Kind {
		case "number":
			x, err := strconv.ParseFloat(s, 64)
			if err != nil {
				bad(f.Name, "%q is not a number", s)
				continue
			}
			v.Set(reflect.ValueOf(&x))
		case "integer":
			n, err := strconv.Atoi(s)
			if err != nil {
				bad(f.Name, "%q is not a whole number", s)
				continue
			}
			v.Set(reflect.ValueOf(&n))
		case "string":
			v.SetString(unguardCell(cell(f.Name)))
		}
	}
	in.Defaults()
	var ve *domain.ValidationError
	if errors.As(in.Validate(), &ve) {
		for _, fp := range ve.Problems {
			bad(strings.TrimPrefix(fp.Pointer, "/"), "%s", fp.Detail)
		}
	}
	return row, problems
}

// shelfPlan is what an import would do.
type shelfPlan struct {
	creates   []domain.ComponentInput
	changes   []store.ComponentChange
	lines     []string // what each changed or added row does
	unchanged int
}

// planShelfImport compares the rows with the shelf: a row without an id
// adds a part, a row with one replaces that part's fields (its notes,
// which the export leaves out, stay) when any differs.
func planShelfImport(ctx context.Context, st *store.Store, rows []shelfRow) (shelfPlan, []shelfCSVProblem, error) {
	var plan shelfPlan
	var problems []shelfCSVProblem
	for _, r := range rows {
		if r.id == 0 {
			plan.creates = append(plan.creates, r.in)
			plan.lines = append(plan.lines, fmt.Sprintf("line %d: add %q", r.line, r.in.Name))
			continue
		}
		current, err := st.Component(ctx, r.id)
		if errors.Is(err, domain.ErrNotFound) {
			problems = append(problems, shelfCSVProblem{r.line, "id", fmt.Sprintf("no component %d is on the shelf", r.id)})
			continue
		}
		if err != nil {
			return plan, nil, err
		}
		r.in.Notes = current.Notes
		changed, err := changedFields(current.ComponentInput, r.in)
		if err != nil {
			return plan, nil, err
		}
		if len(changed) == 0 {
			plan.unchanged++
			continue
		}
		plan.changes = append(plan.changes, store.ComponentChange{ID: r.id, Version: current.Version, In: r.in})
		plan.lines = append(plan.lines, fmt.Sprintf("line %d: change component %d %q: %s", r.line, r.id, r.in.Name, strings.Join(changed, ", ")))
	}
	return plan, problems, nil
}

// changedFields names the fields, by their JSON names, in which a and b
// differ.
func changedFields(a, b domain.ComponentInput) ([]string, error) {
	var ma, mb map[string]json.RawMessage
	for _, x := range []struct {
		in  domain.ComponentInput
		out *map[string]json.RawMessage
	}{{a, &ma}, {b, &mb}} {
		raw, err := json.Marshal(x.in)
		if err != nil {
			return nil, err
		}
		if err := json.Unmarshal(raw, x.out); err != nil {
			return nil, err
		}
	}
	var changed []string
	for _, k := range slices.Sorted(maps.Keys(mb)) {
		if string(ma[k]) != string(mb[k]) {
			changed = append(changed, k)
		}
	}
	for _, k := range slices.Sorted(maps.Keys(ma)) {
		if _, ok := mb[k]; !ok {
			changed = append(changed, k)
		}
	}
	return changed, nil
}

// importShelfCSV runs `wattshelf import --format csv FILE [--dry-run]`:
// all rows are stored, or, when any is bad, none, and every bad cell is
// named by its line and column.
func importShelfCSV(ctx context.Context, file string, dryRun bool, env environment, stdout io.Writer) error {
	f, err := os.Open(file)
	if err != nil {
		return fmt.Errorf("import: %w", err)
	}
	defer f.Close()
	rows, problems, err := readShelfCSV(f)
	if err != nil {
		return fmt.Errorf("import %s: %w", file, err)
	}
	if len(problems) > 0 {
		return refuseShelfCSV(file, problems)
	}
	st, err := env.openMigrated(ctx)
	if err != nil {
		return err
	}
	defer st.Close()
	plan, problems, err := planShelfImport(ctx, st, rows)
	if err != nil {
		return fmt.Errorf("import %s: %w", file, err)
	}
	if len(problems) > 0 {
		return refuseShelfCSV(file, problems)
	}
	for _, l := range plan.lines {
		fmt.Fprintln(stdout, l)
	}
	summary := fmt.Sprintf("%s, %s, %d unchanged", domain.CountOf(len(plan.creates), "part added", "parts added"),
		domain.CountOf(len(plan.changes), "part changed", "parts changed"), plan.unchanged)
	if dryRun {
		fmt.Fprintf(stdout, "dry run, nothing stored: %s\n", summary)
		return nil
	}
	if err := st.ApplyComponents(ctx, shelfImporter(), plan.creates, plan.changes); err != nil {
		if errors.Is(err, domain.ErrPreconditionFailed) {
			return &exitError{code: 1, msg: "import refused, nothing stored: a part changed while the file was read; run it again"}
		}
		return fmt.Errorf("import %s: %w", file, err)
	}
	fmt.Fprintf(stdout, "imported %s: %s\n", file, summary)
	return nil
}

func refuseShelfCSV(file string, problems []shelfCSVProblem) error {
	lines := make([]string, 0, len(problems))
	for _, p := range problems {
		lines = append(lines, p.String())
	}
	return &exitError{code: 1, msg: fmt.Sprintf("import of %s refused, nothing stored:\n%s", file, strings.Join(lines, "\n"))}
}
