package main

import (
	"bufio"
	"net/http"
	"os"
	"strconv"
	"strings"
	"testing"
	"time"

	"go.yaml.in/yaml/v3"

	"wattshelf/api"
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
