package api_test

import (
	"bufio"
	"context"
	"encoding/json"
	"fmt"
	"log/slog"
	"net/http"
	"net/url"
	"strconv"
	"strings"
	"testing"

	"github.com/jackc/pgx/v5"
	"github.com/labstack/echo/v4"
	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
	"wattshelf/domain/store"
)

func TestNewNeedsItsDependencies(t *testing.T) {
	a := startShelfAPI(t)
	logger := slog.New(slog.DiscardHandler)
	for name, cfg := range map[string]api.Config{
		"no store":    {Logger: logger, Registry: prometheus.NewRegistry()},
		"no logger":   {Store: a.store, Registry: prometheus.NewRegistry()},
		"no registry": {Store: a.store, Logger: logger},
	} {
		if _, err := api.New(cfg); err == nil {
			t.Errorf("%s: New accepted the config", name)
		}
	}
}

func TestHealthAndReadiness(t *testing.T) {
	a := startShelfAPI(t)
	r := a.do(http.MethodGet, "/healthz", "", nil)
	if r.status != http.StatusOK || !strings.Contains(string(r.body), `"ok"`) {
		t.Errorf("healthz: %d %s", r.status, r.body)
	}

	latest, err := store.SchemaVersion()
	if err != nil {
		t.Fatal(err)
	}
	var ready struct {
		Status        string `json:"status"`
		SchemaVersion uint   `json:"schema_version"`
	}
	r = a.do(http.MethodGet, "/readyz", "", nil)
	r.decode(t, &ready)
	if r.status != http.StatusOK || ready.Status != "ready" || ready.SchemaVersion != latest {
		t.Fatalf("readyz on a current schema: %d %s", r.status, r.body)
	}

	// One migration behind: the process is up but not ready.
	m, err := store.NewMigrator(a.dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer m.Close()
	if err := m.Down(1); err != nil {
		t.Fatal(err)
	}
	r = a.do(http.MethodGet, "/readyz", "", nil)
	wantProblem(t, r, http.StatusServiceUnavailable, "unavailable")
	if r.header.Get("Retry-After") == "" {
		t.Error("503 without Retry-After")
	}
	if r := a.do(http.MethodGet, "/healthz", "", nil); r.status != http.StatusOK {
		t.Errorf("healthz while not ready: %d", r.status)
	}
	if err := m.Up(); err != nil {
		t.Fatal(err)
	}
	if r := a.do(http.MethodGet, "/readyz", "", nil); r.status != http.StatusOK {
		t.Errorf("readyz after migrating back up: %d %s", r.status, r.body)
	}
}

// TestDatabaseGoneIsUnavailable drops the database under a running router:
// requests that need it get 503 problems, the process stays healthy.
func TestDatabaseGoneIsUnavailable(t *testing.T) {
	a := startShelfAPI(t)
	if r := a.do(http.MethodGet, "/v1/components", a.owner, nil); r.status != http.StatusOK {
		t.Fatalf("before: %d", r.status)
	}
	admin, err := url.Parse(a.dbURL)
	if err != nil {
		t.Fatal(err)
	}
	name := strings.TrimPrefix(admin.Path, "/")
	admin.Path = "/postgres"
	ctx := context.Background()
	conn, err := pgx.Connect(ctx, admin.String())
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	if _, err := conn.Exec(ctx, "DROP DATABASE "+pgx.Identifier{name}.Sanitize()+" WITH (FORCE)"); err != nil {
		t.Fatal(err)
	}

	for _, path := range []string{"/readyz", "/v1/components", "/v1/shelf"} {
		r := a.do(http.MethodGet, path, a.owner, nil)
		if path == "/v1/shelf" {
			r = a.do(http.MethodGet, path, "", nil)
		}
		p := wantProblem(t, r, http.StatusServiceUnavailable, "unavailable")
		if r.header.Get("Retry-After") == "" {
			t.Errorf("%s: 503 without Retry-After", path)
		}
		if strings.Contains(p.Detail, name) || strings.Contains(p.Detail, "SQLSTATE") {
			t.Errorf("%s: detail leaks the database error: %q", path, p.Detail)
		}
	}
	if r := a.do(http.MethodGet, "/healthz", "", nil); r.status != http.StatusOK {
		t.Errorf("healthz without a database: %d", r.status)
	}
}

// metricValue finds the sample of name whose labels include every given
// pair and returns its value.
func metricValue(t *testing.T, exposition, name string, labels ...string) (float64, bool) {
	t.Helper()
	sc := bufio.NewScanner(strings.NewReader(exposition))
	sc.Buffer(make([]byte, 1<<20), 1<<20)
next:
	for sc.Scan() {
		line := sc.Text()
		if !strings.HasPrefix(line, name+"{") && !strings.HasPrefix(line, name+" ") {
			continue
		}
		for i := 0; i+1 < len(labels); i += 2 {
			if !strings.Contains(line, fmt.Sprintf("%s=%q", labels[i], labels[i+1])) {
				continue next
			}
		}
		v, err := strconv.ParseFloat(line[strings.LastIndex(line, " ")+1:], 64)
		if err != nil {
			t.Fatalf("sample %q: %v", line, err)
		}
		return v, true
	}
	return 0, false
}

func TestMetrics(t *testing.T) {
	a := startShelfAPI(t)
	c := a.created(a.owner, component("Fan", "motor"))
	for range 2 {
		a.do(http.MethodGet, fmt.Sprintf("/v1/components/%d", c.ID), a.owner, nil)
	}
	a.do(http.MethodGet, "/v1/components/999999", a.owner, nil)
	a.do(http.MethodGet, "/no/such/route/abc123", "", nil)
	a.do(http.MethodGet, "/no/such/route/def456", "", nil)

	r := a.do(http.MethodGet, "/metrics", "", nil)
	if r.status != http.StatusOK || !strings.HasPrefix(r.header.Get("Content-Type"), "text/plain") {
		t.Fatalf("metrics: %d %s", r.status, r.header.Get("Content-Type"))
	}
	body := string(r.body)
	for _, tt := range []struct {
		labels []string
		want   float64
	}{
		{[]string{"route", "/v1/components/:id", "method", "GET", "status", "200"}, 2},
		{[]string{"route", "/v1/components/:id", "method", "GET", "status", "404"}, 1},
		{[]string{"route", "/v1/components", "method", "POST", "status", "201"}, 1},
	} {
		got, ok := metricValue(t, body, "wattshelf_http_requests_total", tt.labels...)
		if !ok || got != tt.want {
			t.Errorf("requests %v = %g (found %t), want %g", tt.labels, got, ok, tt.want)
		}
		got, ok = metricValue(t, body, "wattshelf_http_request_duration_seconds_count", tt.labels...)
		if !ok || got != tt.want {
			t.Errorf("latency count %v = %g (found %t), want %g", tt.labels, got, ok, tt.want)
		}
	}
	// Unknown paths share one label value instead of one series each.
	if strings.Contains(body, "abc123") || strings.Contains(body, "def456") {
		t.Error("metrics carry raw request paths as labels")
	}
	for _, gauge := range []string{
		"wattshelf_db_pool_connections", "wattshelf_db_pool_idle_connections",
		"wattshelf_db_pool_acquired_connections", "wattshelf_db_pool_max_connections",
		"wattshelf_db_pool_acquires_total", "wattshelf_db_pool_empty_acquires_total",
		"wattshelf_db_pool_acquire_wait_seconds_total",
	} {
		if _, ok := metricValue(t, body, gauge); !ok {
			t.Errorf("no %s", gauge)
		}
	}
	if n, _ := metricValue(t, body, "wattshelf_db_pool_max_connections"); n < 1 {
		t.Errorf("pool max connections %g", n)
	}
	if n, _ := metricValue(t, body, "wattshelf_db_pool_acquires_total"); n < 4 {
		t.Errorf("pool acquires %g after several queries", n)
	}
}

// TestAccessLogNeverHoldsTheToken sends tokens every way the server may
// see them and searches the whole log for them.
func TestAccessLogNeverHoldsTheToken(t *testing.T) {
	a := startShelfAPI(t)
	a.echo.GET("/test/panic", func(echo.Context) error { panic("boom") })
	revoked := a.mint("dee", "member")
	if _, err := a.store.RevokeTokens(context.Background(), "test", "dee"); err != nil {
		t.Fatal(err)
	}
	unknown := "wsh_" + strings.Repeat("Q", 43)
	c := a.created(a.owner, component("Lamp", "light"))
	path := fmt.Sprintf("/v1/components/%d", c.ID)

	var ids []string
	for _, req := range []struct {
		method, path, token string
		body                any
		status              int
	}{
		{"GET", path, a.owner, nil, 200},
		{"PUT", path, a.other, `{"name": "x", "kind": "light"}`, 403},
		{"GET", "/v1/components", revoked, nil, 401},
		{"GET", "/v1/designs", unknown, nil, 401},
		{"POST", "/v1/components", a.staff, `{"bad json`, 400},
		{"GET", "/test/panic", a.staff, nil, 500},
	} {
		r := a.do(req.method, req.path, req.token, req.body, "If-Match", `"1"`)
		if r.status != req.status {
			t.Errorf("%s %s: %d, want %d", req.method, req.path, r.status, req.status)
		}
		ids = append(ids, r.header.Get(echo.HeaderXRequestID))
	}
	// Malformed headers that carry a secret-looking value.
	a.do("GET", "/v1/components", "", nil, "Authorization", "Token "+a.staff)

	logs := a.logs.String()
	for _, secret := range []string{a.owner, a.other, a.staff, revoked, unknown} {
		body := strings.TrimPrefix(secret, "wsh_")
		if strings.Contains(logs, body) {
			t.Errorf("log holds token %s…", secret[:8])
		}
	}
	if strings.Contains(logs, "Bearer") || strings.Contains(logs, "Authorization") {
		t.Error("log holds the Authorization header")
	}

	// Every request has one JSON access line with its id, route and status.
	lines := map[string]map[string]any{}
	for _, line := range strings.Split(strings.TrimSpace(logs), "\n") {
		var entry map[string]any
		if err := json.Unmarshal([]byte(line), &entry); err != nil {
			t.Fatalf("log line is not JSON: %q", line)
		}
		if entry["msg"] == "request" {
			lines[entry["request_id"].(string)] = entry
		}
	}
	first := lines[ids[0]]
	if first == nil || first["route"] != "/v1/components/:id" || first["status"] != 200.0 || first["method"] != "GET" || first["path"] != path {
		t.Errorf("access line of the first request: %v", first)
	}
	for i, id := range ids {
		if lines[id] == nil {
			t.Errorf("request %d (%s) has no access line", i, id)
		}
	}
	if last := lines[ids[len(ids)-1]]; last == nil || last["status"] != 500.0 {
		t.Errorf("access line of the panicking request: %v", last)
	}
}

func TestRequestIDs(t *testing.T) {
	a := startShelfAPI(t)
	one := a.do(http.MethodGet, "/healthz", "", nil).header.Get(echo.HeaderXRequestID)
	two := a.do(http.MethodGet, "/healthz", "", nil).header.Get(echo.HeaderXRequestID)
	if one == "" || one == two {
		t.Errorf("request ids %q and %q: want distinct, non-empty", one, two)
	}
}
