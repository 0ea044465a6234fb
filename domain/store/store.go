// Package store is the only place wattshelf speaks SQL. It keeps the shelf,
// tokens, audit trail, designs, reviews and limits in PostgreSQL through a
// pgx pool, one file per aggregate.
package store

import (
	"context"
	"errors"
	"fmt"
	"io"
	"net"
	"net/url"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/pgxpool"

	"wattshelf/domain"
)

// Store wraps the connection pool. Its methods are safe for concurrent use.
type Store struct {
	pool *pgxpool.Pool
}

// DefaultMaxConns is the pool's size unless the URL sets pool_max_conns.
// With pgxpool's own default (one per core, at least 4), stored reviews
// under the load harness waited about 30 ms on average for a connection
// while the cores were not fully busy. With 16, more backends competed for
// the cores and the latency tail grew; 8 gave the shortest p99 in the
// harness's runs on the 2-core build machine (issue 6).
const DefaultMaxConns = 8

// Open connects a pool to databaseURL and checks that it answers.
func Open(ctx context.Context, databaseURL string) (*Store, error) {
	cfg, err := pgxpool.ParseConfig(databaseURL)
	if err != nil {
		return nil, fmt.Errorf("parse database url: %w", err)
	}
	if !strings.Contains(databaseURL, "pool_max_conns") {
		cfg.MaxConns = DefaultMaxConns
	}
	pool, err := pgxpool.NewWithConfig(ctx, cfg)
	if err != nil {
		return nil, fmt.Errorf("open pool: %w", err)
	}
	pingCtx, cancel := context.WithTimeout(ctx, 5*time.Second)
	defer cancel()
	if err := pool.Ping(pingCtx); err != nil {
		pool.Close()
		return nil, fmt.Errorf("reach database: %w", err)
	}
	return &Store{pool: pool}, nil
}

// Close releases every connection.
func (s *Store) Close() { s.pool.Close() }

// Pool exposes the pool for statistics.
func (s *Store) Pool() *pgxpool.Pool { return s.pool }

// Ping reports whether the database answers.
func (s *Store) Ping(ctx context.Context) error { return s.pool.Ping(ctx) }

// EnsureDatabase creates the database named in databaseURL when it does not
// exist, connecting to the server's postgres database to do so. A role that
// may not create databases gets a wrapped error; one that exists is fine.
func EnsureDatabase(ctx context.Context, databaseURL string) error {
	u, err := url.Parse(withoutPoolSettings(databaseURL))
	if err != nil {
		return fmt.Errorf("parse database url: %w", err)
	}
	name := strings.TrimPrefix(u.Path, "/")
	if name == "" || name == "postgres" {
		return nil
	}
	admin := *u
	admin.Path = "/postgres"
	conn, err := pgx.Connect(ctx, admin.String())
	if err != nil {
		// Without the maintenance database we cannot create; let the real
		// connection report whether the target exists.
		return nil
	}
	defer conn.Close(ctx)
	var exists bool
	if err := conn.QueryRow(ctx, `SELECT EXISTS (SELECT 1 FROM pg_database WHERE datname = $1)`, name).Scan(&exists); err != nil {
		return fmt.Errorf("look for database %q: %w", name, err)
	}
	if exists {
		return nil
	}
	_, err = conn.Exec(ctx, "CREATE DATABASE "+pgx.Identifier{name}.Sanitize())
	// Another replica won the race: PostgreSQL says so either as "database
	// exists" (42P04) or, when both got past its own check, as a unique
	// violation on pg_database's name index (23505).
	var pgErr *pgconn.PgError
	if errors.As(err, &pgErr) && (pgErr.Code == "42P04" || pgErr.Code == "23505") {
		return nil
	}
	if err != nil {
		return fmt.Errorf("create database %q: %w", name, err)
	}
	return nil
}

// notFound turns pgx's no-rows into the domain's not-found.
func notFound(err error, what string) error {
	if errors.Is(err, pgx.ErrNoRows) {
		return fmt.Errorf("%s: %w", what, domain.ErrNotFound)
	}
	return fmt.Errorf("%s: %w", what, err)
}

// inTx runs fn in a transaction, committing when it returns nil.
func (s *Store) inTx(ctx context.Context, fn func(pgx.Tx) error) error {
	return pgx.BeginFunc(ctx, s.pool, fn)
}

// IsUnavailable reports whether err means the database could not be
// reached or the connection was lost, as opposed to a failed statement.
func IsUnavailable(err error) bool {
	if err == nil {
		return false
	}
	var connErr *pgconn.ConnectError
	if errors.As(err, &connErr) || pgconn.SafeToRetry(err) || pgconn.Timeout(err) {
		return true
	}
	var pgErr *pgconn.PgError
	if errors.As(err, &pgErr) {
		// Class 08 is connection exceptions; 57P0x is the server shutting down.
		return strings.HasPrefix(pgErr.Code, "08") || strings.HasPrefix(pgErr.Code, "57P0")
	}
	var netErr net.Error
	return errors.As(err, &netErr) || errors.Is(err, io.ErrUnexpectedEOF) || strings.Contains(err.Error(), "conn closed")
}
