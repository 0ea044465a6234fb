package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"net"
	"net/http"
	"strconv"
	"time"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
)

// How long a request may last. A client gets headerTimeout to send its
// headers and readTimeout for the whole request, so a trickle of bytes
// cannot hold a connection open; the answer must be written within
// writeTimeout of the headers' end. So no request lasts longer than
// headerTimeout + writeTimeout (readTimeout is shorter), and the database
// waits inside it are bounded by api.DatabaseWaitLimit.
const (
	headerTimeout = 5 * time.Second
	readTimeout   = 20 * time.Second
	writeTimeout  = 20 * time.Second
)

// shutdownGrace is how long a stop waits for requests in flight: longer
// than any request may last, so every one of them is finished. The compose
// file's stop_grace_period and the systemd unit's TimeoutStopSec are longer
// still, so neither kills serve while it waits; a test holds them to that.
const shutdownGrace = headerTimeout + writeTimeout + 5*time.Second

func serve(ctx context.Context, args []string, env environment, stderr io.Writer) error {
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	fs.SetOutput(stderr)
	addr := fs.String("addr", "127.0.0.1:8080", "address to listen on")
	demo := fs.Bool("demo", false, "load the demo shelf and designs into an empty database")
	debugAddr := fs.String("debug-addr", "", "also serve Go profiles (net/http/pprof) here, e.g. 127.0.0.1:6060; keep it off public addresses")
	if err := fs.Parse(args); err != nil {
		return &exitError{code: 2}
	}
	logger := env.logger(stderr)
	proxies, err := api.ParseTrustedProxies(env.trustedProxies)
	if err != nil {
		return &exitError{code: 2, msg: "WATTSHELF_TRUSTED_PROXIES: " + err.Error()}
	}
	kioskWall := false
	if env.kioskWall != "" {
		if kioskWall, err = strconv.ParseBool(env.kioskWall); err != nil {
			return &exitError{code: 2, msg: "WATTSHELF_KIOSK_WALL: want true or false, not " + strconv.Quote(env.kioskWall)}
		}
	}

	st, err := env.openMigrated(ctx)
	if err != nil {
		return err
	}
	defer st.Close()
	if err := prepareData(ctx, st, *demo, logger); err != nil {
		return err
	}

	registry := prometheus.NewRegistry()
	handler, err := api.New(api.Config{
		Store: st, Logger: logger, Registry: registry, PublicBaseURL: env.publicURL,
		TrustedProxies: proxies, KioskWall: kioskWall,
	})
	if err != nil {
		return err
	}
	ln, err := net.Listen("tcp", *addr)
	if err != nil {
		return fmt.Errorf("listen on %s: %w", *addr, err)
	}
	srv := newHTTPServer(handler)
	logger.Info("serving", "addr", "http://"+ln.Addr().String(), "demo", *demo)
	if warning := publicAddressWarning(env.publicURL, ln.Addr().String()); warning != "" {
		logger.Warn(warning)
	}
	if *debugAddr != "" {
		stopDebug, err := serveDebug(*debugAddr, logger)
		if err != nil {
			return err
		}
		defer stopDebug()
	}

	served := make(chan error, 1)
	go func() { served <- srv.Serve(ln) }()
	select {
	case err := <-served:
		return fmt.Errorf("serve: %w", err)
	case <-ctx.Done():
	}
	logger.Info("shutting down: refusing new requests, finishing in-flight ones", "grace", shutdownGrace.String())
	shutdownCtx, cancel := context.WithTimeout(context.Background(), shutdownGrace)
	defer cancel()
	if err := srv.Shutdown(shutdownCtx); err != nil {
		// Only a handler that ignores every timeout gets here; cut it off
		// rather than leave the process hanging.
		_ = srv.Close()
		return fmt.Errorf("shut down: requests still running after %s: %w", shutdownGrace, err)
	}
	if err := <-served; err != nil && !errors.Is(err, http.ErrServerClosed) {
		return fmt.Errorf("serve: %w", err)
	}
	logger.Info("stopped")
	return nil
}

// newHTTPServer wraps handler with the timeouts that bound every request.
func newHTTPServer(handler http.Handler) *http.Server {
	return &http.Server{
		Handler:           handler,
		ReadHeaderTimeout: headerTimeout,
		ReadTimeout:       readTimeout,
		WriteTimeout:      writeTimeout,
		IdleTimeout:       120 * time.Second,
		MaxHeaderBytes:    64 << 10,
	}
}
