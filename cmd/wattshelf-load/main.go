// Command wattshelf-load drives traffic at a wattshelf server on this
// machine and holds it to the service's performance budgets. It is kept
// out of the wattshelf binary: operators never need it in production.
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"net"
	"net/url"
	"os"
	"os/signal"
	"strings"
	"syscall"
	"time"
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

const loadUsage = `usage: wattshelf-load --url URL [--token TOKEN] [--pid PID] [--clients 32] [--requests 20000] [--duration 5s] [--steady 20s] [--only ROUTE]

Drives traffic at a wattshelf server on this machine (loopback only) and
holds it to the service's budgets; exits 1 when one is missed.
  steady    50 requests a second of mixed traffic for --steady
  flat out  every route alone with --clients clients for at most --requests
            requests or --duration (a request started in time is waited for
            and counted), then all of them mixed, beside the HTTP floor
            (GET /healthz) and the database floor (GET /readyz)
  large     a 5,000-node design reviewed through POST /v1/reviews 7 times
Resident memory is read from /proc/PID (--pid) or else from /metrics.
The token (or WATTSHELF_TOKEN) should be staff's, so per-member quotas do
not throttle the run; it writes components, designs and stored reviews,
all named "load ...". With --only, only the flat-out routes whose name
contains ROUTE run (and the floors), for profiling: the run then misses
the budgets it did not measure.`

const (
	loadReviewDesignNodes     = 30
	loadShelfPageSize         = 50
	loadMinShelfSize          = loadShelfPageSize + 10
	loadDefaultClients        = 32
	loadDefaultRequests       = 20000
	loadDefaultPhaseDuration  = 5 * time.Second
	loadDefaultSteadyDuration = 20 * time.Second
)

type loadConfig struct {
	base     string
	token    string
	clients  int
	requests int
	duration time.Duration
	steady   time.Duration
	pid      int
	only     string
}

// run is the whole program, callable from tests: args exclude the program
// name, getenv stands in for os.Getenv.
func run(ctx context.Context, args []string, getenv func(string) string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("wattshelf-load", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	cfg := loadConfig{}
	fs.StringVar(&cfg.base, "url", "http://127.0.0.1:8080", "server to load; must be on this machine")
	fs.StringVar(&cfg.token, "token", getenv("WATTSHELF_TOKEN"), "bearer token, staff's")
	fs.IntVar(&cfg.clients, "clients", loadDefaultClients, "concurrent clients flat out")
	fs.IntVar(&cfg.requests, "requests", loadDefaultRequests, "most requests per route flat out")
	fs.DurationVar(&cfg.duration, "duration", loadDefaultPhaseDuration, "most time per route flat out")
	fs.DurationVar(&cfg.steady, "steady", loadDefaultSteadyDuration, "length of the steady phase")
	fs.IntVar(&cfg.pid, "pid", 0, "server process id, to read its resident memory from /proc")
	fs.StringVar(&cfg.only, "only", "", "run only the flat-out routes whose name contains this (the floors always run), e.g. when profiling one")
	if err := fs.Parse(args); err != nil || fs.NArg() != 0 {
		return &exitError{code: 2, msg: loadUsage}
	}
	if cfg.token == "" || cfg.clients < 1 || cfg.clients > 1024 || cfg.requests < 1 || cfg.duration <= 0 ||
		cfg.duration > 10*time.Minute || cfg.steady < time.Second || cfg.steady > 10*time.Minute {
		return &exitError{code: 2, msg: loadUsage}
	}
	cfg.base = strings.TrimRight(cfg.base, "/")
	if err := requireLoopback(cfg.base); err != nil {
		return &exitError{code: 2, msg: err.Error()}
	}
	report, err := runLoad(ctx, cfg, stderr)
	if err != nil {
		return err
	}
	report.print(stdout, cfg)
	if missed := report.missed(); len(missed) > 0 {
		return &exitError{code: 1, msg: fmt.Sprintf("%d budgets missed", len(missed))}
	}
	return nil
}

// requireLoopback keeps the harness pointed at this machine: it is for
// measuring our own server, never for sending floods elsewhere.
func requireLoopback(base string) error {
	u, err := url.Parse(base)
	if err != nil || (u.Scheme != "http" && u.Scheme != "https") || u.Host == "" {
		return fmt.Errorf("--url %q is not an http URL", base)
	}
	host := u.Hostname()
	if host == "localhost" {
		return nil
	}
	if ip := net.ParseIP(host); ip != nil && ip.IsLoopback() {
		return nil
	}
	return fmt.Errorf("--url %q is not a loopback address; the harness only loads a server on this machine", base)
}
