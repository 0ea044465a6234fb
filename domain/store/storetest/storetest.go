// Package storetest gives tests a PostgreSQL database of their own. It looks
// for a server in the order DESIGN section 12 gives: WATTSHELF_TEST_DATABASE_URL,
// a server answering at 127.0.0.1:5432 as postgres, a container started with
// testcontainers-go; otherwise the test fails saying which to provide.
package storetest

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"fmt"
	"net/url"
	"os"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/testcontainers/testcontainers-go"
	tcpostgres "github.com/testcontainers/testcontainers-go/modules/postgres"
	"github.com/testcontainers/testcontainers-go/wait"

	"wattshelf/domain/store"
)

const localServerURL = "postgres://postgres@127.0.0.1:5432/postgres?sslmode=disable"

// serverURL is found once per test binary: starting a container per test
// would cost seconds each, and the answer cannot change while tests run.
var serverURL = sync.OnceValues(findServer)

func findServer() (string, error) {
	if u := os.Getenv("WATTSHELF_TEST_DATABASE_URL"); u != "" {
		return u, nil
	}
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Second)
	defer cancel()
	if conn, err := pgx.Connect(ctx, localServerURL); err == nil {
		conn.Close(ctx)
		return localServerURL, nil
	}
	u, err := startContainer()
	if err != nil {
		return "", fmt.Errorf("no PostgreSQL for tests: set WATTSHELF_TEST_DATABASE_URL to a server "+
			"whose role may create databases, or run a server at 127.0.0.1:5432 with user postgres "+
			"and trust authentication, or make Docker available for a testcontainers PostgreSQL "+
			"(container start said: %v)", err)
	}
	return u, nil
}

// startContainer is left running for the life of the test binary; the
// testcontainers reaper removes it afterwards.
func startContainer() (u string, err error) {
	defer func() {
		// testcontainers panics when no Docker engine can be found.
		if r := recover(); r != nil {
			err = fmt.Errorf("%v", r)
		}
	}()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	c, err := tcpostgres.Run(ctx, "postgres:16-alpine",
		tcpostgres.WithUsername("postgres"), tcpostgres.WithPassword("postgres"),
		testcontainers.WithWaitStrategy(wait.ForListeningPort("5432/tcp")))
	if err != nil {
		return "", err
	}
	return c.ConnectionString(ctx, "sslmode=disable")
}

// NewDatabaseURL creates an empty database for t, dropped when t ends, and
// returns its URL.
func NewDatabaseURL(t testing.TB) string {
	t.Helper()
	u := AbsentDatabaseURL(t)
	admin, err := serverURL()
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	conn, err := pgx.Connect(ctx, admin)
	if err != nil {
		t.Fatalf("connect to test server: %v", err)
	}
	defer conn.Close(ctx)
	name := strings.TrimPrefix(mustParse(t, u).Path, "/")
	if _, err := conn.Exec(ctx, "CREATE DATABASE "+name); err != nil {
		t.Fatalf("create test database: %v", err)
	}
	return u
}

// AbsentDatabaseURL names a database that does not exist yet on the test
// server, for tests of whatever creates it; it is dropped when t ends if
// something did.
func AbsentDatabaseURL(t testing.TB) string {
	t.Helper()
	admin, err := serverURL()
	if err != nil {
		t.Fatal(err)
	}
	var b [6]byte
	_, _ = rand.Read(b[:])
	name := "wattshelf_test_" + hex.EncodeToString(b[:])
	t.Cleanup(func() {
		ctx := context.Background()
		conn, err := pgx.Connect(ctx, admin)
		if err != nil {
			t.Errorf("connect to drop test database: %v", err)
			return
		}
		defer conn.Close(ctx)
		if _, err := conn.Exec(ctx, "DROP DATABASE IF EXISTS "+name+" WITH (FORCE)"); err != nil {
			t.Errorf("drop test database: %v", err)
		}
	})
	u := mustParse(t, admin)
	u.Path = "/" + name
	return u.String()
}

func mustParse(t testing.TB, raw string) *url.URL {
	t.Helper()
	u, err := url.Parse(raw)
	if err != nil {
		t.Fatalf("parse test database url: %v", err)
	}
	return u
}

// NewStore returns a store on a fresh, migrated database of t's own.
func NewStore(t testing.TB) (*store.Store, string) {
	t.Helper()
	dbURL := NewDatabaseURL(t)
	if err := store.MigrateUp(context.Background(), dbURL); err != nil {
		t.Fatalf("migrate test database: %v", err)
	}
	s, err := store.Open(context.Background(), dbURL)
	if err != nil {
		t.Fatalf("open test store: %v", err)
	}
	t.Cleanup(s.Close)
	return s, dbURL
}
