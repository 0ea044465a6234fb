package main

import (
	"context"
	"encoding/json"
	"io"
	"net"
	"net/http"
	"slices"
	"strings"
	"testing"
	"time"
	"wattshelf/domain/store/storetest"
)

// freeAddr finds a loopback port nothing listens on by letting the
// kernel pick one and giving it back.
func freeAddr(t *testing.T) string {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	addr := ln.Addr().String()
	if err := ln.Close(); err != nil {
		t.Fatal(err)
	}
	return addr
}

// runningServer is `wattshelf serve` started through run().
type runningServer struct {
	base   string
	logs   *guardedBuffer
	stop   context.CancelFunc
	result chan error
}

// startServe runs serve on a free port and waits until /readyz answers 200.
func startServe(t *testing.T, getenv func(string) string, extra ...string) *runningServer {
	t.Helper()
	addr := freeAddr(t)
	ctx, cancel := context.WithCancel(context.Background())
	s := &runningServer{base: "http://" + addr, logs: &guardedBuffer{}, stop: cancel, result: make(chan error, 1)}
	args := append([]string{"serve", "--addr", addr}, extra...)
	go func() { s.result <- run(ctx, args, getenv, io.Discard, s.logs) }()
	t.Cleanup(func() {
		cancel()
		select {
		case <-s.result:
		case <-time.After(30 * time.Second):
			t.Error("serve did not stop")
		}
	})

	deadline := time.Now().Add(60 * time.Second)
	for {
		select {
		case err := <-s.result:
			s.result <- err // for the cleanup
			t.Fatalf("serve ended before it was ready: %v\n%s", err, s.logs)
		default:
		}
		resp, err := http.Get(s.base + "/readyz")
		if err == nil {
			resp.Body.Close()
			if resp.StatusCode == http.StatusOK {
				return s
			}
		}
		if time.Now().After(deadline) {
			t.Fatalf("serve not ready after 60 s (last: %v)\n%s", err, s.logs)
		}
		time.Sleep(50 * time.Millisecond)
	}
}

// shutdown cancels serve's context and returns what run returned.
func (s *runningServer) shutdown(t *testing.T) error {
	t.Helper()
	s.stop()
	select {
	case err := <-s.result:
		s.result <- err // for the cleanup
		return err
	case <-time.After(30 * time.Second):
		t.Fatal("serve did not stop within 30 s of cancellation")
		return nil
	}
}

func (s *runningServer) get(t *testing.T, path, token string) (int, []byte) {
	t.Helper()
	req, err := http.NewRequest(http.MethodGet, s.base+path, nil)
	if err != nil {
		t.Fatal(err)
	}
	if token != "" {
		req.Header.Set("Authorization", "Bearer "+token)
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatalf("GET %s: %v", path, err)
	}
	defer resp.Body.Close()
	body, err := io.ReadAll(resp.Body)
	if err != nil {
		t.Fatal(err)
	}
	return resp.StatusCode, body
}

// TestServeStartsAnswersAndStops runs the service the way the README does,
// against a database that does not exist yet, with the token commands
// working beside it.
func TestServeStartsAnswersAndStops(t *testing.T) {
	ctx := context.Background()
	getenv := cliEnv(storetest.AbsentDatabaseURL(t))
	s := startServe(t, getenv)

	if code, body := s.get(t, "/healthz", ""); code != http.StatusOK {
		t.Errorf("healthz: %d %s", code, body)
	}
	if code, body := s.get(t, "/v1/shelf", ""); code != http.StatusOK || !strings.Contains(string(body), `"items":[]`) {
		t.Errorf("empty shelf without --demo: %d %s", code, body)
	}
	if code, _ := s.get(t, "/v1/components", ""); code != http.StatusUnauthorized {
		t.Errorf("anonymous component list: %d", code)
	}
	stdout, _, err := runCLI(ctx, getenv, "token", "create", "--name", "ada", "--role", "member")
	if err != nil {
		t.Fatal(err)
	}
	token := strings.TrimSpace(stdout)
	if code, body := s.get(t, "/v1/components", token); code != http.StatusOK {
		t.Errorf("component list with a fresh token: %d %s", code, body)
	}
	req, err := http.NewRequest(http.MethodPost, s.base+"/v1/components", strings.NewReader(
		`{"name":"Spare fan","kind":"motor","bin":"M9","quantity":1,"condition":"working","spec_source":"measured"}`))
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Authorization", "Bearer "+token)
	req.Header.Set("Content-Type", "application/json")
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if resp.StatusCode != http.StatusCreated {
		t.Errorf("create a component: %d", resp.StatusCode)
	}
	if _, _, err := runCLI(ctx, getenv, "token", "revoke", "ada"); err != nil {
		t.Fatal(err)
	}
	// serve checks the token against the database on every request, so
	// the revocation holds from the very next one.
	if code, _ := s.get(t, "/v1/components", token); code != http.StatusUnauthorized {
		t.Errorf("component list right after the revocation: %d, want 401", code)
	}
	if code, body := s.get(t, "/metrics", ""); code != http.StatusOK || !strings.Contains(string(body), "wattshelf_http_requests_total") {
		t.Errorf("metrics: %d", code)
	}

	if err := s.shutdown(t); err != nil {
		t.Errorf("run returned %v after cancellation, want nil", err)
	}
	if _, err := http.Get(s.base + "/healthz"); err == nil {
		t.Error("still answering after shutdown")
	}
	logs := s.logs.String()
	// It listened on loopback with no public address: it says so.
	for _, want := range []string{`"msg":"serving"`, `"msg":"stopped"`, `"level":"WARN","msg":"serving on loopback only`} {
		if !strings.Contains(logs, want) {
			t.Errorf("log lacks %s:\n%s", want, logs)
		}
	}
	if strings.Contains(logs, strings.TrimPrefix(token, "wsh_")) {
		t.Error("the log holds a token")
	}
}

func TestServeDemoSeedsOnce(t *testing.T) {
	demo, err := loadDemo()
	if err != nil {
		t.Fatal(err)
	}
	var want []string
	for _, c := range demo.Components {
		want = append(want, c.Name)
	}
	slices.Sort(want)
	getenv := cliEnv(storetest.AbsentDatabaseURL(t))

	shelfNames := func(s *runningServer) []string {
		code, body := s.get(t, "/v1/shelf", "")
		if code != http.StatusOK {
			t.Fatalf("shelf: %d %s", code, body)
		}
		var shelf struct {
			Items []map[string]any `json:"items"`
		}
		if err := json.Unmarshal(body, &shelf); err != nil {
			t.Fatal(err)
		}
		var names []string
		for _, it := range shelf.Items {
			if _, ok := it["owner"]; ok {
				t.Errorf("public shelf shows an owner: %v", it)
			}
			names = append(names, it["name"].(string))
		}
		slices.Sort(names)
		return names
	}

	for i := range 2 {
		s := startServe(t, getenv, "--demo")
		if got := shelfNames(s); !slices.Equal(got, want) {
			t.Errorf("start %d: shelf holds %d items %q, want the %d demo components", i+1, len(got), got, len(want))
		}
		if err := s.shutdown(t); err != nil {
			t.Fatalf("start %d: %v", i+1, err)
		}
	}
}

func TestServeRefusesABusyPort(t *testing.T) {
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer ln.Close()
	dbURL := storetest.AbsentDatabaseURL(t)
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	err = run(ctx, []string{"serve", "--addr", ln.Addr().String()}, cliEnv(dbURL), io.Discard, io.Discard)
	if err == nil || !strings.Contains(err.Error(), "listen") {
		t.Errorf("serve on a busy port: %v, want a listen error", err)
	}
}

// TestServeFinishesInFlightRequests cancels serve while a request body is
// still arriving: the listener closes at once, the request completes, and
// only then does run return.
func TestServeFinishesInFlightRequests(t *testing.T) {
	ctx := context.Background()
	getenv := cliEnv(storetest.AbsentDatabaseURL(t))
	s := startServe(t, getenv)
	stdout, _, err := runCLI(ctx, getenv, "token", "create", "--name", "kim", "--role", "staff")
	if err != nil {
		t.Fatal(err)
	}
	token := strings.TrimSpace(stdout)

	body, upload := io.Pipe()
	req, err := http.NewRequest(http.MethodPost, s.base+"/v1/components", body)
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Authorization", "Bearer "+token)
	req.Header.Set("Content-Type", "application/json")
	type answer struct {
		status int
		err    error
	}
	answered := make(chan answer, 1)
	go func() {
		resp, err := http.DefaultClient.Do(req)
		if err != nil {
			answered <- answer{err: err}
			return
		}
		resp.Body.Close()
		answered <- answer{status: resp.StatusCode}
	}()
	if _, err := upload.Write([]byte(`{"name": "Slowly described lamp", `)); err != nil {
		t.Fatal(err)
	}
	// The first half has reached the server once it is being read; give the
	// handler a moment to be waiting for the rest.
	time.Sleep(300 * time.Millisecond)

	s.stop()
	deadline := time.Now().Add(10 * time.Second)
	for {
		conn, err := net.DialTimeout("tcp", strings.TrimPrefix(s.base, "http://"), time.Second)
		if err != nil {
			break // no longer taking connections
		}
		conn.Close()
		if time.Now().After(deadline) {
			t.Fatal("still accepting connections 10 s after cancellation")
		}
		time.Sleep(20 * time.Millisecond)
	}
	select {
	case err := <-s.result:
		s.result <- err // for the cleanup
		t.Fatalf("run returned (%v) while a request was in flight", err)
	default:
	}

	if _, err := upload.Write([]byte(`"kind": "light"}`)); err != nil {
		t.Fatal(err)
	}
	upload.Close()
	select {
	case a := <-answered:
		if a.err != nil || a.status != http.StatusCreated {
			t.Errorf("in-flight request: status %d, %v; want 201", a.status, a.err)
		}
	case <-time.After(20 * time.Second):
		t.Fatal("in-flight request got no answer")
	}
	if err := s.shutdown(t); err != nil {
		t.Errorf("run returned %v, want nil", err)
	}
}
