package api_test

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"strings"
	"sync"
	"testing"

	"github.com/labstack/echo/v4"
	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// lockedBuffer is a log sink the server's goroutines and the test share.
type lockedBuffer struct {
	mu  sync.Mutex
	buf bytes.Buffer
}

func (b *lockedBuffer) Write(p []byte) (int, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.buf.Write(p)
}

func (b *lockedBuffer) String() string {
	b.mu.Lock()
	defer b.mu.Unlock()
	return b.buf.String()
}

// shelfAPI is the real router on a real database, served over loopback
// HTTP, with one token per kind of caller.
type shelfAPI struct {
	t     *testing.T
	echo  *echo.Echo
	srv   *httptest.Server
	store *store.Store
	dbURL string
	logs  *lockedBuffer

	staff, owner, other string // tokens: kim (staff), ada and bo (members)
}

func startShelfAPI(t *testing.T) *shelfAPI {
	t.Helper()
	st, dbURL := storetest.NewStore(t)
	// serve stores the default limits as it starts; so does the harness.
	if _, err := st.SeedDefaultLimits(t.Context()); err != nil {
		t.Fatal(err)
	}
	logs := &lockedBuffer{}
	e, err := api.New(api.Config{
		Store:    st,
		Logger:   slog.New(slog.NewJSONHandler(logs, &slog.HandlerOptions{Level: slog.LevelDebug})),
		Registry: prometheus.NewRegistry(),
	})
	if err != nil {
		t.Fatal(err)
	}
	a := &shelfAPI{t: t, echo: e, store: st, dbURL: dbURL, logs: logs}
	a.staff = a.mint("kim", domain.RoleStaff)
	a.owner = a.mint("ada", domain.RoleMember)
	a.other = a.mint("bo", domain.RoleMember)
	// Routes a test adds to a.echo must be registered before serving
	// starts, so the server starts on first use.
	return a
}

func (a *shelfAPI) mint(name string, role domain.Role) string {
	a.t.Helper()
	secret, err := a.store.CreateToken(context.Background(), "test", name, role)
	if err != nil {
		a.t.Fatal(err)
	}
	return secret
}

func (a *shelfAPI) url(path string) string {
	if a.srv == nil {
		a.srv = httptest.NewServer(a.echo)
		a.t.Cleanup(a.srv.Close)
	}
	return a.srv.URL + path
}

// reply is a response with its body read.
type reply struct {
	status int
	header http.Header
	body   []byte
}

func (r reply) decode(t *testing.T, v any) {
	t.Helper()
	if err := json.Unmarshal(r.body, v); err != nil {
		t.Fatalf("decode %s: %v", r.body, err)
	}
}

// do sends a request; body may be nil, a string sent as is, or a value
// encoded as JSON. headers are name, value pairs.
func (a *shelfAPI) do(method, path, token string, body any, headers ...string) reply {
	a.t.Helper()
	var r io.Reader
	switch b := body.(type) {
	case nil:
	case string:
		r = strings.NewReader(b)
	case io.Reader:
		r = b
	default:
		raw, err := json.Marshal(b)
		if err != nil {
			a.t.Fatal(err)
		}
		r = bytes.NewReader(raw)
	}
	req, err := http.NewRequest(method, a.url(path), r)
	if err != nil {
		a.t.Fatal(err)
	}
	if body != nil {
		req.Header.Set("Content-Type", "application/json")
	}
	if token != "" {
		req.Header.Set("Authorization", "Bearer "+token)
	}
	for i := 0; i+1 < len(headers); i += 2 {
		req.Header.Set(headers[i], headers[i+1])
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		a.t.Fatalf("%s %s: %v", method, path, err)
	}
	defer resp.Body.Close()
	raw, err := io.ReadAll(resp.Body)
	if err != nil {
		a.t.Fatal(err)
	}
	return reply{status: resp.StatusCode, header: resp.Header, body: raw}
}

// problemDoc is the RFC 9457 body as a client reads it.
type problemDoc struct {
	Type      string                `json:"type"`
	Title     string                `json:"title"`
	Status    int                   `json:"status"`
	Detail    string                `json:"detail"`
	Instance  string                `json:"instance"`
	RequestID string                `json:"request_id"`
	Errors    []domain.FieldProblem `json:"errors"`
	Quota     string                `json:"quota"`
}

// wantProblem checks that r is a problem document of kind with status,
// and returns it.
func wantProblem(t *testing.T, r reply, status int, kind string) problemDoc {
	t.Helper()
	if r.status != status {
		t.Errorf("status %d, want %d (body %s)", r.status, status, r.body)
	}
	if ct := r.header.Get("Content-Type"); ct != "application/problem+json" {
		t.Errorf("Content-Type %q, want application/problem+json", ct)
	}
	var p problemDoc
	if err := json.Unmarshal(r.body, &p); err != nil {
		t.Fatalf("problem body %s: %v", r.body, err)
	}
	if p.Type != api.ProblemTypePrefix+kind || p.Status != status || p.Title == "" {
		t.Errorf("problem %+v, want type %s%s and status %d with a title", p, api.ProblemTypePrefix, kind, status)
	}
	if status == http.StatusUnauthorized && !strings.HasPrefix(r.header.Get("WWW-Authenticate"), "Bearer") {
		t.Errorf("401 with WWW-Authenticate %q, want the Bearer scheme", r.header.Get("WWW-Authenticate"))
	}
	if status == http.StatusMethodNotAllowed && r.header.Get("Allow") == "" {
		t.Error("405 without Allow")
	}
	if id := r.header.Get(echo.HeaderXRequestID); id == "" || p.RequestID != id {
		t.Errorf("problem request_id %q, response header %q: want the same, non-empty", p.RequestID, id)
	}
	return p
}

func pointersOf(p problemDoc) []string {
	var out []string
	for _, e := range p.Errors {
		out = append(out, e.Pointer)
	}
	return out
}

// component is a valid creation body; extra fields are merged in.
func component(name, kind string, extra ...any) map[string]any {
	c := map[string]any{"name": name, "kind": kind, "bin": "T1", "quantity": 1, "notes": "staff only: " + name}
	for i := 0; i+1 < len(extra); i += 2 {
		c[extra[i].(string)] = extra[i+1]
	}
	return c
}

// created posts a component and returns it as the API answered.
func (a *shelfAPI) created(token string, body map[string]any) domain.Component {
	a.t.Helper()
	r := a.do(http.MethodPost, "/v1/components", token, body)
	if r.status != http.StatusCreated {
		a.t.Fatalf("create: %d %s", r.status, r.body)
	}
	var c domain.Component
	r.decode(a.t, &c)
	return c
}
