package api_test

import (
	"net/http"
	"strings"
	"testing"
)

// TestPublicRoutesIgnoreCredentials sends Authorization headers that are
// no valid bearer token (a proxy's Basic auth, another scheme, an unknown
// or empty token) to every kind of route. Public routes answer as they do
// without the header; routes that need a token answer 401 with the Bearer
// challenge (RFC 9110 section 11.6.1), and so does the inline review,
// which uses a bearer token when one is sent. Every answer carries the
// security headers.
func TestPublicRoutesIgnoreCredentials(t *testing.T) {
	a := startShelfAPI(t)
	a.created(a.owner, component("Kiosk lamp", "light"))
	review := `{"format": 1, "name": "Inline", "nodes": [{"id": "bench", "type": "supply", "output_v": 5, "max_a": 1}]}`
	headers := []string{"Basic YWRhOnB3", "Negotiate YWJj", "Bearer wsh_" + strings.Repeat("A", 43), "Bearer", "Bearer " + strings.Repeat("x", 300)}
	routes := []struct {
		method, path string
		body         any
		public       bool
		want         int // the status without any Authorization header, for public routes
	}{
		{"GET", "/healthz", nil, true, 200},
		{"GET", "/v1/shelf", nil, true, 200},
		{"GET", "/shelf", nil, true, 200},
		{"GET", "/shelf/1", nil, true, 200},
		{"GET", "/reports/no-such-report", nil, true, 404},
		{"GET", "/assets/site.css", nil, true, 200},
		{"GET", "/openapi.yaml", nil, true, 200},
		{"POST", "/v1/reviews", review, true, 200}, // only for headers that are no bearer token: see below
		{"GET", "/v1/components", nil, false, 401},
		{"GET", "/v1/designs", nil, false, 401},
		{"GET", "/v1/limits", nil, false, 401},
		{"PUT", "/v1/limits", `{}`, false, 401},
	}
	for _, rt := range routes {
		for _, h := range headers {
			r := a.do(rt.method, rt.path, "", rt.body, "Authorization", h)
			if rt.path == "/v1/reviews" && strings.HasPrefix(h, "Bearer") {
				// The inline review uses a bearer token (it lifts the
				// anonymous rate limit), so a bad one is refused there.
				wantProblem(t, r, http.StatusUnauthorized, "unauthorized")
				continue
			}
			if r.status != rt.want {
				t.Errorf("%s %s with Authorization %.20q: %d, want %d (%s)", rt.method, rt.path, h, r.status, rt.want, r.body)
			}
			if !rt.public {
				wantProblem(t, r, http.StatusUnauthorized, "unauthorized")
			}
			if r.header.Get("X-Content-Type-Options") != "nosniff" || !strings.Contains(r.header.Get("Content-Security-Policy"), "frame-ancestors 'none'") {
				t.Errorf("%s %s with Authorization %.20q: no security headers: %v", rt.method, rt.path, h, r.header)
			}
		}
	}
	// A valid token still works where it is needed, and the pages keep
	// their own policy, which lets their styles load.
	if r := a.do(http.MethodGet, "/v1/components", a.owner, nil); r.status != http.StatusOK {
		t.Errorf("components with a valid token: %d", r.status)
	}
	if csp := a.do(http.MethodGet, "/shelf", "", nil).header.Get("Content-Security-Policy"); !strings.Contains(csp, "style-src 'self'") {
		t.Errorf("kiosk policy %q, want the pages' own", csp)
	}
	// Errors outside any page route carry the headers too.
	r := a.do(http.MethodGet, "/no/such/route", "", nil)
	if r.status != http.StatusNotFound || r.header.Get("X-Content-Type-Options") != "nosniff" {
		t.Errorf("unknown route: %d, headers %v", r.status, r.header)
	}
}
