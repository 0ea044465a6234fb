package api_test

import (
	"fmt"
	"net/http"
	"strings"
	"testing"
)

// TestAccessMatrix runs every route of the shelf API as each kind of
// caller against a component owned by the member "ada", and checks the
// status, and the problem type of every refusal.
func TestAccessMatrix(t *testing.T) {
	a := startShelfAPI(t)
	callers := []struct {
		name  string
		token string
	}{
		{"no token", ""},
		{"owner", a.owner},
		{"other member", a.other},
		{"staff", a.staff},
	}
	// Statuses in the order of callers above.
	routes := []struct {
		method, path string // %d stands for the component's id
		body         string
		want         [4]int
	}{
		{"GET", "/v1/shelf", "", [4]int{200, 200, 200, 200}},
		{"GET", "/v1/components", "", [4]int{401, 200, 200, 200}},
		{"POST", "/v1/components", `{"name": "Spare lamp", "kind": "light"}`, [4]int{401, 201, 201, 201}},
		{"GET", "/v1/components/%d", "", [4]int{401, 200, 200, 200}},
		{"PUT", "/v1/components/%d", `{"name": "Relabelled", "kind": "motor"}`, [4]int{401, 200, 403, 200}},
		{"PATCH", "/v1/components/%d", `{"quantity": 9}`, [4]int{401, 200, 403, 200}},
		{"DELETE", "/v1/components/%d", "", [4]int{401, 204, 403, 204}},
		// Anyone with a token may record a bench reading of any part.
		{"POST", "/v1/components/%d/measurements", `{"voltage_v": 6, "current_a": 0.5}`, [4]int{401, 201, 201, 201}},
		{"GET", "/v1/components/%d/measurements", "", [4]int{401, 200, 200, 200}},
	}
	for _, rt := range routes {
		for i, who := range callers {
			t.Run(fmt.Sprintf("%s %s as %s", rt.method, rt.path, who.name), func(t *testing.T) {
				// A fresh record per case, so a delete cannot change the next case.
				c := a.created(a.owner, component("Vacuum-cleaner motor", "motor"))
				path := rt.path
				if strings.Contains(path, "%d") {
					path = fmt.Sprintf(path, c.ID)
				}
				var body any
				if rt.body != "" {
					body = rt.body
				}
				r := a.do(rt.method, path, who.token, body, "If-Match", `"1"`)
				want := rt.want[i]
				switch want {
				case http.StatusUnauthorized:
					wantProblem(t, r, want, "unauthorized")
				case http.StatusForbidden:
					wantProblem(t, r, want, "forbidden")
				default:
					if r.status != want {
						t.Errorf("status %d, want %d: %s", r.status, want, r.body)
					}
				}
				// Refused writes leave the record as it was.
				if want >= 400 {
					after := a.do("GET", fmt.Sprintf("/v1/components/%d", c.ID), a.staff, nil)
					if after.status != http.StatusOK || after.header.Get("ETag") != `"1"` {
						t.Errorf("refused %s changed the record: %d, ETag %s", rt.method, after.status, after.header.Get("ETag"))
					}
				}
			})
		}
	}
}

// TestRevokedTokenIsRefused checks that revocation takes effect on the
// next request to a route that needs a token; a public route ignores the
// token and answers as it would anyone.
func TestRevokedTokenIsRefused(t *testing.T) {
	a := startShelfAPI(t)
	token := a.mint("cy", "member")
	if r := a.do("GET", "/v1/components", token, nil); r.status != http.StatusOK {
		t.Fatalf("live token: %d", r.status)
	}
	if _, err := a.store.RevokeTokens(t.Context(), "test", "cy"); err != nil {
		t.Fatal(err)
	}
	wantProblem(t, a.do("GET", "/v1/components", token, nil), http.StatusUnauthorized, "unauthorized")
	wantProblem(t, a.do("GET", "/v1/designs", token, nil), http.StatusUnauthorized, "unauthorized")
	if r := a.do("GET", "/v1/shelf", token, nil); r.status != http.StatusOK {
		t.Errorf("public shelf with a revoked token: %d, want 200", r.status)
	}
	// Other members' tokens still work.
	if r := a.do("GET", "/v1/components", a.owner, nil); r.status != http.StatusOK {
		t.Errorf("another member after cy's revocation: %d", r.status)
	}
}
