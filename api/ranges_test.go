package api_test

import (
	"fmt"
	"net/http"
	"slices"
	"testing"
)

// TestNumbersPastTheirColumnAre400 sends numbers just past the range of
// the column each is looked up in: limits.version is a PostgreSQL integer
// (-2147483648 to 2147483647), ids are bigint (to 9223372036854775807);
// PostgreSQL documentation, section 8.1.1. Past the range is a 400 naming
// the parameter; the largest value in range is an ordinary miss.
func TestNumbersPastTheirColumnAre400(t *testing.T) {
	a := startShelfAPI(t)
	design := a.do(http.MethodPost, "/v1/designs", a.owner, `{"format": 1, "name": "Range probe", "nodes": [
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
	doc := `{"format": 1, "name": "Inline", "nodes": [{"id": "bench", "type": "supply", "output_v": 5, "max_a": 1}]}`
	stored := fmt.Sprintf("/v1/designs/%d/reviews", d.ID)

	tests := []struct {
		name, method, path, token string
		body                      any
		status                    int
		kind, pointer             string
	}{
		{"inline review, version past int4", "POST", "/v1/reviews?limits_version=2147483648", "", doc, 400, "bad-query", "/limits_version"},
		{"inline review, version far past int8", "POST", "/v1/reviews?limits_version=99999999999999999999", "", doc, 400, "bad-query", "/limits_version"},
		{"inline review, largest int4 version", "POST", "/v1/reviews?limits_version=2147483647", "", doc, 400, "bad-query", "/limits_version"},
		{"stored review, version past int4", "POST", stored + "?limits_version=2147483648", a.owner, nil, 400, "bad-query", "/limits_version"},
		{"limits version past int4", "GET", "/v1/limits/2147483648", a.owner, nil, 400, "bad-path", "/version"},
		{"limits version below int4", "GET", "/v1/limits/-2147483649", a.owner, nil, 400, "bad-path", "/version"},
		{"largest int4 limits version", "GET", "/v1/limits/2147483647", a.owner, nil, 404, "not-found", ""},
		{"component id past int8", "GET", "/v1/components/9223372036854775808", a.owner, nil, 400, "bad-path", "/id"},
		{"largest int8 component id", "GET", "/v1/components/9223372036854775807", a.owner, nil, 404, "not-found", ""},
		{"design id past int8", "POST", "/v1/designs/9223372036854775808/reviews", a.owner, nil, 400, "bad-path", "/id"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			p := wantProblem(t, a.do(tt.method, tt.path, tt.token, tt.body), tt.status, tt.kind)
			if tt.pointer != "" && !slices.Equal(pointersOf(p), []string{tt.pointer}) {
				t.Errorf("problems at %q, want [%s]", pointersOf(p), tt.pointer)
			}
		})
	}
}
