package api_test

import (
	"bytes"
	"fmt"
	"io"
	"net/http"
	"slices"
	"strings"
	"testing"

	"github.com/labstack/echo/v4"

	"wattshelf/api"
)

// TestProblemKinds sends one request per kind of client error and checks
// the status, the problem type and, for field problems, the pointers.
func TestProblemKinds(t *testing.T) {
	a := startShelfAPI(t)
	mine := a.created(a.owner, component("Tape-deck capstan motor", "motor"))
	staffs := a.created(a.staff, component("Bench fuse", "fuse"))
	minePath := fmt.Sprintf("/v1/components/%d", mine.ID)
	staffPath := fmt.Sprintf("/v1/components/%d", staffs.ID)
	valid := `{"name": "Reed switch", "kind": "sensor"}`

	// The body cap is 2 MiB: a body of exactly that size is read (and then
	// judged on its fields), one byte more is refused.
	head, tail := `{"name": "Long", "kind": "other", "description": "`, `"}`
	atCap := head + strings.Repeat("d", api.MaxBodyBytes-len(head)-len(tail)) + tail
	overCap := head + strings.Repeat("d", api.MaxBodyBytes+1-len(head)-len(tail)) + tail

	tests := []struct {
		name                string
		method, path, token string
		body                any
		headers             []string
		status              int
		kind                string
		pointers            []string // checked when not nil
	}{
		{"syntax error", "POST", "/v1/components", a.owner, `{"name": "x",, }`, nil, 400, "malformed", nil},
		{"not JSON at all", "POST", "/v1/components", a.owner, `name=x`, nil, 400, "malformed", nil},
		{"cut short", "POST", "/v1/components", a.owner, `{"name": "x", "kind": `, nil, 400, "malformed", nil},
		{"empty body", "POST", "/v1/components", a.owner, ``, nil, 400, "malformed", nil},
		{"trailing object", "POST", "/v1/components", a.owner, valid + ` {}`, nil, 400, "malformed", nil},
		{"trailing garbage", "POST", "/v1/components", a.owner, valid + `x`, nil, 400, "malformed", nil},
		{"trailing whitespace is fine", "POST", "/v1/components", a.owner, valid + " \n\t", nil, 201, "", nil},
		{"unknown field", "POST", "/v1/components", a.owner, `{"name": "x", "kind": "motor", "colour": "red"}`, nil, 422, "validation", []string{"/colour"}},
		{"unknown field needing escapes", "POST", "/v1/components", a.owner, `{"name": "x", "kind": "motor", "a/b~c": 1}`, nil, 422, "validation", []string{"/a~1b~0c"}},
		{"server-set field", "POST", "/v1/components", a.owner, `{"name": "x", "kind": "motor", "owner": "kim"}`, nil, 422, "validation", []string{"/owner"}},
		{"wrong type", "POST", "/v1/components", a.owner, `{"name": "x", "kind": "motor", "quantity": "three"}`, nil, 422, "validation", []string{"/quantity"}},
		{"wrong type, electrical field", "POST", "/v1/components", a.owner, `{"name": "x", "kind": "motor", "max_v": "12"}`, nil, 422, "validation", []string{"/max_v"}},
		{"fraction for a whole number", "POST", "/v1/components", a.owner, `{"name": "x", "kind": "motor", "quantity": 1.5}`, nil, 422, "validation", []string{"/quantity"}},
		{"array for an object", "POST", "/v1/components", a.owner, `[1, 2]`, nil, 422, "validation", []string{""}},
		{"invalid fields", "POST", "/v1/components", a.owner, `{"name": "", "kind": "robot", "max_v": 1500, "peak_a": 2000}`, nil, 422, "validation",
			[]string{"/name", "/kind", "/peak_a", "/max_v"}},
		{"body at the cap", "POST", "/v1/components", a.owner, atCap, nil, 422, "validation", []string{"/description"}},
		{"body over the cap", "POST", "/v1/components", a.owner, overCap, nil, 413, "too-large", nil},
		{"body over the cap, no length", "POST", "/v1/components", a.owner, io.MultiReader(strings.NewReader(overCap)), nil, 413, "too-large", nil},
		{"missing component", "GET", "/v1/components/999999", a.owner, nil, nil, 404, "not-found", nil},
		{"id that is no number", "GET", "/v1/components/seven", a.owner, nil, nil, 404, "not-found", nil},
		{"id of zero", "GET", "/v1/components/0", a.owner, nil, nil, 404, "not-found", nil},
		{"no such route", "GET", "/v1/no-such-thing", "", nil, nil, 404, "not-found", nil},
		{"wrong method", "DELETE", "/v1/shelf", "", nil, nil, 405, "method-not-allowed", nil},
		{"no token", "GET", "/v1/components", "", nil, nil, 401, "unauthorized", nil},
		{"unknown token", "GET", "/v1/components", "wsh_" + strings.Repeat("A", 43), nil, nil, 401, "unauthorized", nil},
		{"not a bearer token", "GET", "/v1/components", "", nil, []string{"Authorization", "Basic YWRhOnB3"}, 401, "unauthorized", nil},
		{"bearer without a token", "GET", "/v1/components", "", nil, []string{"Authorization", "Bearer"}, 401, "unauthorized", nil},
		{"oversized token", "GET", "/v1/components", strings.Repeat("x", 300), nil, nil, 401, "unauthorized", nil},
		{"bad token where one is needed", "GET", "/v1/designs", "wsh_nope", nil, nil, 401, "unauthorized", nil},
		{"member changes another's record", "PUT", minePath, a.other, valid, []string{"If-Match", `"1"`}, 403, "forbidden", nil},
		{"member deletes staff's record", "DELETE", staffPath, a.owner, nil, nil, 403, "forbidden", nil},
		{"stale If-Match", "PUT", minePath, a.owner, valid, []string{"If-Match", `"7"`}, 412, "precondition-failed", nil},
		{"If-Match that is no ETag of ours", "PUT", minePath, a.owner, valid, []string{"If-Match", `"abc"`}, 412, "precondition-failed", nil},
		{"no If-Match on PUT", "PUT", minePath, a.owner, valid, nil, 428, "precondition-required", nil},
		{"no If-Match on PATCH", "PATCH", minePath, a.owner, `{"quantity": 2}`, nil, 428, "precondition-required", nil},
		{"bad query", "GET", "/v1/components?limit=many", a.owner, nil, nil, 400, "bad-query", []string{"/limit"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			r := a.do(tt.method, tt.path, tt.token, tt.body, tt.headers...)
			if tt.kind == "" {
				if r.status != tt.status {
					t.Fatalf("status %d, want %d: %s", r.status, tt.status, r.body)
				}
				return
			}
			p := wantProblem(t, r, tt.status, tt.kind)
			if p.Instance != strings.Split(tt.path, "?")[0] {
				t.Errorf("instance %q, want the request path", p.Instance)
			}
			if tt.pointers != nil && !slices.Equal(pointersOf(p), tt.pointers) {
				t.Errorf("problems at %q, want %q", pointersOf(p), tt.pointers)
			}
			if r.status == http.StatusUnauthorized && !strings.Contains(p.Detail, "Bearer") {
				t.Errorf("401 detail %q does not say how to authenticate", p.Detail)
			}
		})
	}
}

// TestPanicIsAProblemWithoutTheStack registers a route that panics and
// checks the client gets a plain 500 problem while the log gets the stack.
func TestPanicIsAProblemWithoutTheStack(t *testing.T) {
	a := startShelfAPI(t)
	a.echo.GET("/test/panic", func(echo.Context) error {
		panic("the flux capacitor at 0xdeadbeef overheated")
	})
	r := a.do(http.MethodGet, "/test/panic", "", nil)
	p := wantProblem(t, r, http.StatusInternalServerError, "internal")
	for _, leak := range []string{"flux", "0xdeadbeef", "goroutine", ".go:"} {
		if bytes.Contains(r.body, []byte(leak)) {
			t.Errorf("client sees %q: %s", leak, r.body)
		}
	}
	logs := a.logs.String()
	for _, want := range []string{"panic while serving", "flux capacitor", "goroutine", p.RequestID} {
		if !strings.Contains(logs, want) {
			t.Errorf("log lacks %q:\n%s", want, logs)
		}
	}
	// The server keeps serving after a panic.
	if r := a.do(http.MethodGet, "/healthz", "", nil); r.status != http.StatusOK {
		t.Errorf("healthz after a panic: %d", r.status)
	}
}

// TestUnexpectedErrorsDoNotLeak checks that an error our code did not
// expect reaches the client as a bare 500 and the log in full.
func TestUnexpectedErrorsDoNotLeak(t *testing.T) {
	a := startShelfAPI(t)
	a.echo.GET("/test/fail", func(echo.Context) error {
		return fmt.Errorf("query failed: password=hunter2 host=db.internal")
	})
	r := a.do(http.MethodGet, "/test/fail", "", nil)
	wantProblem(t, r, http.StatusInternalServerError, "internal")
	if bytes.Contains(r.body, []byte("hunter2")) || bytes.Contains(r.body, []byte("db.internal")) {
		t.Errorf("client sees internals: %s", r.body)
	}
	if !strings.Contains(a.logs.String(), "db.internal") {
		t.Error("the internal error is not logged")
	}
}
