package main

import (
	"bytes"
	"context"
	"errors"
	"strings"
	"sync"
	"testing"
)

// cliEnv is a getenv that points the program at dbURL and nothing else.
func cliEnv(dbURL string) func(string) string {
	return func(key string) string {
		if key == "DATABASE_URL" {
			return dbURL
		}
		return ""
	}
}

// runCLI runs the whole program as a user on the host would.
func runCLI(ctx context.Context, getenv func(string) string, args ...string) (stdout, stderr string, err error) {
	var out, errOut bytes.Buffer
	err = run(ctx, args, getenv, &out, &errOut)
	return out.String(), errOut.String(), err
}

// guardedBuffer collects what a running server writes while the test may
// read it.
type guardedBuffer struct {
	mu  sync.Mutex
	buf bytes.Buffer
}

func (b *guardedBuffer) Write(p []byte) (int, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.buf.Write(p)
}

func (b *guardedBuffer) String() string {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.buf.String()
}

func exitCode(err error) int {
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code
	}
	if err != nil {
		return 1
	}
	return 0
}

func TestUsageErrors(t *testing.T) {
	// These are refused before any database is touched; the URL points
	// nowhere so a command that tried to connect would fail differently.
	getenv := cliEnv("postgres://postgres@127.0.0.1:1/none?sslmode=disable&connect_timeout=1")
	for _, args := range [][]string{
		{},
		{"frobnicate"},
		{"serve", "--no-such-flag"},
		{"serve", "--addr"},
		{"migrate"},
		{"migrate", "down"},
		{"migrate", "down", "0"},
		{"migrate", "down", "two"},
		{"migrate", "up", "3"},
		{"migrate", "sideways"},
		{"token"},
		{"token", "create"},
		{"token", "create", "--role", "staff"},
		{"token", "create", "--name"},
		{"token", "create", "--name", "ada", "extra"},
		{"token", "list", "--all"},
		{"token", "revoke"},
		{"token", "revoke", "ada", "bo"},
		{"token", "rotate"},
		// The load harness is a program of its own (cmd/wattshelf-load).
		{"load", "--url", "http://127.0.0.1:1", "--token", "t"},
	} {
		t.Run(strings.Join(args, " "), func(t *testing.T) {
			stdout, stderr, err := runCLI(context.Background(), getenv, args...)
			if code := exitCode(err); code != 2 {
				t.Errorf("exit %d (%v), want 2", code, err)
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing", stdout)
			}
			// The program's usage goes to stderr; a subcommand's rides on the error.
			var ee *exitError
			errors.As(err, &ee)
			if !strings.Contains(stderr, "Usage:") && !strings.Contains(stderr, "Usage of serve") && (ee == nil || ee.msg == "") {
				t.Errorf("no usage shown: stderr %q, error %v", stderr, err)
			}
		})
	}
}

func TestServeRefusesBadTrustedProxies(t *testing.T) {
	getenv := func(key string) string {
		if key == "WATTSHELF_TRUSTED_PROXIES" {
			return "127.0.0.1, proxy.lan"
		}
		return cliEnv("postgres://postgres@127.0.0.1:1/none?sslmode=disable&connect_timeout=1")(key)
	}
	_, _, err := runCLI(context.Background(), getenv, "serve")
	if code := exitCode(err); code != 2 || !strings.Contains(err.Error(), `"proxy.lan"`) {
		t.Errorf("serve with a bad proxy list: exit %d, %v; want 2 naming the bad entry", code, err)
	}
}

func TestServeRefusesABadKioskWallSetting(t *testing.T) {
	getenv := func(key string) string {
		if key == "WATTSHELF_KIOSK_WALL" {
			return "sometimes"
		}
		return cliEnv("postgres://postgres@127.0.0.1:1/none?sslmode=disable&connect_timeout=1")(key)
	}
	_, _, err := runCLI(context.Background(), getenv, "serve")
	if code := exitCode(err); code != 2 || !strings.Contains(err.Error(), `"sometimes"`) {
		t.Errorf("serve with WATTSHELF_KIOSK_WALL=sometimes: exit %d, %v; want 2 naming the value", code, err)
	}
}

func TestHelp(t *testing.T) {
	for _, arg := range []string{"help", "-h", "--help"} {
		stdout, _, err := runCLI(context.Background(), cliEnv(""), arg)
		if err != nil || !strings.Contains(stdout, "wattshelf serve") || !strings.Contains(stdout, "DATABASE_URL") {
			t.Errorf("%s: %v, %q", arg, err, stdout)
		}
	}
}

func TestEnvironment(t *testing.T) {
	env := newEnvironment(func(string) string { return "" })
	if env.databaseURL != defaultDatabaseURL {
		t.Errorf("default database URL %q", env.databaseURL)
	}
	// DESIGN section 12 names this default.
	if defaultDatabaseURL != "postgres://postgres@localhost:5432/wattshelf?sslmode=disable" {
		t.Errorf("default database URL %q differs from the design", defaultDatabaseURL)
	}
	env = newEnvironment(func(k string) string {
		return map[string]string{"DATABASE_URL": "postgres://x@db/y", "WATTSHELF_PUBLIC_URL": "http://shelf.local:8080/", "WATTSHELF_LOG_LEVEL": "warn"}[k]
	})
	if env.databaseURL != "postgres://x@db/y" || env.publicURL != "http://shelf.local:8080" || env.logLevel.String() != "WARN" {
		t.Errorf("environment %+v", env)
	}
	for in, want := range map[string]string{
		"postgres://ada:s3cret@db:5432/w": "postgres://ada:xxxxx@db:5432/w",
		"postgres://ada@db/w":             "postgres://ada@db/w",
		"postgres://db/w":                 "postgres://db/w",
	} {
		if got := redactURL(in); got != want {
			t.Errorf("redactURL(%q) = %q, want %q", in, got, want)
		}
	}
}
