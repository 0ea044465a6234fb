package store_test

import (
	"context"
	"strings"
	"testing"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// The shelf's search must be the expression migration 0011's trigram index
// is built on, or every search reads the whole table: with sequential
// scans turned off, the planner uses the index only when the two match.
func TestShelfSearchUsesTheTrigramIndex(t *testing.T) {
	ctx := context.Background()
	_, dbURL := storetest.NewStore(t)
	conn, err := pgx.Connect(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	tx, err := conn.Begin(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer tx.Rollback(ctx)
	if _, err := tx.Exec(ctx, `SET LOCAL enable_seqscan = off`); err != nil {
		t.Fatal(err)
	}
	rows, err := tx.Query(ctx, `EXPLAIN SELECT id FROM components WHERE `+store.ShelfSearchText+` ILIKE '%motor%'`)
	if err != nil {
		t.Fatal(err)
	}
	lines, err := pgx.CollectRows(rows, pgx.RowTo[string])
	if err != nil {
		t.Fatal(err)
	}
	if plan := strings.Join(lines, "\n"); !strings.Contains(plan, "components_shelf_text_idx") {
		t.Errorf("the shelf search does not use migration 0011's index:\n%s", plan)
	}
}
