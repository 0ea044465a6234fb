package store_test

import (
	"context"
	"fmt"
	"io/fs"
	"strings"
	"sync"
	"testing"

	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
	"wattshelf/migrations"
)

func newMigrator(t *testing.T, dbURL string) *store.Migrator {
	t.Helper()
	m, err := store.NewMigrator(dbURL)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		if err := m.Close(); err != nil {
			t.Errorf("close migrator: %v", err)
		}
	})
	return m
}

func wantStatus(t *testing.T, m *store.Migrator, current, latest uint) {
	t.Helper()
	st, err := m.Status()
	if err != nil {
		t.Fatal(err)
	}
	if st.Current != current || st.Latest != latest || st.Dirty {
		t.Fatalf("status %+v, want current %d of %d, clean", st, current, latest)
	}
}

func tablesIn(t *testing.T, dbURL string) []string {
	t.Helper()
	rows, err := rawConn(t, dbURL).Query(context.Background(),
		`SELECT table_name FROM information_schema.tables WHERE table_schema = 'public' AND table_name <> 'schema_migrations' ORDER BY 1`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var names []string
	for rows.Next() {
		var n string
		if err := rows.Scan(&n); err != nil {
			t.Fatal(err)
		}
		names = append(names, n)
	}
	return names
}

func TestMigrationsUpDownUp(t *testing.T) {
	ctx := context.Background()
	dbURL := storetest.NewDatabaseURL(t)
	latest, err := store.SchemaVersion()
	if err != nil || latest < 2 {
		t.Fatalf("embedded schema version %d, %v", latest, err)
	}
	m := newMigrator(t, dbURL)
	wantStatus(t, m, 0, latest)
	if got := tablesIn(t, dbURL); len(got) != 0 {
		t.Fatalf("fresh database has tables %v", got)
	}

	if err := m.Up(); err != nil {
		t.Fatal(err)
	}
	wantStatus(t, m, latest, latest)
	full := tablesIn(t, dbURL)
	for _, want := range []string{"audit", "components", "designs", "limits", "measurements", "reviews", "tokens", "users"} {
		if !strings.Contains(","+strings.Join(full, ",")+",", ","+want+",") {
			t.Errorf("after up, table %s is missing from %v", want, full)
		}
	}
	if err := m.Up(); err != nil {
		t.Errorf("up with nothing to do: %v", err)
	}

	if err := m.Down(1); err != nil {
		t.Fatal(err)
	}
	wantStatus(t, m, latest-1, latest)
	if err := m.Down(int(latest - 1)); err != nil {
		t.Fatal(err)
	}
	wantStatus(t, m, 0, latest)
	if got := tablesIn(t, dbURL); len(got) != 0 {
		t.Errorf("after every down migration, tables %v remain", got)
	}
	if err := m.Down(0); err == nil {
		t.Error("down 0 accepted")
	}

	if err := m.Up(); err != nil {
		t.Fatal(err)
	}
	wantStatus(t, m, latest, latest)
	if got := tablesIn(t, dbURL); strings.Join(got, ",") != strings.Join(full, ",") {
		t.Errorf("tables after up-down-up %v, want %v", got, full)
	}
	// The schema works after the round trip.
	st, err := store.Open(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	if err := st.SchemaReady(ctx, latest); err != nil {
		t.Errorf("schema not ready after up-down-up: %v", err)
	}
	mustCreate(t, st, memberAda, part("wire", "Speaker cable"))
}

func TestSchemaReady(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	latest, _ := store.SchemaVersion()
	if err := st.SchemaReady(ctx, latest); err != nil {
		t.Fatalf("freshly migrated: %v", err)
	}
	if err := st.SchemaReady(ctx, latest+1); err == nil {
		t.Error("ready although the binary expects a newer schema")
	}
	m := newMigrator(t, dbURL)
	if err := m.Down(1); err != nil {
		t.Fatal(err)
	}
	if err := st.SchemaReady(ctx, latest); err == nil {
		t.Error("ready one migration behind")
	}
	if _, err := rawConn(t, dbURL).Exec(ctx, `UPDATE schema_migrations SET version = $1, dirty = true`, latest); err != nil {
		t.Fatal(err)
	}
	if err := st.SchemaReady(ctx, latest); err == nil {
		t.Error("ready with a dirty schema")
	}
	if s, err := m.Status(); err != nil || !s.Dirty {
		t.Errorf("status of a dirty schema: %+v, %v", s, err)
	}
}

// TestConcurrentMigrateUp stands for replicas starting together on one
// empty database: the advisory lock makes them take turns.
func TestConcurrentMigrateUp(t *testing.T) {
	dbURL := storetest.NewDatabaseURL(t)
	const replicas = 4
	errs := make([]error, replicas)
	var wg sync.WaitGroup
	for i := range replicas {
		wg.Go(func() { errs[i] = store.MigrateUp(context.Background(), dbURL) })
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			t.Errorf("replica %d: %v", i, err)
		}
	}
	latest, _ := store.SchemaVersion()
	wantStatus(t, newMigrator(t, dbURL), latest, latest)
}

func TestSchemaVersionMatchesEmbeddedFiles(t *testing.T) {
	v, err := store.SchemaVersion()
	if err != nil {
		t.Fatal(err)
	}
	// Every version up to the newest has an up and a down file.
	for i := uint(1); i <= v; i++ {
		for _, dir := range []string{"up", "down"} {
			pattern := fmt.Sprintf("%04d_*.%s.sql", i, dir)
			if found, err := fs.Glob(migrations.Files, pattern); err != nil || len(found) != 1 {
				t.Errorf("no migration file matches %s", pattern)
			}
		}
	}
}
