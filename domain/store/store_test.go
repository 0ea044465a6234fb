package store_test

import (
	"context"
	"errors"
	"fmt"
	"net"
	"sync"
	"testing"

	"github.com/jackc/pgx/v5/pgconn"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

func TestEnsureDatabase(t *testing.T) {
	ctx := context.Background()
	dbURL := storetest.AbsentDatabaseURL(t)
	if _, err := store.Open(ctx, dbURL); err == nil {
		t.Fatal("the database exists before EnsureDatabase")
	}
	if err := store.EnsureDatabase(ctx, dbURL); err != nil {
		t.Fatal(err)
	}
	st, err := store.Open(ctx, dbURL)
	if err != nil {
		t.Fatalf("open the created database: %v", err)
	}
	st.Close()
	if err := store.EnsureDatabase(ctx, dbURL); err != nil {
		t.Errorf("existing database: %v", err)
	}
	if err := store.EnsureDatabase(ctx, "postgres://%zz"); err == nil {
		t.Error("an unparseable URL was accepted")
	}
}

// TestEnsureDatabaseConcurrently stands for replicas starting together on a
// server without the database: every one of them must start.
func TestEnsureDatabaseConcurrently(t *testing.T) {
	dbURL := storetest.AbsentDatabaseURL(t)
	const replicas = 6
	errs := make([]error, replicas)
	var wg sync.WaitGroup
	for i := range replicas {
		wg.Go(func() { errs[i] = store.EnsureDatabase(context.Background(), dbURL) })
	}
	wg.Wait()
	for i, err := range errs {
		if err != nil {
			t.Errorf("replica %d: %v", i, err)
		}
	}
}

// closedPort returns a loopback address nothing listens on.
func closedPort(t *testing.T) string {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	addr := ln.Addr().String()
	ln.Close()
	return addr
}

func TestOpenAndUnavailable(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	if err := st.Ping(ctx); err != nil {
		t.Fatalf("ping: %v", err)
	}
	if st.Pool().Stat().MaxConns() < 1 {
		t.Error("pool reports no connections allowed")
	}

	_, err := store.Open(ctx, "postgres://postgres@"+closedPort(t)+"/wattshelf?sslmode=disable&connect_timeout=2")
	if err == nil {
		t.Fatal("opened a store on a closed port")
	}
	if !store.IsUnavailable(err) {
		t.Errorf("IsUnavailable(%v) = false for an unreachable server", err)
	}
	if _, err := store.Open(ctx, "not a url ::"); err == nil {
		t.Error("opened a store on a malformed URL")
	}

	// A failed statement is not unavailability.
	_, sqlErr := st.Pool().Exec(ctx, "SELECT no_such_column FROM components")
	for _, tt := range []struct {
		err  error
		want bool
	}{
		{nil, false},
		{domain.ErrNotFound, false},
		{fmt.Errorf("wrapped: %w", sqlErr), false},
		{&pgconn.PgError{Code: "08006"}, true},  // connection failure
		{&pgconn.PgError{Code: "57P01"}, true},  // admin shutdown
		{&pgconn.PgError{Code: "23505"}, false}, // unique violation
		{fmt.Errorf("x: %w", &net.OpError{Op: "dial", Err: errors.New("refused")}), true},
	} {
		if got := store.IsUnavailable(tt.err); got != tt.want {
			t.Errorf("IsUnavailable(%v) = %t, want %t", tt.err, got, tt.want)
		}
	}
}
