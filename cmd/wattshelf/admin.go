package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"strconv"
	"text/tabwriter"
	"time"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

// hostActor names who did what from the host's command line in the audit.
const hostActor = "host-cli"

func migrateCommand(ctx context.Context, args []string, env environment, stdout io.Writer) error {
	if len(args) == 0 {
		return &exitError{code: 2, msg: "usage: wattshelf migrate up | down N | status"}
	}
	// Usage mistakes are reported before anything touches the database.
	steps := 0
	switch args[0] {
	case "up", "status":
		if len(args) != 1 {
			return &exitError{code: 2, msg: fmt.Sprintf("usage: wattshelf migrate %s", args[0])}
		}
	case "down":
		if len(args) != 2 {
			return &exitError{code: 2, msg: "usage: wattshelf migrate down N"}
		}
		n, err := strconv.Atoi(args[1])
		if err != nil || n < 1 {
			return &exitError{code: 2, msg: "migrate down needs a positive step count"}
		}
		steps = n
	default:
		return &exitError{code: 2, msg: fmt.Sprintf("unknown migrate action %q", args[0])}
	}
	if err := store.EnsureDatabase(ctx, env.databaseURL); err != nil {
		return err
	}
	m, err := store.NewMigrator(env.databaseURL)
	if err != nil {
		return err
	}
	defer m.Close()
	switch args[0] {
	case "up":
		if err := m.Up(); err != nil {
			return err
		}
		if err := seedDefaultLimits(ctx, env); err != nil {
			return err
		}
	case "down":
		if err := m.Down(steps); err != nil {
			return err
		}
	}
	st, err := m.Status()
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "schema version %d of %d", st.Current, st.Latest)
	if st.Dirty {
		fmt.Fprint(stdout, " (dirty: a migration failed part-way; fix it by hand, then force the version)")
	}
	fmt.Fprintln(stdout)
	return nil
}

// seedDefaultLimits stores the default limits as version 1 of a database
// just migrated up, as serve does when it starts.
func seedDefaultLimits(ctx context.Context, env environment) error {
	st, err := store.Open(ctx, env.databaseURL)
	if err != nil {
		return fmt.Errorf("open database %s: %w", redactURL(env.databaseURL), err)
	}
	defer st.Close()
	if _, err := st.SeedDefaultLimits(ctx); err != nil {
		return fmt.Errorf("store default limits: %w", err)
	}
	return nil
}

func seedDemoCommand(ctx context.Context, env environment, stdout io.Writer) error {
	st, err := env.openMigrated(ctx)
	if err != nil {
		return err
	}
	defer st.Close()
	return seedDemo(ctx, st, env.logger(stdout))
}

func tokenCommand(ctx context.Context, args []string, env environment, stdout io.Writer) error {
	const createUsage = "usage: wattshelf token create --name NAME --role member|staff"
	if len(args) == 0 {
		return &exitError{code: 2, msg: "usage: wattshelf token create --name NAME --role member|staff | list | revoke NAME"}
	}
	// Usage mistakes are reported before anything touches the database.
	var name, role string
	switch args[0] {
	case "create":
		fs := flag.NewFlagSet("token create", flag.ContinueOnError)
		fs.SetOutput(io.Discard)
		fs.StringVar(&name, "name", "", "who the token is for")
		fs.StringVar(&role, "role", "member", "member or staff")
		if err := fs.Parse(args[1:]); err != nil || name == "" || fs.NArg() != 0 {
			return &exitError{code: 2, msg: createUsage}
		}
	case "list":
		if len(args) != 1 {
			return &exitError{code: 2, msg: "usage: wattshelf token list"}
		}
	case "revoke":
		if len(args) != 2 {
			return &exitError{code: 2, msg: "usage: wattshelf token revoke NAME"}
		}
		name = args[1]
	default:
		return &exitError{code: 2, msg: fmt.Sprintf("unknown token action %q", args[0])}
	}

	st, err := env.openMigrated(ctx)
	if err != nil {
		return err
	}
	defer st.Close()
	switch args[0] {
	case "create":
		secret, err := st.CreateToken(ctx, hostActor, name, domain.Role(role))
		if err != nil {
			return fmt.Errorf("create token: %w", err)
		}
		// The secret alone, so scripts can capture it; it is not shown again.
		fmt.Fprintln(stdout, secret)
		return nil
	case "list":
		infos, err := st.ListTokens(ctx)
		if err != nil {
			return err
		}
		tw := tabwriter.NewWriter(stdout, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "NAME\tROLE\tCREATED\tLAST USED\tSTATE")
		for _, ti := range infos {
			state := "live"
			if ti.RevokedAt != nil {
				state = "revoked " + ti.RevokedAt.UTC().Format(time.DateTime)
			}
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\n", ti.Name, ti.Role,
				ti.CreatedAt.UTC().Format(time.DateTime), formatOptionalTime(ti.LastUsed), state)
		}
		return tw.Flush()
	default: // revoke
		n, err := st.RevokeTokens(ctx, hostActor, name)
		if err != nil {
			return fmt.Errorf("revoke: %w", err)
		}
		fmt.Fprintf(stdout, "revoked %d token(s) of %s\n", n, name)
		return nil
	}
}

func formatOptionalTime(t *time.Time) string {
	if t == nil {
		return "never"
	}
	return t.UTC().Format(time.DateTime)
}
