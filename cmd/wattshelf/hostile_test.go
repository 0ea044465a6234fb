package main

import (
	"bufio"
	"io"
	"log/slog"
	"net"
	"net/http"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
	"wattshelf/domain/store/storetest"
)

// startServerLikeServe serves the real router through the http.Server
// serve builds, on a loopback port of its own.
func startServerLikeServe(t *testing.T) (*http.Server, string) {
	t.Helper()
	st, _ := storetest.NewStore(t)
	router, err := api.New(api.Config{Store: st, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)), Registry: prometheus.NewRegistry()})
	if err != nil {
		t.Fatal(err)
	}
	srv := newHTTPServer(router)
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	go func() { _ = srv.Serve(ln) }()
	t.Cleanup(func() { srv.Close() })
	return srv, ln.Addr().String()
}

// dribble writes prefix, then one byte of rest every interval until the
// server closes the connection or rest runs out. It returns how long the
// connection lasted and what the server answered, if anything.
func dribble(t *testing.T, addr, prefix, rest string, interval time.Duration) (time.Duration, string) {
	t.Helper()
	conn, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	start := time.Now()
	if _, err := io.WriteString(conn, prefix); err != nil {
		t.Fatal(err)
	}
	answered := make(chan string, 1)
	go func() {
		raw, _ := io.ReadAll(bufio.NewReader(conn)) // ends when the server closes
		answered <- string(raw)
	}()
	for i := 0; i < len(rest); i++ {
		select {
		case answer := <-answered:
			return time.Since(start), answer
		case <-time.After(interval):
		}
		if _, err := conn.Write([]byte{rest[i]}); err != nil {
			break // closed under us
		}
	}
	select {
	case answer := <-answered:
		return time.Since(start), answer
	case <-time.After(time.Minute):
		t.Fatal("the server kept a dribbling connection open for over a minute")
		return 0, ""
	}
}

// TestSlowClientsAreCutOff holds connections open by sending a byte at a
// time. A client that never finishes its headers is cut off after the
// header timeout, one that never finishes its body after the read
// timeout, without a 5xx, so a handful of slow clients cannot tie up the
// server's connections for good.
func TestSlowClientsAreCutOff(t *testing.T) {
	srv, addr := startServerLikeServe(t)

	t.Run("headers", func(t *testing.T) {
		t.Parallel()
		took, answer := dribble(t, addr, "GET /healthz HTTP/1.1\r\nHost: x\r\n",
			"X-Slow: "+strings.Repeat("a", 200)+"\r\n\r\n", 250*time.Millisecond)
		if took < srv.ReadHeaderTimeout-time.Second || took > srv.ReadHeaderTimeout+3*time.Second {
			t.Errorf("connection lasted %s; the header timeout is %s", took, srv.ReadHeaderTimeout)
		}
		if strings.Contains(answer, " 200 ") || strings.Contains(answer, "HTTP/1.1 5") {
			t.Errorf("a request whose headers never ended was answered: %.100q", answer)
		}
	})
	t.Run("body", func(t *testing.T) {
		t.Parallel()
		body := `{"format": 1, "name": "slow", "nodes": []}` + strings.Repeat(" ", 4000)
		took, answer := dribble(t, addr, "POST /v1/reviews HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\nContent-Length: "+
			strconv.Itoa(len(body))+"\r\n\r\n", body, 250*time.Millisecond)
		if took < srv.ReadTimeout-time.Second || took > srv.ReadTimeout+5*time.Second {
			t.Errorf("connection lasted %s; the read timeout is %s", took, srv.ReadTimeout)
		}
		if strings.HasPrefix(answer, "HTTP/1.1 5") || strings.HasPrefix(answer, "HTTP/1.1 2") {
			t.Errorf("a body that never finished was answered %.200q", answer)
		}
	})
}
