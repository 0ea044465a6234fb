package api_test

import (
	"fmt"
	"net/http"
	"strings"
	"testing"
)

// Every route that takes a body reads it through the one strict JSON
// configuration: a name given twice, or a known name in another case, is
// refused with a problem naming it, never taken as the last or the
// nearest match.
func TestEveryBodyRouteRefusesRepeatedAndMiscasedNames(t *testing.T) {
	a := startShelfAPI(t)
	c := a.created(a.owner, component("Target motor", "motor"))
	d := a.do(http.MethodPost, "/v1/designs", a.owner, `{"format": 1, "name": "Desk fan", "nodes": [
		{"id": "usb", "type": "supply", "output_v": 5, "max_a": 1},
		{"id": "fan", "type": "load", "current_a": 0.2, "feed": {"from": "usb", "wire": {"gauge": "24AWG", "length_m": 0.5}}}]}`)
	if d.status != http.StatusCreated {
		t.Fatalf("create design: %d %s", d.status, d.body)
	}
	var design struct {
		ID int64 `json:"id"`
	}
	d.decode(t, &design)
	routes := []struct{ method, path string }{
		{http.MethodPost, "/v1/components"},
		{http.MethodPut, fmt.Sprintf("/v1/components/%d", c.ID)},
		{http.MethodPatch, fmt.Sprintf("/v1/components/%d", c.ID)},
		{http.MethodPost, fmt.Sprintf("/v1/components/%d/measurements", c.ID)},
		{http.MethodPost, "/v1/designs"},
		{http.MethodPut, fmt.Sprintf("/v1/designs/%d", design.ID)},
		{http.MethodPatch, fmt.Sprintf("/v1/designs/%d", design.ID)},
		{http.MethodPost, "/v1/reviews"},
		{http.MethodPut, "/v1/limits"},
	}
	for _, body := range []struct{ json, pointer string }{
		{`{"name": "a", "name": "b"}`, "/name"},
		{`{"NAME": "a"}`, "/NAME"},
	} {
		for _, rt := range routes {
			r := a.do(rt.method, rt.path, a.staff, body.json, "If-Match", "*")
			if r.status < 400 || r.status >= 500 {
				t.Errorf("%s to %s %s: %d, want 4xx", body.json, rt.method, rt.path, r.status)
				continue
			}
			if !strings.Contains(string(r.body), `"pointer":"`+body.pointer+`"`) {
				t.Errorf("%s to %s %s: %d %s, want a problem at %s", body.json, rt.method, rt.path, r.status, r.body, body.pointer)
			}
		}
	}
}

// A body is JSON only when it says so: text, forms and images are 415,
// whatever they hold; a charset parameter and a merge patch are fine.
func TestBodiesMustBeJSON(t *testing.T) {
	a := startShelfAPI(t)
	c := a.created(a.owner, component("Target motor", "motor"))
	body := `{"name": "Fan", "kind": "motor"}`
	for _, tt := range []struct {
		method, path, contentType string
		want                      int
	}{
		{http.MethodPost, "/v1/components", "text/plain", http.StatusUnsupportedMediaType},
		{http.MethodPost, "/v1/components", "application/x-www-form-urlencoded", http.StatusUnsupportedMediaType},
		{http.MethodPost, "/v1/components", "image/png", http.StatusUnsupportedMediaType},
		{http.MethodPost, "/v1/components", "", http.StatusUnsupportedMediaType},
		{http.MethodPost, "/v1/reviews", "text/plain", http.StatusUnsupportedMediaType},
		{http.MethodPost, "/v1/designs", "multipart/form-data; boundary=x", http.StatusUnsupportedMediaType},
		{http.MethodPost, "/v1/components", "application/json; charset=utf-8", http.StatusCreated},
		{http.MethodPatch, fmt.Sprintf("/v1/components/%d", c.ID), "application/merge-patch+json", http.StatusOK},
	} {
		b := body
		if tt.method == http.MethodPatch {
			b = `{"quantity": 3}`
		}
		r := a.do(tt.method, tt.path, a.staff, strings.NewReader(b), "Content-Type", tt.contentType, "If-Match", "*")
		if r.status != tt.want {
			t.Errorf("%s %s as %q: %d %s, want %d", tt.method, tt.path, tt.contentType, r.status, r.body, tt.want)
		}
	}
}
