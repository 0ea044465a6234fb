package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"

	"wattshelf/domain/store"
)

const importUsage = `usage: wattshelf import FILE                           (a JSON backup written by wattshelf export)
       wattshelf import --format csv FILE [--dry-run]   (parts from a spreadsheet in the CSV export's columns)`

// importCommand restores a JSON export into an empty database, creating
// and migrating it first when it can.
func importCommand(ctx context.Context, args []string, env environment, stdout io.Writer) error {
	fs := flag.NewFlagSet("import", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	format := fs.String("format", "json", "json or csv")
	dryRun := fs.Bool("dry-run", false, "csv: show what would change, store nothing")
	if err := fs.Parse(args); err != nil || fs.NArg() != 1 || (*format != "json" && *format != "csv") || (*dryRun && *format != "csv") {
		return &exitError{code: 2, msg: importUsage}
	}
	if *format == "csv" {
		return importShelfCSV(ctx, fs.Arg(0), *dryRun, env, stdout)
	}
	args = fs.Args()
	f, err := os.Open(args[0])
	if err != nil {
		return fmt.Errorf("import: %w", err)
	}
	defer f.Close()
	snap, err := store.ReadSnapshot(f)
	if err != nil {
		return fmt.Errorf("import %s: %w", args[0], err)
	}
	schema, err := store.SchemaVersion()
	if err != nil {
		return err
	}
	if snap.SchemaVersion > schema {
		return fmt.Errorf("import %s: the file was written at schema version %d by a newer wattshelf; this one knows version %d",
			args[0], snap.SchemaVersion, schema)
	}
	// Every record is checked with the API's own rules before the
	// database is touched, so a refused file stores nothing.
	if err := store.CheckSnapshot(snap); err != nil {
		return &exitError{code: 1, msg: fmt.Sprintf("import of %s refused: %v", args[0], err)}
	}
	st, err := env.openMigrated(ctx)
	if err != nil {
		return err
	}
	defer st.Close()
	if err := st.Import(ctx, snap); err != nil {
		var ne *store.NotEmptyError
		if errors.As(err, &ne) {
			return &exitError{code: 1, msg: "import refused: " + ne.Error()}
		}

		return err
	}
	fmt.Fprintf(stdout, "imported %s into %s\n", snapshotCounts(snap), redactURL(env.databaseURL))
	if len(snap.Users) > 0 {
		fmt.Fprintln(stdout, "tokens are not part of an export: mint new ones with `wattshelf token create --name NAME --role ROLE`")
	}
	return nil
}
