package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/url"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"
)

// logBuffer collects a server's log lines for the test to read while the
// server is still writing them.
type logBuffer struct {
	mu    sync.Mutex
	buf   bytes.Buffer
	lines chan string
}

func newLogBuffer() *logBuffer { return &logBuffer{lines: make(chan string, 1024)} }

func (b *logBuffer) Write(p []byte) (int, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	b.buf.Write(p)
	for _, line := range strings.Split(strings.TrimRight(string(p), "\n"), "\n") {
		select {
		case b.lines <- line:
		default: // nobody is waiting for lines any more
		}
	}
	return len(p), nil
}

func (b *logBuffer) String() string {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.buf.String()
}

// waitForAddr waits for serve's "serving" log line and returns its URL.
func (b *logBuffer) waitForAddr(t *testing.T, timeout time.Duration) string {
	t.Helper()
	deadline := time.After(timeout)
	for {
		select {
		case line := <-b.lines:
			var entry struct {
				Msg  string `json:"msg"`
				Addr string `json:"addr"`
			}
			if json.Unmarshal([]byte(line), &entry) == nil && entry.Msg == "serving" {
				return entry.Addr
			}
		case <-deadline:
			t.Fatalf("server did not start within %s; log:\n%s", timeout, b.String())
		}
	}
}

// tcpProxy stands between the service and PostgreSQL so a test can take
// the database away and bring it back without touching the server.
type tcpProxy struct {
	ln     net.Listener
	target string

	mu      sync.Mutex
	down    bool
	stalled bool
	conns   map[net.Conn]struct{}
	held    []net.Conn
}

func newTCPProxy(t *testing.T, target string) *tcpProxy {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	p := &tcpProxy{ln: ln, target: target, conns: map[net.Conn]struct{}{}}
	go p.accept()
	t.Cleanup(func() {
		ln.Close()
		p.restore()
		p.cut()
	})
	return p
}

func (p *tcpProxy) addr() string { return p.ln.Addr().String() }

func (p *tcpProxy) accept() {
	for {
		client, err := p.ln.Accept()
		if err != nil {
			return
		}
		p.mu.Lock()
		if p.down {
			p.mu.Unlock()
			client.Close()
			continue
		}
		if p.stalled {
			p.held = append(p.held, client)
			p.mu.Unlock()
			continue
		}
		upstream, err := net.Dial("tcp", p.target)
		if err != nil {
			p.mu.Unlock()
			client.Close()
			continue
		}
		p.conns[client], p.conns[upstream] = struct{}{}, struct{}{}
		p.mu.Unlock()
		go p.pipe(client, upstream)
		go p.pipe(upstream, client)
	}
}

func (p *tcpProxy) pipe(dst, src net.Conn) {
	_, _ = io.Copy(dst, src)
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.stalled {
		return // stall keeps the service's side open and silent
	}
	dst.Close()
	src.Close()
}

// cut drops every open connection and refuses new ones, as a database
// that has stopped or a cable pulled out would.
func (p *tcpProxy) cut() {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.down = true
	for c := range p.conns {
		c.Close()
	}
	clear(p.conns)
}

// stall stops all traffic but closes nothing, as a network partition or
// a frozen database host would: the service hears silence, not a reset.
func (p *tcpProxy) stall() {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.stalled = true
	for c := range p.conns {
		if c.LocalAddr().String() == p.ln.Addr().String() {
			p.held = append(p.held, c) // the service's side: keep it open
		} else {
			c.Close() // the database's side: nothing reaches it any more
		}
	}
	clear(p.conns)
}

// restore lets traffic through again; connections held silent during a
// stall are closed, as a partition's dead connections eventually are.
func (p *tcpProxy) restore() {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.down, p.stalled = false, false
	for _, c := range p.held {
		c.Close()
	}
	p.held = nil
}

// viaProxy rewrites a database URL to go through addr.
func viaProxy(t *testing.T, dbURL, addr string) string {
	t.Helper()
	u, err := url.Parse(dbURL)
	if err != nil {
		t.Fatal(err)
	}
	u.Host = addr
	return u.String()
}

func hostOf(t *testing.T, dbURL string) string {
	t.Helper()
	u, err := url.Parse(dbURL)
	if err != nil {
		t.Fatal(err)
	}
	if u.Port() == "" {
		return u.Hostname() + ":5432"
	}
	return u.Host
}

// mintToken creates a token through the command line, as staff would.
func mintToken(t *testing.T, dbURL, name, role string) string {
	t.Helper()
	return strings.TrimSpace(runOK(t, envWith(dbURL), "token", "create", "--name", name, "--role", role))
}

// buildBinary compiles the command into a temporary directory, so the
// tests can signal and kill a real process.
func buildBinary(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "wattshelf")
	cmd := exec.Command("go", "build", "-o", bin, ".")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// serverProcess is a running `wattshelf serve`.
type serverProcess struct {
	cmd  *exec.Cmd
	log  *logBuffer
	url  string
	done chan error
}

// startProcess runs `bin serve` on a free loopback port against dbURL.
func startProcess(t *testing.T, bin, dbURL string, extra ...string) *serverProcess {
	t.Helper()
	p := launchProcess(t, bin, dbURL, extra...)
	p.url = p.log.waitForAddr(t, 60*time.Second)
	return p
}

// launchProcess starts the process without waiting for it to listen.
func launchProcess(t *testing.T, bin, dbURL string, extra ...string) *serverProcess {
	t.Helper()
	cmd := exec.Command(bin, append([]string{"serve", "--addr", "127.0.0.1:0"}, extra...)...)
	cmd.Env = []string{"DATABASE_URL=" + dbURL, "PATH=/usr/bin:/bin"}
	log := newLogBuffer()
	cmd.Stderr = log
	cmd.Stdout = log
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	p := &serverProcess{cmd: cmd, log: log, done: make(chan error, 1)}
	go func() { p.done <- cmd.Wait() }()
	t.Cleanup(func() {
		_ = cmd.Process.Kill()
		<-p.done
	})
	return p
}

// wait returns the process's exit error, failing the test after timeout.
func (p *serverProcess) wait(t *testing.T, timeout time.Duration) error {
	t.Helper()
	select {
	case err := <-p.done:
		p.done <- err // let the cleanup read it too
		return err
	case <-time.After(timeout):
		t.Fatalf("process did not exit within %s; log:\n%s", timeout, p.log.String())
		return nil
	}
}

// apiClient sends JSON requests with a token.
type apiClient struct {
	base  string
	token string
	http  *http.Client
}

func newAPIClient(base, token string) *apiClient {
	return &apiClient{base: base, token: token, http: &http.Client{Timeout: 20 * time.Second}}
}

// do sends a request and returns the status, headers and body; a
// transport error is returned as such.
func (c *apiClient) do(ctx context.Context, method, path string, body any, header ...string) (int, http.Header, []byte, error) {
	var rd io.Reader
	if body != nil {
		raw, err := json.Marshal(body)
		if err != nil {
			return 0, nil, nil, err
		}
		rd = bytes.NewReader(raw)
	}
	req, err := http.NewRequestWithContext(ctx, method, c.base+path, rd)
	if err != nil {
		return 0, nil, nil, err
	}
	if body != nil {
		req.Header.Set("Content-Type", "application/json")
	}
	if c.token != "" {
		req.Header.Set("Authorization", "Bearer "+c.token)
	}
	for i := 0; i+1 < len(header); i += 2 {
		req.Header.Set(header[i], header[i+1])
	}
	res, err := c.http.Do(req)
	if err != nil {
		return 0, nil, nil, err
	}
	defer res.Body.Close()
	raw, err := io.ReadAll(res.Body)
	return res.StatusCode, res.Header, raw, err
}

// componentBody is a valid component of the fault tests.
func componentBody(tag string, i int) map[string]any {
	return map[string]any{
		"name": fmt.Sprintf("%s part %d", tag, i), "kind": "motor", "bin": "T" + tag,
		"quantity": 1, "condition": "working", "spec_source": "measured",
		// A small gear motor's figures (invented test data).
		"rated_v": 6.0, "no_load_a": 0.15, "stall_a": 2.2, "min_v": 3.0, "max_v": 7.2,
	}
}

// faultDesign is a small valid design of the fault tests, written as
// encoding/json writes a map, so what the database stores can be compared
// byte for byte: a 4-cell LiFePO4 pack feeding a fused lamp (invented
// test data).
func faultDesign(name string) []byte {
	doc, err := json.Marshal(map[string]any{"format": 1, "name": name, "ambient_c": 25, "target_runtime_h": 1,
		"nodes": []map[string]any{
			{"id": "pack", "type": "battery", "chemistry": "lifepo4", "series": 4, "parallel": 1,
				"cell_capacity_mah": 3000, "max_discharge_a": 15},
			{"id": "lamp", "type": "load", "min_v": 9, "max_v": 15, "current_a": 0.6, "duty": 0.5,
				"feed": map[string]any{"from": "pack", "wire": map[string]any{"gauge": "20AWG", "length_m": 0.6},
					"fuse": map[string]any{"rating_a": 1, "speed": "slow", "family": "blade", "distance_from_source_m": 0.12}}},
		}})
	if err != nil {
		panic(err) // maps of plain values always encode
	}
	return doc
}

// createdID reads the id from a 201 response body.
func createdID(t *testing.T, body []byte) int64 {
	t.Helper()
	var v struct {
		ID int64 `json:"id"`
	}
	if err := json.Unmarshal(body, &v); err != nil || v.ID == 0 {
		t.Fatalf("created response without id: %s", body)
	}
	return v.ID
}

// checkUnavailable asserts an RFC 9457 document for 503 with Retry-After.
func checkUnavailable(t *testing.T, what string, status int, h http.Header, body []byte) {
	t.Helper()
	if status != http.StatusServiceUnavailable {
		t.Errorf("%s: status %d, want 503; body %s", what, status, body)
		return
	}
	if ct := h.Get("Content-Type"); !strings.HasPrefix(ct, "application/problem+json") {
		t.Errorf("%s: Content-Type %q", what, ct)
	}
	if h.Get("Retry-After") == "" {
		t.Errorf("%s: no Retry-After", what)
	}
	var p struct {
		Type   string `json:"type"`
		Status int    `json:"status"`
	}
	if err := json.Unmarshal(body, &p); err != nil || p.Status != 503 || !strings.HasSuffix(p.Type, ":unavailable") {
		t.Errorf("%s: problem document %s", what, body)
	}
}
