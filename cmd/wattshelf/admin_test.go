package main

import (
	"context"
	"fmt"
	"regexp"
	"slices"
	"strings"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

func TestMigrateCommands(t *testing.T) {
	ctx := context.Background()
	// A database that does not exist yet: migrate creates it first.
	dbURL := storetest.AbsentDatabaseURL(t)
	getenv := cliEnv(dbURL)
	latest, err := store.SchemaVersion()
	if err != nil {
		t.Fatal(err)
	}
	for _, step := range []struct {
		args []string
		want uint
	}{
		{[]string{"migrate", "status"}, 0},
		{[]string{"migrate", "up"}, latest},
		{[]string{"migrate", "down", "1"}, latest - 1},
		{[]string{"migrate", "status"}, latest - 1},
		{[]string{"migrate", "up"}, latest},
		{[]string{"migrate", "up"}, latest},
	} {
		stdout, stderr, err := runCLI(ctx, getenv, step.args...)
		if err != nil {
			t.Fatalf("%v: %v (%s)", step.args, err, stderr)
		}
		if want := fmt.Sprintf("schema version %d of %d\n", step.want, latest); stdout != want {
			t.Errorf("%v printed %q, want %q", step.args, stdout, want)
		}
	}
	// migrate up stores the default limits, so the service never has to
	// when it is asked for them.
	st, err := store.Open(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	if v, err := st.CurrentLimitsVersion(ctx); err != nil || v != 1 {
		t.Errorf("after migrate up: limits version %d, %v; want the defaults as version 1", v, err)
	}
	for _, args := range [][]string{{"migrate", "down", "0"}, {"migrate", "down", "two"}, {"migrate", "sideways"}} {
		if _, _, err := runCLI(ctx, getenv, args...); exitCode(err) != 2 {
			t.Errorf("%v: %v, want a usage error", args, err)
		}
	}
}

var tokenPattern = regexp.MustCompile(`^wsh_[A-Za-z0-9_-]{43}$`)

func TestTokenCommands(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	getenv := cliEnv(dbURL)

	stdout, stderr, err := runCLI(ctx, getenv, "token", "create", "--name", "kim", "--role", "staff")
	if err != nil {
		t.Fatalf("create: %v (%s)", err, stderr)
	}
	// The token and nothing else, so `TOKEN=$(wattshelf token create …)` works.
	secret := strings.TrimSuffix(stdout, "\n")
	if !tokenPattern.MatchString(secret) || strings.Count(stdout, "\n") != 1 {
		t.Fatalf("create printed %q, want one token line", stdout)
	}
	u, err := st.Authenticate(ctx, secret)
	if err != nil || u.Name != "kim" || u.Role != domain.RoleStaff {
		t.Fatalf("printed token authenticates as %+v, %v", u, err)
	}
	// Without --role the token is a member's (the list below shows it).
	member, _, err := runCLI(ctx, getenv, "token", "create", "--name", "ada")
	if err != nil || !tokenPattern.MatchString(strings.TrimSpace(member)) {
		t.Fatalf("create without --role: %q, %v", member, err)
	}

	stdout, _, err = runCLI(ctx, getenv, "token", "list")
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(stdout), "\n")
	if len(lines) != 3 || !strings.HasPrefix(lines[0], "NAME") {
		t.Fatalf("list:\n%s", stdout)
	}
	// Newest first: ada has never used hers, kim just did.
	if f := strings.Fields(lines[1]); f[0] != "ada" || f[1] != "member" || !slices.Contains(f, "never") || f[len(f)-1] != "live" {
		t.Errorf("ada's line %q", lines[1])
	}
	if f := strings.Fields(lines[2]); f[0] != "kim" || f[1] != "staff" || slices.Contains(f, "never") {
		t.Errorf("kim's line %q", lines[2])
	}
	if strings.Contains(stdout, secret) || strings.Contains(stdout, strings.TrimSpace(member)) {
		t.Error("list shows a secret")
	}

	stdout, _, err = runCLI(ctx, getenv, "token", "revoke", "kim")
	if err != nil || stdout != "revoked 1 token(s) of kim\n" {
		t.Fatalf("revoke: %q, %v", stdout, err)
	}
	if _, err := st.Authenticate(ctx, secret); err == nil {
		t.Error("revoked token still authenticates")
	}
	stdout, _, _ = runCLI(ctx, getenv, "token", "list")
	if !strings.Contains(stdout, "revoked ") {
		t.Errorf("list after revoke:\n%s", stdout)
	}

	for _, tt := range []struct {
		args []string
		code int
	}{
		{[]string{"token", "revoke", "kim"}, 1}, // nothing live left
		{[]string{"token", "revoke", "nobody"}, 1},
		{[]string{"token", "create", "--name", "bo", "--role", "admin"}, 1},
		{[]string{"token", "create", "--name", "kim", "--role", "member"}, 1}, // kim is staff
	} {
		stdout, _, err := runCLI(ctx, getenv, tt.args...)
		if code := exitCode(err); code != tt.code {
			t.Errorf("%v: exit %d (%v), want %d", tt.args, code, err, tt.code)
		}
		if stdout != "" {
			t.Errorf("%v printed %q on stdout", tt.args, stdout)
		}
	}
}

func TestDemoScenario(t *testing.T) {
	demo, err := loadDemo()
	if err != nil {
		t.Fatal(err)
	}
	// Issue 2 asks for at least 12 components across these kinds, in named
	// bins, with datasheet and measured specs, some salvaged.
	if len(demo.Components) < 12 {
		t.Errorf("%d demo components, want at least 12", len(demo.Components))
	}
	kinds := map[string]bool{}
	sources := map[string]bool{}
	for _, c := range demo.Components {
		kinds[c.Kind] = true
		sources[c.SpecSource] = true
		if c.Bin == "" {
			t.Errorf("demo component %q has no bin", c.Name)
		}
	}
	for _, k := range []string{"motor", "battery", "regulator", "driver", "microcontroller", "camera", "audio", "sensor", "light", "connector", "wire", "fuse"} {
		if !kinds[k] {
			t.Errorf("no demo component of kind %s", k)
		}
	}
	if !sources["datasheet"] || !sources["measured"] {
		t.Errorf("demo spec sources %v, want datasheet and measured", sources)
	}
}

func TestSeedDemoCommand(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	demo, err := loadDemo()
	if err != nil {
		t.Fatal(err)
	}
	for i := range 2 {
		if _, stderr, err := runCLI(ctx, cliEnv(dbURL), "seed-demo"); err != nil {
			t.Fatalf("seed-demo run %d: %v (%s)", i+1, err, stderr)
		}
		if n, err := st.CountComponents(ctx); err != nil || n != int64(len(demo.Components)) {
			t.Errorf("after seed-demo run %d: %d components (%v), want %d", i+1, n, err, len(demo.Components))
		}
	}
}
