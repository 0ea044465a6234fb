package store_test

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

func ptr[T any](v T) *T { return &v }

// fillForExport puts at least one row in every exported table, including
// awkward text, a deleted component (an id gap) and a changed one.
func fillForExport(t *testing.T, s *store.Store, dbURL string) {
	t.Helper()
	ctx := context.Background()
	if _, err := s.CreateToken(ctx, "test", "ada", domain.RoleStaff); err != nil {
		t.Fatal(err)
	}
	if _, err := s.CreateToken(ctx, "test", "bo", domain.RoleMember); err != nil {
		t.Fatal(err)
	}
	staff := domain.User{Name: "ada", Role: domain.RoleStaff}
	member := domain.User{Name: "bo", Role: domain.RoleMember}
	motor := domain.ComponentInput{Name: "Gear motor <small> & \"quoted\"", Kind: "motor", Bin: "M1 ünïcödé",
		Quantity: 2, Notes: "line one\nline two\ttabbed",
		Electrical: domain.Electrical{NoLoadRPM: ptr(14800.0), Ratings: domain.Ratings{RatedV: ptr(7.2), NoLoadA: ptr(0.42), StallA: ptr(9.5)}}}
	motor.Defaults()
	m, err := s.CreateComponent(ctx, member, motor)
	if err != nil {
		t.Fatal(err)
	}
	gone, err := s.CreateComponent(ctx, staff, domain.ComponentInput{Name: "to delete", Kind: "other", Condition: "faulty", SpecSource: "estimated"})
	if err != nil {
		t.Fatal(err)
	}
	if err := s.DeleteComponent(ctx, staff, gone.ID, 0); err != nil {
		t.Fatal(err)
	}
	reg := domain.ComponentInput{Name: "Buck module", Kind: "regulator", MainsOrigin: false, Condition: "working",
		SpecSource: "measured", Electrical: domain.Electrical{Ratings: domain.Ratings{Topology: "buck", OutputV: ptr(5.0), Efficiency: ptr(0.88)}}}
	r, err := s.CreateComponent(ctx, staff, reg)
	if err != nil {
		t.Fatal(err)
	}
	reg.Quantity = 6
	if _, err := s.UpdateComponent(ctx, staff, r.ID, r.Version, reg); err != nil {
		t.Fatal(err)
	}
	if _, err := s.AddMeasurement(ctx, member, m.ID, domain.MeasurementInput{VoltageV: 7.2, CurrentA: 0.42, SpeedRPM: ptr(14800.0)}); err != nil {
		t.Fatal(err)
	}
	if _, err := s.AddMeasurement(ctx, member, m.ID, domain.MeasurementInput{VoltageV: 7.2, CurrentA: 1.1, Note: "loaded by hand"}); err != nil {
		t.Fatal(err)
	}

	// Designs, reviews and limits are written here directly so this test
	// does not depend on how their own store code builds them.
	conn, err := pgx.Connect(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	for _, q := range []string{
		`INSERT INTO limits (version, body, note, created_by) VALUES (1, '{"policy":{"in_scope_v":50},"drop":{"critical_pct":3}}', 'defaults', 'system')`,
		`INSERT INTO limits (version, body, note, created_by) VALUES (2, '{"policy":{"in_scope_v":50},"drop":{"critical_pct":2.5}}', 'tighter', 'ada')`,
		`INSERT INTO designs (name, document, owner) VALUES ('Cart', '{"format": 1,  "name": "Cart", "nodes": []}', 'bo')`,
		`UPDATE designs SET version = 3, updated_at = now() + interval '1 second'`,
		// A review stored before reviews kept their document, and one that
		// keeps it, spacing and all.
		`INSERT INTO reviews (design_id, share_id, status, limits_version, document_sha256, report, created_by)
		 SELECT id, 'Zx9_share-id', 'warn', 2, 'abc123', '{"status":"warn","counts":{"pass":3,"warn":1,"fail":0}}', 'bo' FROM designs`,
		`INSERT INTO reviews (design_id, share_id, status, limits_version, document_sha256, document, report, created_by)
		 SELECT id, 'Kept_document-1', 'pass', 1, 'def456', E'{"format": 1,  "name": "Cart \u00e9",\n "nodes": []}', '{"status":"pass"}', 'ada' FROM designs`,
	} {
		if _, err := conn.Exec(ctx, q); err != nil {
			t.Fatalf("%s: %v", q, err)
		}
	}
}

func exportBytes(t *testing.T, s *store.Store) []byte {
	t.Helper()
	snap, err := s.Export(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := snap.WriteJSON(&buf); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

func TestExportImportRoundTripIsByteIdentical(t *testing.T) {
	ctx := context.Background()
	src, srcURL := storetest.NewStore(t)
	fillForExport(t, src, srcURL)
	first := exportBytes(t, src)

	snap, err := store.ReadSnapshot(bytes.NewReader(first))
	if err != nil {
		t.Fatal(err)
	}
	for name, n := range map[string]int{"users": len(snap.Users), "limits": len(snap.Limits),
		"components": len(snap.Components), "measurements": len(snap.Measurements), "designs": len(snap.Designs),
		"reviews": len(snap.Reviews), "audit": len(snap.Audit)} {
		if n == 0 {
			t.Errorf("export holds no %s; the round trip would prove nothing about them", name)
		}
	}
	if kept := snap.Reviews[len(snap.Reviews)-1].Document; !strings.Contains(kept, "Cart é\",\n") {
		t.Errorf("the review's document is exported as %q", kept)
	}
	if strings.Contains(string(first), "digest") || strings.Contains(string(first), "wsh_") {
		t.Error("export carries token material")
	}

	dst, dstURL := storetest.NewStore(t)
	if err := dst.Import(ctx, snap); err != nil {
		t.Fatal(err)
	}
	second := exportBytes(t, dst)
	if !bytes.Equal(first, second) {
		t.Fatalf("export after import differs:\nfirst:\n%s\nsecond:\n%s", first, second)
	}
	// JSON the service keeps as written comes back as written, not in the
	// export file's layout.
	for _, q := range []string{`SELECT string_agg(body::text, '|' ORDER BY version) FROM limits`,
		`SELECT string_agg(report::text, '|' ORDER BY id) FROM reviews`,
		`SELECT string_agg(document, '|' ORDER BY id) FROM reviews`} {
		if a, b := queryText(t, srcURL, q), queryText(t, dstURL, q); a != b {
			t.Errorf("%s: stored %q, restored %q", q, a, b)
		}
	}

	// New records continue after the restored ids instead of colliding.
	staff := domain.User{Name: "ada", Role: domain.RoleStaff}
	c, err := dst.CreateComponent(ctx, staff, domain.ComponentInput{Name: "after restore", Kind: "other", Condition: "untested", SpecSource: "estimated"})
	if err != nil {
		t.Fatalf("create after import: %v", err)
	}
	last := snap.Components[len(snap.Components)-1].ID
	if c.ID <= last {
		t.Errorf("new component got id %d, not above the restored %d", c.ID, last)
	}
	// The user comes back without a token: a new one must be minted.
	if _, err := dst.CreateToken(ctx, "test", "ada", domain.RoleStaff); err != nil {
		t.Errorf("mint token for restored user: %v", err)
	}
}

func queryText(t *testing.T, dbURL, q string) string {
	t.Helper()
	ctx := context.Background()
	conn, err := pgx.Connect(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	var s string
	if err := conn.QueryRow(ctx, q).Scan(&s); err != nil {
		t.Fatalf("%s: %v", q, err)
	}
	return s
}

func TestImportRefusesANonEmptyDatabase(t *testing.T) {
	ctx := context.Background()
	src, srcURL := storetest.NewStore(t)
	fillForExport(t, src, srcURL)
	snap, err := src.Export(ctx)
	if err != nil {
		t.Fatal(err)
	}
	before := exportBytes(t, src)
	err = src.Import(ctx, snap)
	var ne *store.NotEmptyError
	if !errors.As(err, &ne) {
		t.Fatalf("import into a full database: got %v, want NotEmptyError", err)
	}
	if !strings.Contains(err.Error(), "empty database") {
		t.Errorf("message does not say what to do: %q", err)
	}
	if after := exportBytes(t, src); !bytes.Equal(before, after) {
		t.Error("a refused import changed the database")
	}
}

func TestImportIsAllOrNothing(t *testing.T) {
	ctx := context.Background()
	src, srcURL := storetest.NewStore(t)
	fillForExport(t, src, srcURL)
	snap, err := src.Export(ctx)
	if err != nil {
		t.Fatal(err)
	}
	// A review naming a design that is not in the file fails the last
	// inserts; everything before it must roll back too.
	snap.Reviews[0].DesignID = 999999
	dst, _ := storetest.NewStore(t)
	if err := dst.Import(ctx, snap); err == nil {
		t.Fatal("import of a broken snapshot succeeded")
	}
	empty, err := dst.Export(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if len(empty.Users)+len(empty.Components)+len(empty.Limits)+len(empty.Audit) != 0 {
		t.Errorf("a failed import left rows behind: %d users, %d components, %d limits, %d audit",
			len(empty.Users), len(empty.Components), len(empty.Limits), len(empty.Audit))
	}
}

func TestReadSnapshotRejectsOtherFormats(t *testing.T) {
	for name, doc := range map[string]string{
		"newer format":  `{"format_version": 2}`,
		"no format":     `{"users": []}`,
		"unknown field": `{"format_version": 1, "widgets": []}`,
		"trailing data": `{"format_version": 1} {}`,
		"not json":      `id,name`,
	} {
		if _, err := store.ReadSnapshot(strings.NewReader(doc)); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}

// TestExportCoversEverySchemaColumn fails when a migration adds a table or
// column that export does not carry, before a backup can silently lose it.
func TestExportCoversEverySchemaColumn(t *testing.T) {
	ctx := context.Background()
	_, dbURL := storetest.NewStore(t)
	conn, err := pgx.Connect(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	rows, err := conn.Query(ctx, `SELECT c.table_name, c.column_name
		FROM information_schema.columns c JOIN information_schema.tables t
		  ON t.table_schema = c.table_schema AND t.table_name = c.table_name
		WHERE c.table_schema = 'public' AND t.table_type = 'BASE TABLE' AND c.is_generated = 'NEVER'
		ORDER BY c.table_name, c.ordinal_position`)
	if err != nil {
		t.Fatal(err)
	}
	live := map[string][]string{}
	for rows.Next() {
		var table, column string
		if err := rows.Scan(&table, &column); err != nil {
			t.Fatal(err)
		}
		live[table] = append(live[table], column)
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	exported := store.ExportedColumns()
	for table, cols := range live {
		if slices.Contains(store.NotExportedTables(), table) {
			continue
		}
		want, ok := exported[table]
		if !ok {
			t.Errorf("table %s is neither exported nor listed as left out", table)
			continue
		}
		slices.Sort(cols)
		want = slices.Clone(want)
		slices.Sort(want)
		if !slices.Equal(cols, want) {
			t.Errorf("table %s has columns %v; export carries %v", table, cols, want)
		}
	}
	for table := range exported {
		if _, ok := live[table]; !ok {
			t.Errorf("export names table %s, which the schema lacks", table)
		}
	}
}

// A file exported before reviews kept their document still imports; its
// reviews come back without one.
func TestImportOfAnExportWithoutReviewDocuments(t *testing.T) {
	ctx := context.Background()
	src, srcURL := storetest.NewStore(t)
	fillForExport(t, src, srcURL)
	var doc map[string]any
	if err := json.Unmarshal(exportBytes(t, src), &doc); err != nil {
		t.Fatal(err)
	}
	for _, r := range doc["reviews"].([]any) {
		delete(r.(map[string]any), "document")
	}
	older, err := json.Marshal(doc)
	if err != nil {
		t.Fatal(err)
	}
	snap, err := store.ReadSnapshot(bytes.NewReader(older))
	if err != nil {
		t.Fatal(err)
	}
	dst, dstURL := storetest.NewStore(t)
	if err := dst.Import(ctx, snap); err != nil {
		t.Fatal(err)
	}
	if got := queryText(t, dstURL, `SELECT count(*)::text FROM reviews WHERE document = ''`); got != strconv.Itoa(len(snap.Reviews)) {
		t.Errorf("%s of %d restored reviews have no document", got, len(snap.Reviews))
	}
}
