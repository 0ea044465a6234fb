package main

import (
	"bufio"
	"io"
	"net/http"
	"os"
	"strconv"
	"strings"
	"testing"
	"time"

	"go.yaml.in/yaml/v3"

	"wattshelf/api"
	"wattshelf/domain/store/storetest"
)

// TestNoRequestOutlastsTheShutdownGrace holds the stop to its promise: a
// request in flight when SIGTERM arrives is finished. So no request may
// last longer than the grace serve waits (net/http ends it by its header
// and write timeouts, or its whole-request read timeout), and whatever
// stops serve must wait longer than that grace before it kills the
// process: the compose file's stop_grace_period (compose's default is
// 10 s, from memory) and the systemd unit's TimeoutStopSec.
func TestNoRequestOutlastsTheShutdownGrace(t *testing.T) {
	srv := newHTTPServer(http.NotFoundHandler())
	longest := max(srv.ReadTimeout, srv.ReadHeaderTimeout+srv.WriteTimeout)
	if srv.ReadHeaderTimeout <= 0 || srv.ReadTimeout <= 0 || srv.WriteTimeout <= 0 {
		t.Fatalf("a request without a time limit: header %s, read %s, write %s", srv.ReadHeaderTimeout, srv.ReadTimeout, srv.WriteTimeout)
	}
	if longest >= shutdownGrace {
		t.Errorf("a request may last %s, the shutdown waits %s", longest, shutdownGrace)
	}
	if api.DatabaseWaitLimit >= srv.WriteTimeout {
		t.Errorf("a database wait of %s outlasts the write timeout %s", api.DatabaseWaitLimit, srv.WriteTimeout)
	}

	raw, err := os.ReadFile("../../docker-compose.yml")
	if err != nil {
		t.Fatal(err)
	}
	var compose struct {
		Services map[string]struct {
			StopGracePeriod string `yaml:"stop_grace_period"`
		} `yaml:"services"`
	}
	if err := yaml.Unmarshal(raw, &compose); err != nil {
		t.Fatal(err)
	}
	app, ok := compose.Services["app"]
	if !ok {
		t.Fatal("docker-compose.yml has no app service")
	}
	if grace, err := time.ParseDuration(app.StopGracePeriod); err != nil || grace <= shutdownGrace {
		t.Errorf("compose stop_grace_period %q (%v), want longer than %s", app.StopGracePeriod, err, shutdownGrace)
	}

	unit, err := os.Open("../../deploy/wattshelf.service")
	if err != nil {
		t.Fatal(err)
	}
	defer unit.Close()
	var stop time.Duration
	for lines := bufio.NewScanner(unit); lines.Scan(); {
		if v, ok := strings.CutPrefix(strings.TrimSpace(lines.Text()), "TimeoutStopSec="); ok {
			n, err := strconv.Atoi(v) // systemd reads a bare number as seconds
			if err != nil {
				t.Fatalf("TimeoutStopSec=%s: %v", v, err)
			}
			stop = time.Duration(n) * time.Second
		}
	}
	if stop <= shutdownGrace {
		t.Errorf("systemd TimeoutStopSec %s (0: unset, systemd's default of 90 s may change), want longer than %s set explicitly", stop, shutdownGrace)
	}
}

// TestStopWaitsForALongRequest stops serve while a request body is still
// arriving and keeps it arriving for longer than the 15 s serve used to
// wait: the request is answered and serve returns without an error. It
// reviews inline against limits version 1, read once before, so the
// request needs nothing from the database after its slow body.
func TestStopWaitsForALongRequest(t *testing.T) {
	s := startServe(t, cliEnv(storetest.AbsentDatabaseURL(t)))
	const path = "/v1/reviews?limits_version=1"
	head, tail := `{"format": 1, `, `"name": "Slow", "nodes": [{"id": "bench", "type": "supply", "output_v": 5, "max_a": 1}]}`
	warm, err := http.Post(s.base+path, "application/json", strings.NewReader(head+tail))
	if err != nil {
		t.Fatal(err)
	}
	warm.Body.Close()
	if warm.StatusCode != http.StatusOK {
		t.Fatalf("warm-up review: %d", warm.StatusCode)
	}

	body, upload := io.Pipe()
	answered := make(chan int, 1)
	go func() {
		resp, err := http.Post(s.base+path, "application/json", body)
		if err != nil {
			answered <- 0
			return
		}
		resp.Body.Close()
		answered <- resp.StatusCode
	}()
	if _, err := upload.Write([]byte(head)); err != nil {
		t.Fatal(err)
	}
	time.Sleep(300 * time.Millisecond)
	s.stop()
	// 16 s of whitespace between two members, a byte pair every 2 s.
	for range 8 {
		time.Sleep(2 * time.Second)
		if _, err := upload.Write([]byte("  ")); err != nil {
			t.Fatalf("the server stopped reading the body: %v", err)
		}
	}
	if _, err := upload.Write([]byte(tail)); err != nil {
		t.Fatal(err)
	}
	upload.Close()
	select {
	case status := <-answered:
		if status != http.StatusOK {
			t.Errorf("the long request got %d, want 200", status)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("the long request got no answer")
	}
	if err := s.shutdown(t); err != nil {
		t.Errorf("serve returned %v after a stop with a long request in flight, want nil", err)
	}
}
