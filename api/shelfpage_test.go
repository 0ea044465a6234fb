package api_test

import (
	"net/http"
	"net/url"
	"slices"
	"strings"
	"testing"
)

// TestShelfPagesWalkTheWholeShelf reads the public shelf a page at a time
// and compares it with the whole shelf in one answer: same items, same
// order, nothing private, and the last page says there is no next.
func TestShelfPagesWalkTheWholeShelf(t *testing.T) {
	a := startShelfAPI(t)
	for _, c := range []struct{ name, bin string }{
		{"Gear motor", "M1"}, {"Fan motor", "M1"}, {"Fan motor", "M1"}, {"Buck board", "R1"},
		{"LED strip", ""}, {"Relay", "S1"}, {"Zener", "Z9"},
	} {
		a.created(a.owner, component(c.name, "other", "bin", c.bin))
	}
	type page struct {
		Items []map[string]any `json:"items"`
		Next  string           `json:"next"`
	}
	var whole page
	a.do(http.MethodGet, "/v1/shelf", "", nil).decode(t, &whole)
	if len(whole.Items) != 7 || whole.Next != "" {
		t.Fatalf("whole shelf: %d items, next %q", len(whole.Items), whole.Next)
	}
	var walked []map[string]any
	var sizes []int
	query := "limit=3"
	for range 10 {
		r := a.do(http.MethodGet, "/v1/shelf?"+query, "", nil)
		if r.status != http.StatusOK || r.header.Get("ETag") == "" {
			t.Fatalf("?%s: %d, ETag %q", query, r.status, r.header.Get("ETag"))
		}
		var p page
		r.decode(t, &p)
		sizes = append(sizes, len(p.Items))
		walked = append(walked, p.Items...)
		if p.Next == "" {
			break
		}
		query = "limit=3&cursor=" + url.QueryEscape(p.Next)
	}
	if !slices.Equal(sizes, []int{3, 3, 1}) {
		t.Errorf("page sizes %v, want 3, 3, 1", sizes)
	}
	ids := func(items []map[string]any) []float64 {
		var out []float64
		for _, it := range items {
			out = append(out, it["id"].(float64))
			for _, private := range []string{"notes", "owner", "version", "created_at"} {
				if _, ok := it[private]; ok {
					t.Errorf("shelf item %v shows %s", it["id"], private)
				}
			}
		}
		return out
	}
	if a, b := ids(walked), ids(whole.Items); !slices.Equal(a, b) {
		t.Errorf("pages hold %v, the whole shelf %v", a, b)
	}
	// An empty cursor is no cursor: the whole shelf.
	var first page
	a.do(http.MethodGet, "/v1/shelf?cursor=", "", nil).decode(t, &first)
	if len(first.Items) != 7 {
		t.Errorf("empty cursor: %d items", len(first.Items))
	}

	for _, q := range []string{"limit=0", "limit=201", "limit=x", "cursor=bm9wZQ", "cursor=%7B%7D", "cursor=eyJpIjowfQ"} {
		p := wantProblem(t, a.do(http.MethodGet, "/v1/shelf?"+q, "", nil), http.StatusBadRequest, "bad-query")
		if len(p.Errors) != 1 {
			t.Errorf("?%s: problems %v", q, p.Errors)
		}
	}
}

// The public shelf filters on the server, whole or in pages, and refuses
// a parameter it does not know rather than ignore it.
func TestShelfFiltersAndUnknownParameters(t *testing.T) {
	a := startShelfAPI(t)
	for _, c := range []struct{ name, kind, bin string }{
		{"Gear motor", "motor", "M1"}, {"Fan motor", "motor", "M1"}, {"Wiper motor", "motor", "M2"},
		{"Buck board", "regulator", "R1"}, {"Mixer switch", "switch", "S1"},
	} {
		a.created(a.owner, component(c.name, c.kind, "bin", c.bin))
	}
	names := func(query string) []string {
		t.Helper()
		var out []string
		for {
			var p struct {
				Items []struct {
					Name string `json:"name"`
				} `json:"items"`
				Next string `json:"next"`
			}
			r := a.do(http.MethodGet, "/v1/shelf?"+query, "", nil)
			if r.status != http.StatusOK {
				t.Fatalf("?%s: %d %s", query, r.status, r.body)
			}
			r.decode(t, &p)
			for _, it := range p.Items {
				out = append(out, it.Name)
			}
			if p.Next == "" {
				return out
			}
			v, _ := url.ParseQuery(query)
			v.Set("cursor", p.Next)
			query = v.Encode()
		}
	}
	cases := []struct {
		query string
		want  []string
	}{
		{"kind=motor", []string{"Fan motor", "Gear motor", "Wiper motor"}},
		{"kind=motor&limit=1", []string{"Fan motor", "Gear motor", "Wiper motor"}},
		{"bin=M1", []string{"Fan motor", "Gear motor"}},
		{"q=MOTOR+m2", []string{"Wiper motor"}},
		{"q=mixer&kind=motor", nil},
		{"q=board&limit=2", []string{"Buck board"}},
	}
	for _, tc := range cases {
		if got := names(tc.query); !slices.Equal(got, tc.want) {
			t.Errorf("?%s: %q, want %q", tc.query, got, tc.want)
		}
	}
	for q, pointer := range map[string]string{
		"fits_v=5": "/fits_v", "kind=motor&sort=name": "/sort", "Kind=motor": "/Kind", "kind=spaceship": "/kind",
		"q=" + strings.Repeat("x", 201): "/q", "bin=" + strings.Repeat("b", 101): "/bin",
	} {
		p := wantProblem(t, a.do(http.MethodGet, "/v1/shelf?"+q, "", nil), http.StatusBadRequest, "bad-query")
		if len(p.Errors) != 1 || p.Errors[0].Pointer != pointer {
			t.Errorf("?%.40s: problems %+v, want one at %s", q, p.Errors, pointer)
		}
	}
}
