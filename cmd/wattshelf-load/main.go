// Command wattshelf-load drives traffic at a wattshelf server on this
// machine and holds it to the service's performance budgets. It is kept
// out of the wattshelf binary: operators never need it in production.
package main

import (
	"context"
	"errors"
	"fmt"
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
				fmt.Fprintln(os.Stderr, "wattshelf-load:", ee.msg)
			}
			os.Exit(ee.code)
		}
		fmt.Fprintln(os.Stderr, "wattshelf-load:", err)
		os.Exit(1)
	}
}

// exitError carries a specific exit status out of run: 2 for a usage
// error, 1 for a missed budget.
type exitError struct {
	code int
	msg  string
}

func (e *exitError) Error() string { return fmt.Sprintf("exit %d: %s", e.code, e.msg) }
