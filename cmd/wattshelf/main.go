// Command wattshelf runs the makerspace shelf and power-review service and
// its command-line tools.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	err := run(ctx, os.Args[1:], os.Getenv, os.Stdout, os.Stderr)
	stop()
	if err != nil {
		var ee *exitError
		if errors.As(err, &ee) {
			if ee.msg != "" {
				fmt.Fprintln(os.Stderr, "wattshelf:", ee.msg)
			}
			os.Exit(ee.code)
		}
		fmt.Fprintln(os.Stderr, "wattshelf:", err)
		os.Exit(1)
	}
}

// exitError carries a specific exit status out of run.
type exitError struct {
	code int
	msg  string
}

func (e *exitError) Error() string { return fmt.Sprintf("exit %d: %s", e.code, e.msg) }

const usage = `wattshelf keeps a makerspace's shelf of salvaged parts and reviews the
power wiring of members' build designs.

Usage:
  wattshelf serve [--addr 127.0.0.1:8080] [--demo] [--debug-addr 127.0.0.1:6060]
  wattshelf migrate up | down N | status
  wattshelf seed-demo
  wattshelf token create --name NAME --role member|staff
  wattshelf token list
  wattshelf token revoke NAME
  wattshelf quota show
  wattshelf quota set [--reviews-per-hour N] [--designs N] [--stored-bytes N]
  wattshelf review FILE... [--server URL] [--token T] [--json] [--fail-on warn|fail]
  wattshelf export [--format json|csv] [--out FILE]
  wattshelf import FILE

Environment:
  DATABASE_URL          PostgreSQL URL (default ` + defaultDatabaseURL + `)
  WATTSHELF_PUBLIC_URL  address printed into QR codes and links (default: the request's own)
  WATTSHELF_LOG_LEVEL   debug, info, warn or error (default info)
  WATTSHELF_KIOSK_WALL  true: /shelf is the self-paging wall screen (/shelf?wall=0
                        still shows the ordinary page; default false)
  WATTSHELF_TRUSTED_PROXIES
                        reverse proxies whose X-Forwarded-For names the client
                        (addresses or CIDR blocks, comma-separated; default none)
`

// run is the whole program, callable from tests: args exclude the program
// name, getenv stands in for os.Getenv.
func run(ctx context.Context, args []string, getenv func(string) string, stdout, stderr io.Writer) error {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return &exitError{code: 2}
	}
	env := newEnvironment(getenv)
	switch args[0] {
	case "serve":
		return serve(ctx, args[1:], env, stderr)
	case "migrate":
		return migrateCommand(ctx, args[1:], env, stdout)
	case "seed-demo":
		return seedDemoCommand(ctx, env, stdout)
	case "token":
		return tokenCommand(ctx, args[1:], env, stdout)
	case "quota":
		return quotaCommand(ctx, args[1:], env, stdout)
	case "review":
		return reviewCommand(ctx, args[1:], getenv, os.Stdin, stdout, stderr)
	case "export":
		return exportCommand(ctx, args[1:], env, stdout, stderr)
	case "import":
		return importCommand(ctx, args[1:], env, stdout)
	case "help", "-h", "--help":
		fmt.Fprint(stdout, usage)
		return nil
	}
	fmt.Fprint(stderr, usage)
	return &exitError{code: 2, msg: fmt.Sprintf("unknown command %q", args[0])}
}
