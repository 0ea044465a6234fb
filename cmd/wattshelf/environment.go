package main

import (
	"context"
	"fmt"
	"io"
	"log/slog"
	"strings"

	"wattshelf/domain/store"
)

const defaultDatabaseURL = "postgres://postgres@localhost:5432/wattshelf?sslmode=disable"

// environment is the configuration read from the process environment.
type environment struct {
	databaseURL string
	publicURL   string
	// trustedProxies: WATTSHELF_TRUSTED_PROXIES, parsed by serve.
	trustedProxies string
	// kioskWall: WATTSHELF_KIOSK_WALL, parsed by serve.
	kioskWall string
	logLevel  slog.Level
}

func newEnvironment(getenv func(string) string) environment {
	env := environment{
		databaseURL:    getenv("DATABASE_URL"),
		publicURL:      strings.TrimRight(getenv("WATTSHELF_PUBLIC_URL"), "/"),
		trustedProxies: getenv("WATTSHELF_TRUSTED_PROXIES"),
		kioskWall:      getenv("WATTSHELF_KIOSK_WALL"),
	}
	if env.databaseURL == "" {
		env.databaseURL = defaultDatabaseURL
	}
	_ = env.logLevel.UnmarshalText([]byte(getenv("WATTSHELF_LOG_LEVEL")))
	return env
}

func (env environment) logger(w io.Writer) *slog.Logger {
	return slog.New(slog.NewJSONHandler(w, &slog.HandlerOptions{Level: env.logLevel}))
}

// openMigrated creates the database when it can, migrates it up and opens
// a store on it: what every command that touches data needs first.
func (env environment) openMigrated(ctx context.Context) (*store.Store, error) {
	if err := store.EnsureDatabase(ctx, env.databaseURL); err != nil {
		return nil, err
	}
	if err := store.MigrateUp(ctx, env.databaseURL); err != nil {
		return nil, err
	}
	st, err := store.Open(ctx, env.databaseURL)
	if err != nil {
		return nil, fmt.Errorf("open database %s: %w", redactURL(env.databaseURL), err)
	}
	return st, nil
}

// redactURL hides a password in a database URL before it is printed.
func redactURL(u string) string {
	scheme, rest, ok := strings.Cut(u, "://")
	if !ok {
		return u
	}
	creds, host, ok := strings.Cut(rest, "@")
	if !ok {
		return u
	}
	if user, _, hasPass := strings.Cut(creds, ":"); hasPass {
		return scheme + "://" + user + ":xxxxx@" + host
	}
	return u
}
