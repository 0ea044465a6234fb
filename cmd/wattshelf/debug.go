package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net"
	"net/http"
	"net/http/pprof"
	"time"
)

// serveDebug serves the Go runtime's profiles on addr, apart from the
// service's own address so they are never exposed by accident. It returns
// a function that stops it.
func serveDebug(addr string, logger *slog.Logger) (func(), error) {
	mux := http.NewServeMux()
	mux.HandleFunc("/debug/pprof/", pprof.Index)
	mux.HandleFunc("/debug/pprof/cmdline", pprof.Cmdline)
	mux.HandleFunc("/debug/pprof/profile", pprof.Profile)
	mux.HandleFunc("/debug/pprof/symbol", pprof.Symbol)
	mux.HandleFunc("/debug/pprof/trace", pprof.Trace)
	ln, err := net.Listen("tcp", addr)
	if err != nil {
		return nil, fmt.Errorf("listen for profiles on %s: %w", addr, err)
	}
	// Profiles take up to the seconds asked for, so no write timeout.
	srv := &http.Server{Handler: mux, ReadHeaderTimeout: 5 * time.Second}
	logger.Info("serving profiles", "addr", "http://"+ln.Addr().String()+"/debug/pprof/")
	go func() {
		if err := srv.Serve(ln); err != nil && !errors.Is(err, http.ErrServerClosed) {
			logger.Error("profile server stopped", "error", err.Error())
		}
	}()
	return func() {
		ctx, cancel := context.WithTimeout(context.Background(), time.Second)
		defer cancel()
		_ = srv.Shutdown(ctx)
	}, nil
}
