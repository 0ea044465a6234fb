package api_test

import (
	"context"
	"fmt"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"net/url"
	"strings"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
	"wattshelf/domain"
	"wattshelf/domain/store/storetest"
)

// hostileText is text an attacker would put in a filter: SQL quoting and
// comments, LIKE wildcards, a statement that would stall the database,
// parameter markers, a NUL byte, invalid UTF-8 and a very long word.
func hostileText() []string {
	return []string{
		`'`, `''`, `' OR '1'='1`, `'; DROP TABLE components; --`, `") OR ("1"="1`,
		`%`, `_`, `%%`, `\`, `\'`, `\\%`, `$1`, `'; SELECT pg_sleep(5); --`,
		"a\x00b", "\xff\xfe", "\u202e", `*/ OR 1=1 /*`, strings.Repeat("x", 5000),
	}
}

// TestSQLMetacharactersInEveryFilterAreInert sends hostile text in every
// query parameter and path segment the API reads. Each answer is a result
// or a 4xx problem, never a 5xx, and none takes long; text search finds
// the one part whose name holds the text literally; the tables are intact.
func TestSQLMetacharactersInEveryFilterAreInert(t *testing.T) {
	a := startShelfAPI(t)
	literal := `Robert'); DROP TABLE components;-- 100%_off \ motor`
	trap := a.created(a.owner, component(literal, "motor", "bin", `B'1"%_\`))
	plain := a.created(a.owner, component("Plain lamp", "light", "bin", "L1"))
	design := a.do(http.MethodPost, "/v1/designs", a.owner, `{"format": 1, "name": "x'; --", "nodes": [
		{"id": "bench", "type": "supply", "output_v": 5, "max_a": 1},
		{"id": "lamp", "type": "load", "min_v": 4.5, "max_v": 5.5, "current_a": 0.1,
		 "feed": {"from": "bench", "wire": {"gauge": "24AWG", "length_m": 0.2}}}]}`)
	if design.status != http.StatusCreated {
		t.Fatalf("create design: %d %s", design.status, design.body)
	}
	var d struct {
		ID int64 `json:"id"`
	}
	design.decode(t, &d)

	send := func(path, token string) reply {
		t.Helper()
		start := time.Now()
		r := a.do(http.MethodGet, path, token, nil)
		if took := time.Since(start); took > 3*time.Second {
			t.Errorf("GET %.80s took %s", path, took)
		}
		if r.status >= 500 {
			t.Errorf("GET %.80s: %d %s", path, r.status, r.body)
		}
		if r.status >= 400 && r.status != http.StatusNotFound && r.status != http.StatusBadRequest {
			t.Errorf("GET %.80s: %d, want a result, 400 or 404", path, r.status)
		}
		return r
	}
	for _, text := range hostileText() {
		q := url.QueryEscape(text)
		for _, path := range []string{
			"/v1/components?q=" + q, "/v1/components?bin=" + q, "/v1/components?kind=" + q,
			"/v1/components?fits_v=" + q, "/v1/components?limit=" + q, "/v1/components?cursor=" + q,
			"/v1/shelf?limit=" + q, "/v1/shelf?cursor=" + q,
			"/v1/designs?owner=" + q, "/v1/designs?limit=" + q, "/v1/designs?cursor=" + q,
			fmt.Sprintf("/v1/designs/%d/reviews?cursor=%s", d.ID, q), fmt.Sprintf("/v1/designs/%d/reviews?limit=%s", d.ID, q),
			"/v1/components/" + url.PathEscape(text), "/v1/designs/" + url.PathEscape(text),
			"/v1/limits/" + url.PathEscape(text), "/v1/components/" + url.PathEscape(text) + "/measurements",
			"/reports/" + url.PathEscape(text),
		} {
			send(path, a.staff)
		}
	}

	// Search takes the text literally: the wildcard-laden name is found by
	// itself, and its wildcards match nothing else.
	for _, probe := range []string{literal, "100%_off", `\ motor`, "'); DROP"} {
		r := send("/v1/components?q="+url.QueryEscape(probe), a.staff)
		var page struct {
			Items []domain.Component `json:"items"`
		}
		r.decode(t, &page)
		if len(page.Items) != 1 || page.Items[0].ID != trap.ID {
			t.Errorf("q=%q found %d items, want only component %d", probe, len(page.Items), trap.ID)
		}
	}
	r := send("/v1/components?bin="+url.QueryEscape(`B'1"%_\`), a.staff)
	var page struct {
		Items []domain.Component `json:"items"`
	}
	r.decode(t, &page)
	if len(page.Items) != 1 || page.Items[0].ID != trap.ID {
		t.Errorf("bin with quotes and wildcards found %d items, want the one part in it", len(page.Items))
	}
	for _, c := range []domain.Component{trap, plain} {
		if got := a.do(http.MethodGet, fmt.Sprintf("/v1/components/%d", c.ID), a.staff, nil); got.status != http.StatusOK {
			t.Errorf("component %d after the hostile queries: %d", c.ID, got.status)
		}
	}
}

// TestMalformedTokensAreRefused sends Authorization headers that are not
// a live bearer token: each is 401 on a private route and ignored on a
// public one.
func TestMalformedTokensAreRefused(t *testing.T) {
	a := startShelfAPI(t)
	live := a.owner
	for name, header := range map[string]string{
		"scheme only":          "Bearer",
		"empty secret":         "Bearer ",
		"blank secret":         "Bearer    ",
		"basic auth":           "Basic YWRhOnNlY3JldA==",
		"other scheme":         "Token " + live,
		"secret one short":     "Bearer " + live[:len(live)-1],
		"secret one long":      "Bearer " + live + "A",
		"secret changed":       "Bearer " + live[:len(live)-1] + flip(live[len(live)-1]),
		"overlong":             "Bearer wsh_" + strings.Repeat("A", 4000),
		"invalid UTF-8":        "Bearer wsh_\xff\xfe\xfd",
		"SQL in the secret":    "Bearer ' OR '1'='1",
		"two tokens":           "Bearer " + live + " " + live,
		"token of no one":      "Bearer wsh_" + strings.Repeat("Q", 43),
		"digest not secret":    "Bearer " + strings.Repeat("ab", 32),
		"prefix without token": "Bearer wsh_",
	} {
		t.Run(name, func(t *testing.T) {
			wantProblem(t, a.do(http.MethodGet, "/v1/components", "", nil, "Authorization", header), http.StatusUnauthorized, "unauthorized")
			if r := a.do(http.MethodGet, "/v1/shelf", "", nil, "Authorization", header); r.status != http.StatusOK {
				t.Errorf("public shelf: %d, want 200", r.status)
			}
		})
	}
	// The live token still works after all that.
	if r := a.do(http.MethodGet, "/v1/components", live, nil); r.status != http.StatusOK {
		t.Errorf("live token: %d", r.status)
	}
}

func flip(b byte) string {
	if b == 'A' {
		return "B"
	}
	return "A"
}

// hostileBodies are JSON bodies built to exhaust a parser or to turn a
// small request into a huge answer.
func hostileBodies() map[string]string {
	return map[string]string{
		"deep arrays":  `{"name": ` + strings.Repeat("[", 1<<20) + strings.Repeat("]", 1<<20) + `}`,
		"deep objects": `{"name": "x", "kind": "motor", "x": ` + strings.Repeat(`{"a":`, 300000) + "1" + strings.Repeat("}", 300000) + `}`,
		"big array":    `{"nodes": [` + strings.Repeat("0,", 900000) + `0]}`,
		"over the cap": `{"name": "` + strings.Repeat("x", 3<<20) + `"}`,
	}
}

// TestDeeplyNestedAndHugeBodiesAreRefused sends every JSON-reading route
// the hostile bodies. Each is a 4xx problem of bounded size: a million
// bad elements must not come back as a million problems. (How fast they
// are refused is BenchmarkHostileBodies' business.)
func TestDeeplyNestedAndHugeBodiesAreRefused(t *testing.T) {
	a := startShelfAPI(t)
	c := a.created(a.owner, component("Target motor", "motor"))
	routes := []struct{ method, path string }{
		{http.MethodPost, "/v1/components"},
		{http.MethodPut, fmt.Sprintf("/v1/components/%d", c.ID)},
		{http.MethodPatch, fmt.Sprintf("/v1/components/%d", c.ID)},
		{http.MethodPost, fmt.Sprintf("/v1/components/%d/measurements", c.ID)},
		{http.MethodPost, "/v1/designs"},
		{http.MethodPost, "/v1/reviews"},
		{http.MethodPut, "/v1/limits"},
	}
	for name, body := range hostileBodies() {
		for _, rt := range routes {
			r := a.do(rt.method, rt.path, a.staff, body, "If-Match", "*")
			if r.status < 400 || r.status >= 500 {
				t.Errorf("%s to %s %s: %d, want 4xx", name, rt.method, rt.path, r.status)
			}
			if ct := r.header.Get("Content-Type"); ct != "application/problem+json" {
				t.Errorf("%s to %s %s: Content-Type %q", name, rt.method, rt.path, ct)
			}
			if len(r.body) > 64<<10 {
				t.Errorf("%s to %s %s: a %d-byte answer", name, rt.method, rt.path, len(r.body))
			}
			var p problemDoc
			r.decode(t, &p)
			if len(p.Errors) > domain.MaxProblems+1 {
				t.Errorf("%s to %s %s: %d problems listed", name, rt.method, rt.path, len(p.Errors))
			}
		}
	}
	if r := a.do(http.MethodGet, fmt.Sprintf("/v1/components/%d", c.ID), a.staff, nil); r.status != http.StatusOK || r.header.Get("ETag") != `"1"` {
		t.Errorf("the target changed: %d %s", r.status, r.header.Get("ETag"))
	}
}

// benchRouter is the real router on a database of the benchmark's own,
// with a member's token so the body is what gets refused.
func benchRouter(b *testing.B) (http.Handler, string) {
	b.Helper()
	st, _ := storetest.NewStore(b)
	router, err := api.New(api.Config{Store: st, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)), Registry: prometheus.NewRegistry()})
	if err != nil {
		b.Fatal(err)
	}
	token, err := st.CreateToken(context.Background(), "bench", "bench-member", domain.RoleMember)
	if err != nil {
		b.Fatal(err)
	}
	return router, token
}

// BenchmarkHostileBodies measures how long the router takes to refuse
// each hostile body on the design routes, whose decoder walks every token.
func BenchmarkHostileBodies(b *testing.B) {
	for name, body := range hostileBodies() {
		for _, path := range []string{"/v1/reviews", "/v1/components"} {
			b.Run(name+" "+path, func(b *testing.B) {
				router, token := benchRouter(b)
				for b.Loop() {
					rec := httptest.NewRecorder()
					req := httptest.NewRequest(http.MethodPost, path, strings.NewReader(body))
					req.Header.Set("Content-Type", "application/json")
					req.Header.Set("Authorization", "Bearer "+token)
					router.ServeHTTP(rec, req)
					if rec.Code < 400 || rec.Code >= 500 {
						b.Fatalf("%d", rec.Code)
					}
				}
			})
		}
	}
}

// TestNULInBodiesIsAValidationProblem sends the one character PostgreSQL
// text cannot hold in every free-text field a body can carry: each is a
// 422 naming the field, never a 500 from the database.
func TestNULInBodiesIsAValidationProblem(t *testing.T) {
	a := startShelfAPI(t)
	c := a.created(a.owner, component("Target motor", "motor"))
	design := func(name string) string {
		return `{"format": 1, "name": "` + name + `", "nodes": [
		{"id": "bench", "type": "supply", "output_v": 5, "max_a": 1},
		{"id": "lamp", "type": "load", "min_v": 4.5, "max_v": 5.5, "current_a": 0.1,
		 "feed": {"from": "bench", "wire": {"gauge": "24AWG", "length_m": 0.2}}}]}`
	}
	for _, tt := range []struct {
		method, path, body, pointer string
	}{
		{http.MethodPost, "/v1/components", `{"name": "a\u0000b", "kind": "motor"}`, "/name"},
		{http.MethodPost, "/v1/components", `{"name": "ok", "kind": "motor", "bin": "\u0000"}`, "/bin"},
		{http.MethodPost, "/v1/components", `{"name": "ok", "kind": "regulator", "topology": "buck\u0000"}`, "/topology"},
		{http.MethodPut, fmt.Sprintf("/v1/components/%d", c.ID), `{"name": "ok", "kind": "motor", "notes": "x\u0000"}`, "/notes"},
		{http.MethodPatch, fmt.Sprintf("/v1/components/%d", c.ID), `{"description": "x\u0000"}`, "/description"},
		{http.MethodPost, fmt.Sprintf("/v1/components/%d/measurements", c.ID), `{"voltage_v": 6, "current_a": 0.5, "note": "\u0000"}`, "/note"},
		{http.MethodPost, "/v1/designs", design(`a\u0000b`), "/name"},
	} {
		r := a.do(tt.method, tt.path, a.staff, tt.body, "If-Match", "*")
		p := wantProblem(t, r, http.StatusUnprocessableEntity, "validation")
		if !strings.Contains(strings.Join(pointersOf(p), " "), tt.pointer) {
			t.Errorf("%s %s: problems at %v, want %s", tt.method, tt.path, pointersOf(p), tt.pointer)
		}
	}
}
