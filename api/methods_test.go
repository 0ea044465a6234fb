package api_test

import (
	"fmt"
	"net/http"
	"slices"
	"strings"
	"testing"
)

// TestHeadWhereverGetWorks sends HEAD to every kind of GET route: the
// answer is the GET's status and header fields without content (RFC 9110
// section 9.3.2).
func TestHeadWhereverGetWorks(t *testing.T) {
	a := startShelfAPI(t)
	c := a.created(a.owner, component("Head lamp", "light"))
	for _, tt := range []struct{ path, token string }{
		{"/healthz", ""}, {"/readyz", ""}, {"/metrics", ""}, {"/openapi.yaml", ""},
		{"/v1/shelf", ""}, {"/v1/shelf?limit=1", ""}, {"/shelf", ""}, {fmt.Sprintf("/shelf/%d", c.ID), ""},
		{fmt.Sprintf("/shelf/%d/qr.svg", c.ID), ""}, {"/assets/site.css", ""}, {"/reports/nothing-here", ""},
		{"/v1/components", a.owner}, {fmt.Sprintf("/v1/components/%d", c.ID), a.owner},
		{"/v1/designs", a.owner}, {"/v1/limits", a.owner}, {"/v1/components", ""}, {"/no/such/route", ""},
	} {
		get := a.do(http.MethodGet, tt.path, tt.token, nil)
		head := a.do(http.MethodHead, tt.path, tt.token, nil)
		if head.status != get.status || len(head.body) != 0 {
			t.Errorf("HEAD %s: %d with %d bytes; GET is %d", tt.path, head.status, len(head.body), get.status)
		}
		for _, field := range []string{"Content-Type", "ETag", "Cache-Control", "Content-Security-Policy"} {
			if head.header.Get(field) != get.header.Get(field) {
				t.Errorf("HEAD %s: %s %q, GET has %q", tt.path, field, head.header.Get(field), get.header.Get(field))
			}
		}
	}
}

// TestWrongMethodIs405WithAllow sends methods a known path does not take:
// each is 405 with Allow naming the methods it does take, HEAD wherever
// GET is (RFC 9110 section 15.5.6: a 405 must carry Allow), before any
// token is asked for. Unknown paths stay 404.
func TestWrongMethodIs405WithAllow(t *testing.T) {
	a := startShelfAPI(t)
	c := a.created(a.owner, component("Allowed lamp", "light"))
	item := fmt.Sprintf("/v1/components/%d", c.ID)
	tests := []struct {
		method, path, token string
		allow               []string
	}{
		{"DELETE", "/v1/shelf", "", []string{"GET", "HEAD", "OPTIONS"}},
		{"PUT", "/v1/components", "", []string{"GET", "HEAD", "OPTIONS", "POST"}},
		{"PUT", "/v1/components", a.owner, []string{"GET", "HEAD", "OPTIONS", "POST"}},
		{"POST", item, a.owner, []string{"DELETE", "GET", "HEAD", "OPTIONS", "PATCH", "PUT"}},
		{"BREW", item, a.owner, []string{"DELETE", "GET", "HEAD", "OPTIONS", "PATCH", "PUT"}},
		{"DELETE", item + "/measurements", a.owner, []string{"GET", "HEAD", "OPTIONS", "POST"}},
		{"PATCH", "/v1/designs", "", []string{"GET", "HEAD", "OPTIONS", "POST"}},
		{"PUT", "/v1/designs/1/reviews", a.owner, []string{"GET", "HEAD", "OPTIONS", "POST"}},
		{"GET", "/v1/reviews", "", []string{"OPTIONS", "POST"}},
		{"HEAD", "/v1/reviews", "", []string{"OPTIONS", "POST"}},
		{"POST", "/healthz", "", []string{"GET", "HEAD", "OPTIONS"}},
		{"DELETE", "/shelf", "", []string{"GET", "HEAD", "OPTIONS"}},
	}
	for _, tt := range tests {
		r := a.do(tt.method, tt.path, tt.token, nil)
		if tt.method != http.MethodHead {
			wantProblem(t, r, http.StatusMethodNotAllowed, "method-not-allowed")
		} else if r.status != http.StatusMethodNotAllowed {
			t.Errorf("HEAD %s: %d, want 405", tt.path, r.status)
		}
		var allow []string
		for m := range strings.SplitSeq(r.header.Get("Allow"), ",") {
			allow = append(allow, strings.TrimSpace(m))
		}
		slices.Sort(allow)
		if !slices.Equal(allow, tt.allow) {
			t.Errorf("%s %s: Allow %v, want %v", tt.method, tt.path, allow, tt.allow)
		}
	}
	// OPTIONS lists the same methods (RFC 9110 section 9.3.7).
	if r := a.do(http.MethodOptions, item, "", nil); r.status != http.StatusNoContent || !strings.Contains(r.header.Get("Allow"), "HEAD") {
		t.Errorf("OPTIONS %s: %d, Allow %q; want 204 listing HEAD", item, r.status, r.header.Get("Allow"))
	}
	for _, path := range []string{item + "/nothing", "/v1/designs/1/nothing", "/v1/components/x/y/z"} {
		wantProblem(t, a.do(http.MethodGet, path, a.owner, nil), http.StatusNotFound, "not-found")
	}
}
