package store_test

import (
	"context"
	"testing"

	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// pgxpool settings in DATABASE_URL must not reach the migration
// connection: the server refuses parameters it does not know.
func TestMigrateWithPoolSettingsInURL(t *testing.T) {
	dbURL := storetest.NewDatabaseURL(t) + "&pool_max_conns=4&pool_min_conns=1"
	if err := store.MigrateUp(context.Background(), dbURL); err != nil {
		t.Fatalf("migrate with pool settings in the URL: %v", err)
	}
	s, err := store.Open(context.Background(), dbURL)
	if err != nil {
		t.Fatalf("open with pool settings in the URL: %v", err)
	}
	defer s.Close()
	if got := s.Pool().Config().MaxConns; got != 4 {
		t.Errorf("pool max conns %d, want 4 from the URL", got)
	}
}

// Without pool_max_conns the pool is sized for writes waiting on commit
// flushes, not pgxpool's one connection per core.
func TestOpenSizesThePoolForWrites(t *testing.T) {
	s, err := store.Open(context.Background(), storetest.NewDatabaseURL(t))
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if got := s.Pool().Config().MaxConns; got != store.DefaultMaxConns {
		t.Errorf("pool max conns %d, want %d", got, store.DefaultMaxConns)
	}
}
