package api_test

import (
	"fmt"
	"net/http"
	"regexp"
	"strings"
	"testing"
)

// TestMetricsLabelsStayBounded sends requests with made-up methods, long
// ones too, to known and unknown paths, and reads /metrics: every label a
// client can sway takes a value from a fixed set, so the exposition does
// not grow with what clients send.
func TestMetricsLabelsStayBounded(t *testing.T) {
	a := startShelfAPI(t)
	paths := []string{"/v1/shelf", "/v1/components/7", "/v1/designs/3/reviews", "/shelf/4", "/no/such/place"}
	attack := func(round int) {
		for i := range 10 {
			method := fmt.Sprintf("PROBE%d%d%s", round, i, strings.Repeat("X", 2000))
			for j, p := range paths {
				a.do(method, fmt.Sprintf("%s/r%di%dj%d", p, round, i, j), "", nil)
				a.do(method, p, "", nil)
			}
		}
	}
	attack(1)
	a.do(http.MethodGet, "/metrics", "", nil) // so the scrape's own series exist before counting
	before := a.do(http.MethodGet, "/metrics", "", nil)
	attack(2)
	after := a.do(http.MethodGet, "/metrics", "", nil)

	methods, routes := labelValues(string(after.body), "method"), labelValues(string(after.body), "route")
	known := map[string]bool{"GET": true, "HEAD": true, "POST": true, "PUT": true, "PATCH": true,
		"DELETE": true, "OPTIONS": true, "other": true} // RFC 9110 section 9 and RFC 5789, and one for the rest
	for m := range methods {
		if !known[m] {
			t.Errorf("method label %.40q is not one of the fixed set", m)
		}
	}
	for r := range routes {
		if strings.Contains(r, "PROBE") || regexp.MustCompile(`r\d+i\d+j\d+`).MatchString(r) {
			t.Errorf("route label %.60q carries what the client sent", r)
		}
	}
	// The second round used new methods and new paths, yet added no series.
	if strings.Count(string(before.body), "\n") != strings.Count(string(after.body), "\n") {
		t.Errorf("/metrics grew from %d to %d lines with new methods and paths",
			strings.Count(string(before.body), "\n"), strings.Count(string(after.body), "\n"))
	}
}

// labelValues collects the values of one label across the HTTP series.
func labelValues(exposition, label string) map[string]bool {
	re := regexp.MustCompile(`^wattshelf_http_\w+\{.*?\b` + label + `="([^"]*)"`)
	out := map[string]bool{}
	for line := range strings.Lines(exposition) {
		if m := re.FindStringSubmatch(line); m != nil {
			out[m[1]] = true
		}
	}
	return out
}
