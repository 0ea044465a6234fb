package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"io/fs"
	"net/url"
	"strconv"
	"strings"

	"github.com/golang-migrate/migrate/v4"
	migratepgx "github.com/golang-migrate/migrate/v4/database/pgx/v5"
	"github.com/golang-migrate/migrate/v4/source/iofs"
	_ "github.com/jackc/pgx/v5/stdlib" // database/sql driver that golang-migrate needs

	"wattshelf/migrations"
)

// SchemaVersion is the newest migration embedded in this binary: the
// version /readyz expects the database to be at.
func SchemaVersion() (uint, error) {
	entries, err := fs.ReadDir(migrations.Files, ".")
	if err != nil {
		return 0, fmt.Errorf("read embedded migrations: %w", err)
	}
	var newest uint
	for _, e := range entries {
		num, _, ok := strings.Cut(e.Name(), "_")
		if !ok {
			continue
		}
		v, err := strconv.ParseUint(num, 10, 32)
		if err != nil {
			continue
		}
		newest = max(newest, uint(v))
	}
	return newest, nil
}

// MigrationStatus is where a database's schema stands.
type MigrationStatus struct {
	Current uint `json:"current"`
	Latest  uint `json:"latest"`
	Dirty   bool `json:"dirty"`
}

// Migrator applies the embedded migrations. golang-migrate holds
// PostgreSQL's advisory lock around every change, so replicas starting
// together take turns instead of racing.
type Migrator struct {
	db *sql.DB
	m  *migrate.Migrate
}

// withoutPoolSettings drops pgxpool's own settings (pool_max_conns and the
// like) from a URL: only the pool understands them, and a plain connection
// would pass them to the server, which refuses unknown parameters.
func withoutPoolSettings(databaseURL string) string {
	u, err := url.Parse(databaseURL)
	if err != nil || u.RawQuery == "" {
		return databaseURL
	}
	q := u.Query()
	for k := range q {
		if strings.HasPrefix(k, "pool_") {
			q.Del(k)
		}
	}
	u.RawQuery = q.Encode()
	return u.String()
}

// NewMigrator opens a migrator on databaseURL.
func NewMigrator(databaseURL string) (*Migrator, error) {
	db, err := sql.Open("pgx/v5", withoutPoolSettings(databaseURL))
	if err != nil {
		return nil, fmt.Errorf("open database for migrations: %w", err)
	}
	driver, err := migratepgx.WithInstance(db, &migratepgx.Config{})
	if err != nil {
		db.Close()
		return nil, fmt.Errorf("prepare migration driver: %w", err)
	}
	src, err := iofs.New(migrations.Files, ".")
	if err != nil {
		db.Close()
		return nil, fmt.Errorf("read embedded migrations: %w", err)
	}
	m, err := migrate.NewWithInstance("iofs", src, "pgx5", driver)
	if err != nil {
		db.Close()
		return nil, fmt.Errorf("prepare migrations: %w", err)
	}
	return &Migrator{db: db, m: m}, nil
}

// Close releases the migrator's connection.
func (g *Migrator) Close() error {
	srcErr, dbErr := g.m.Close()
	return errors.Join(srcErr, dbErr, g.db.Close())
}

// Up applies every pending migration.
func (g *Migrator) Up() error {
	if err := g.m.Up(); err != nil && !errors.Is(err, migrate.ErrNoChange) {
		return fmt.Errorf("migrate up: %w", err)
	}
	return nil
}

// Down reverts the newest n migrations.
func (g *Migrator) Down(n int) error {
	if n <= 0 {
		return fmt.Errorf("migrate down: step count must be positive, got %d", n)
	}
	if err := g.m.Steps(-n); err != nil && !errors.Is(err, migrate.ErrNoChange) {
		return fmt.Errorf("migrate down %d: %w", n, err)
	}
	return nil
}

// Status reports the current and newest versions.
func (g *Migrator) Status() (MigrationStatus, error) {
	latest, err := SchemaVersion()
	if err != nil {
		return MigrationStatus{}, err
	}
	v, dirty, err := g.m.Version()
	if errors.Is(err, migrate.ErrNilVersion) {
		return MigrationStatus{Latest: latest}, nil
	}
	if err != nil {
		return MigrationStatus{}, fmt.Errorf("read schema version: %w", err)
	}
	return MigrationStatus{Current: v, Latest: latest, Dirty: dirty}, nil
}

// MigrateUp is the one-call form serve uses.
func MigrateUp(ctx context.Context, databaseURL string) error {
	g, err := NewMigrator(databaseURL)
	if err != nil {
		return err
	}
	defer g.Close()
	return g.Up()
}

// SchemaReady reports an error unless the schema is at want and clean.
func (s *Store) SchemaReady(ctx context.Context, want uint) error {
	var v int64
	var dirty bool
	err := s.pool.QueryRow(ctx, `SELECT version, dirty FROM schema_migrations LIMIT 1`).Scan(&v, &dirty)
	if err != nil {
		return fmt.Errorf("read schema version: %w", err)
	}
	if dirty || uint(v) != want {
		return fmt.Errorf("schema at version %d (dirty %t), want %d", v, dirty, want)
	}
	return nil
}
