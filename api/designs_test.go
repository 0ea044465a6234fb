package api

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"strings"
	"sync"
	"testing"

	"github.com/labstack/echo/v4"
	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// designHarness is a router on a database of the test's own, with tokens
// for two members and one staff.
type designHarness struct {
	t      *testing.T
	router *echo.Echo
	store  *store.Store
	dbURL  string
	tokens map[string]string
}

func newDesignHarness(t *testing.T, cfg Config) *designHarness {
	t.Helper()
	st, dbURL := storetest.NewStore(t)
	// serve stores the default limits as it starts; so does the harness.
	if _, err := st.SeedDefaultLimits(t.Context()); err != nil {
		t.Fatal(err)
	}
	cfg.Store = st
	cfg.Logger = slog.New(slog.NewTextHandler(io.Discard, nil))
	cfg.Registry = prometheus.NewRegistry()
	router, err := New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	h := &designHarness{t: t, router: router, store: st, dbURL: dbURL, tokens: map[string]string{}}
	for name, role := range map[string]domain.Role{"ada": domain.RoleMember, "bo": domain.RoleMember, "rowan": domain.RoleStaff} {
		secret, err := st.CreateToken(context.Background(), "test", name, role)
		if err != nil {
			t.Fatal(err)
		}
		h.tokens[name] = secret
	}
	return h
}

// call sends a request as who ("" for no token) from the test's usual
// address; headers come in name, value pairs.
func (h *designHarness) call(method, target, who string, body []byte, headers ...string) *httptest.ResponseRecorder {
	return h.callFrom("192.0.2.10:40000", method, target, who, body, headers...)
}

func (h *designHarness) callFrom(remote, method, target, who string, body []byte, headers ...string) *httptest.ResponseRecorder {
	h.t.Helper()
	req := httptest.NewRequest(method, target, bytes.NewReader(body))
	req.RemoteAddr = remote
	if body != nil {
		req.Header.Set("Content-Type", "application/json")
	}
	if who != "" {
		req.Header.Set("Authorization", "Bearer "+h.tokens[who])
	}
	for i := 0; i+1 < len(headers); i += 2 {
		req.Header.Set(headers[i], headers[i+1])
	}
	rec := httptest.NewRecorder()
	h.router.ServeHTTP(rec, req)
	return rec
}

// expect fails the test unless rec has status want, and decodes its body
// into into when given.
func (h *designHarness) expect(rec *httptest.ResponseRecorder, want int, into any) {
	h.t.Helper()
	if rec.Code != want {
		h.t.Fatalf("status %d, want %d; body: %s", rec.Code, want, rec.Body.String())
	}
	if into != nil {
		if err := json.Unmarshal(rec.Body.Bytes(), into); err != nil {
			h.t.Fatalf("decode %s: %v", rec.Body.String(), err)
		}
	}
}

// benchLampDesign is a 5 V bench supply feeding a critical 0.5 A lamp
// through 1.45 m of 24 AWG. The drop, worked by hand: 24 AWG is
// 0.127 mm × 92^(12/39) = 0.5105 mm across (ASTM B258), 0.2047 mm², so
// 0.08423 Ω/m at 20 °C (IEC 60028: 1/58 Ω·mm²/m) and ×(1 + 0.00393·5) =
// 0.08588 Ω/m at 25 °C. Both conductors: 2 × 1.45 m × 0.08588 Ω/m × 0.5 A =
// 0.1245 V, 2.49 % of 5 V: inside the 3 % critical-load limit (marine DC
// wiring practice, common practice) and outside 2 %. Its blade fuse
// breaks 1,000 A at 32 V DC (ISO 8820-3, from memory), far above the
// 10 × 2 A a supply with no stated current limit is taken to drive into a
// short (common practice, from memory).
const benchLampDesign = `{"format": 1, "name": "Bench lamp", "ambient_c": 25,
 "nodes": [
  {"id": "bench", "type": "supply", "output_v": 5, "max_a": 2},
  {"id": "lamp", "type": "load", "min_v": 4.5, "max_v": 5.5, "current_a": 0.5, "critical": true,
   "feed": {"from": "bench", "wire": {"gauge": "24AWG", "length_m": 1.45},
            "fuse": {"rating_a": 1, "speed": "fast", "family": "blade", "voltage_rating_v": 32, "distance_from_source_m": 0.05}}}
 ]}
`

// benchLampDropPct is the hand-worked drop of benchLampDesign.
const benchLampDropPct = 2.49

// overvoltDesign feeds a 5 V part (max 5.5 V) straight from ten NiMH
// cells: 10 × 1.4 V = 14 V at full charge, far above its rating, which
// DESIGN section 7 makes a voltage.range fail.
const overvoltDesign = `{"format": 1, "name": "Cooked sensor",
 "nodes": [
  {"id": "pack", "type": "battery", "chemistry": "nimh", "series": 10, "parallel": 1,
   "cell_capacity_mah": 2000, "cell_full_v": 1.4, "cell_nominal_v": 1.2, "cell_cutoff_v": 1.0},
  {"id": "sensor", "type": "load", "min_v": 4.5, "max_v": 5.5, "current_a": 0.05,
   "feed": {"from": "pack", "wire": {"gauge": "22AWG", "length_m": 0.2},
            "fuse": {"rating_a": 1, "speed": "fast", "family": "blade", "voltage_rating_v": 32, "distance_from_source_m": 0.05}}}
 ]}`

func TestDesignCRUDAndAccess(t *testing.T) {
	h := newDesignHarness(t, Config{})
	doc := []byte(benchLampDesign)

	var created store.StoredDesign
	rec := h.call(http.MethodPost, "/v1/designs", "ada", doc)
	h.expect(rec, http.StatusCreated, &created)
	if loc := rec.Header().Get("Location"); loc != fmt.Sprintf("/v1/designs/%d", created.ID) {
		t.Fatalf("Location %q for design %d", loc, created.ID)
	}
	if created.Name != "Bench lamp" || created.Owner != "ada" || created.Version != 1 || rec.Header().Get("ETag") != `"1"` {
		t.Fatalf("created %+v with ETag %s", created.DesignSummary, rec.Header().Get("ETag"))
	}
	stored, err := h.store.Design(context.Background(), created.ID)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(stored.Document, doc) {
		t.Fatalf("stored document differs from the one sent:\n%s\nwant\n%s", stored.Document, doc)
	}

	path := fmt.Sprintf("/v1/designs/%d", created.ID)
	access := []struct {
		who  string
		want int
	}{
		{"ada", http.StatusOK},
		{"rowan", http.StatusOK},
		{"bo", http.StatusForbidden},
		{"", http.StatusUnauthorized},
	}
	for _, a := range access {
		t.Run("read as "+a.who, func(t *testing.T) {
			h.expect(h.call(http.MethodGet, path, a.who, nil), a.want, nil)
		})
	}
	h.expect(h.call(http.MethodGet, "/v1/designs/424242", "ada", nil), http.StatusNotFound, nil)
	h.expect(h.call(http.MethodGet, "/v1/designs/zero", "ada", nil), http.StatusNotFound, nil)

	renamed := bytes.Replace(doc, []byte(`"Bench lamp"`), []byte(`"Bench lamp, longer lead"`), 1)
	h.expect(h.call(http.MethodPut, path, "ada", renamed), http.StatusPreconditionRequired, nil)
	h.expect(h.call(http.MethodPut, path, "bo", renamed, "If-Match", `"1"`), http.StatusForbidden, nil)
	h.expect(h.call(http.MethodPut, path, "ada", renamed, "If-Match", `"7"`), http.StatusPreconditionFailed, nil)
	var replaced store.StoredDesign
	h.expect(h.call(http.MethodPut, path, "ada", renamed, "If-Match", `"1"`), http.StatusOK, &replaced)
	if replaced.Version != 2 || replaced.Name != "Bench lamp, longer lead" {
		t.Fatalf("after PUT: %+v", replaced.DesignSummary)
	}

	// A merge patch replaces the nodes array whole and keeps the rest.
	patch := []byte(`{"name": "Patched lamp", "target_runtime_h": 1.5}`)
	h.expect(h.call(http.MethodPatch, path, "bo", patch, "If-Match", `"2"`), http.StatusForbidden, nil)
	var patched store.StoredDesign
	h.expect(h.call(http.MethodPatch, path, "rowan", patch, "If-Match", `"2"`), http.StatusOK, &patched)
	var patchedDoc map[string]any
	if err := json.Unmarshal(patched.Document, &patchedDoc); err != nil {
		t.Fatal(err)
	}
	if patched.Version != 3 || patched.Name != "Patched lamp" || patchedDoc["target_runtime_h"] != 1.5 ||
		patchedDoc["ambient_c"] != 25.0 || len(patchedDoc["nodes"].([]any)) != 2 {
		t.Fatalf("after PATCH: %+v %v", patched.DesignSummary, patchedDoc)
	}
	// A patch that breaks the document is refused and changes nothing.
	h.expect(h.call(http.MethodPatch, path, "ada", []byte(`{"nodes": null}`), "If-Match", `"3"`), http.StatusUnprocessableEntity, nil)
	if d, _ := h.store.Design(context.Background(), created.ID); d.Version != 3 {
		t.Fatalf("a refused patch moved the version to %d", d.Version)
	}

	// Listings: members see their own, staff everyone's.
	h.expect(h.call(http.MethodPost, "/v1/designs", "bo", []byte(overvoltDesign)), http.StatusCreated, nil)
	for who, want := range map[string]int{"ada": 1, "bo": 1, "rowan": 2} {
		var page DesignPage
		h.expect(h.call(http.MethodGet, "/v1/designs", who, nil), http.StatusOK, &page)
		if len(page.Items) != want {
			t.Fatalf("%s lists %d designs, want %d", who, len(page.Items), want)
		}
		for _, d := range page.Items {
			if who != "rowan" && d.Owner != who {
				t.Fatalf("%s's listing holds %s's design", who, d.Owner)
			}
		}
	}
	h.expect(h.call(http.MethodGet, "/v1/designs?owner=bo", "ada", nil), http.StatusForbidden, nil)
	var bos DesignPage
	h.expect(h.call(http.MethodGet, "/v1/designs?owner=bo", "rowan", nil), http.StatusOK, &bos)
	if len(bos.Items) != 1 || bos.Items[0].Owner != "bo" {
		t.Fatalf("staff filtering by owner: %+v", bos.Items)
	}

	h.expect(h.call(http.MethodDelete, path, "bo", nil), http.StatusForbidden, nil)
	h.expect(h.call(http.MethodDelete, path, "ada", nil, "If-Match", `"1"`), http.StatusPreconditionFailed, nil)
	h.expect(h.call(http.MethodDelete, path, "ada", nil, "If-Match", `"3"`), http.StatusNoContent, nil)
	h.expect(h.call(http.MethodGet, path, "ada", nil), http.StatusNotFound, nil)
}

func TestDesignListPages(t *testing.T) {
	h := newDesignHarness(t, Config{})
	for range 5 {
		h.expect(h.call(http.MethodPost, "/v1/designs", "ada", []byte(benchLampDesign)), http.StatusCreated, nil)
	}
	var seen []int64
	next := "/v1/designs?limit=2"
	for next != "" {
		var page DesignPage
		h.expect(h.call(http.MethodGet, next, "ada", nil), http.StatusOK, &page)
		for _, d := range page.Items {
			seen = append(seen, d.ID)
		}
		next = ""
		if page.Next != "" {
			next = "/v1/designs?limit=2&cursor=" + page.Next
		}
	}
	if len(seen) != 5 {
		t.Fatalf("paging saw %v, want all five designs once", seen)
	}
	for i := 1; i < len(seen); i++ {
		if seen[i] <= seen[i-1] {
			t.Fatalf("paging order %v is not ascending", seen)
		}
	}
	h.expect(h.call(http.MethodGet, "/v1/designs?limit=0", "ada", nil), http.StatusBadRequest, nil)
	h.expect(h.call(http.MethodGet, "/v1/designs?cursor=bm90LW91cnM", "ada", nil), http.StatusBadRequest, nil)
}

// TestMalformedDesigns sends a document of every broken kind to each
// route that takes one: each gets a 4xx problem document, never a 5xx,
// and nothing is saved.
func TestMalformedDesigns(t *testing.T) {
	h := newDesignHarness(t, Config{ReviewBurst: 1000})
	valid := benchLampDesign
	node := `{"id": "bench", "type": "supply", "output_v": 5, "max_a": 2}`
	withNodes := func(nodes ...string) string {
		return `{"format": 1, "name": "x", "nodes": [` + strings.Join(nodes, ",") + `]}`
	}
	lamp := func(id, from, gauge string, length float64) string {
		return fmt.Sprintf(`{"id": %q, "type": "load", "min_v": 4, "max_v": 6, "current_a": 0.1,
			"feed": {"from": %q, "wire": {"gauge": %q, "length_m": %g}}}`, id, from, gauge, length)
	}
	var many []string
	many = append(many, node)
	for i := range 5001 {
		many = append(many, lamp(fmt.Sprintf("n%d", i), "bench", "22AWG", 0.1))
	}
	cases := []struct {
		name     string
		body     string
		want     int
		pointers []string // each must appear among the problem's pointers
	}{
		{"empty body", "", 400, nil},
		{"broken JSON", `{"format": 1, "nodes": [`, 400, nil},
		{"trailing data", valid + `{}`, 400, nil},
		{"not an object", `[1, 2, 3]`, 422, nil},
		{"unknown field", strings.Replace(valid, `"ambient_c"`, `"colour": "red", "ambient_c"`, 1), 422, []string{"/colour"}},
		{"wrong type", strings.Replace(valid, `"output_v": 5`, `"output_v": "five"`, 1), 422, []string{"/nodes/0/output_v"}},
		{"unknown format", strings.Replace(valid, `"format": 1`, `"format": 2`, 1), 422, []string{"/format"}},
		{"unknown node type", withNodes(node, `{"id": "t", "type": "toaster", "feed": {"from": "bench", "wire": {"gauge": "22AWG", "length_m": 1}}}`), 422, []string{"/nodes/1/type"}},
		{"missing parent", withNodes(node, lamp("a", "nowhere", "22AWG", 1)), 422, []string{"/nodes/1/feed/from"}},
		{"duplicate ids", withNodes(node, lamp("a", "bench", "22AWG", 1), lamp("a", "bench", "22AWG", 1)), 422, []string{"/nodes/2/id"}},
		{"cycle", withNodes(node, lamp("a", "b", "22AWG", 1), lamp("b", "a", "22AWG", 1)), 422, nil},
		{"no source", withNodes(lamp("a", "b", "22AWG", 1)), 422, nil},
		{"unknown gauge", withNodes(node, lamp("a", "bench", "3.3mm2x", 1)), 422, []string{"/nodes/1/feed/wire/gauge"}},
		{"negative length", withNodes(node, lamp("a", "bench", "22AWG", -1)), 422, []string{"/nodes/1/feed/wire/length_m"}},
		{"half a kilometre of wire", withNodes(node, lamp("a", "bench", "22AWG", 501)), 422, []string{"/nodes/1/feed/wire/length_m"}},
		{"a rail over 1 kV", strings.Replace(valid, `"output_v": 5`, `"output_v": 1500`, 1), 422, []string{"/nodes/0/output_v"}},
		{"a pack of 1,001 cells", withNodes(`{"id": "p", "type": "battery", "chemistry": "nimh", "series": 1001, "parallel": 1, "cell_capacity_mah": 2000}`), 422, []string{"/nodes/0/series"}},
		{"more than 5,000 nodes", withNodes(many...), 422, []string{"/nodes"}},
		{"unknown component", strings.Replace(valid, `"id": "lamp",`, `"id": "lamp", "component_id": 987654,`, 1), 422, []string{"/nodes/1/component_id"}},
		{"over 2 MiB", strings.Replace(valid, `"ambient_c"`, `"description": "`+strings.Repeat("x", MaxBodyBytes)+`", "ambient_c"`, 1), 413, nil},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			routes := []struct{ method, path, who string }{
				{http.MethodPost, "/v1/reviews", ""},
				{http.MethodPost, "/v1/reviews", "ada"},
				{http.MethodPost, "/v1/designs", "ada"},
			}
			for _, r := range routes {
				rec := h.call(r.method, r.path, r.who, []byte(tc.body))
				want := tc.want
				if r.who == "" && len(tc.body) > AnonymousMaxBodyBytes {
					want = http.StatusRequestEntityTooLarge // the anonymous cap comes first
				}
				if tc.name == "unknown component" && r.path == "/v1/designs" {
					// Stored designs may name parts added to the shelf later;
					// the review, not the save, resolves them.
					continue
				}
				if rec.Code != want {
					t.Fatalf("%s %s: status %d, want %d; body %.400s", r.method, r.path, rec.Code, want, rec.Body.String())
				}
				if ct := rec.Header().Get("Content-Type"); ct != "application/problem+json" {
					t.Fatalf("%s %s: Content-Type %q, want a problem document", r.method, r.path, ct)
				}
				var p Problem
				if err := json.Unmarshal(rec.Body.Bytes(), &p); err != nil || p.Status != want || !strings.HasPrefix(p.Type, ProblemTypePrefix) {
					t.Fatalf("%s %s: not a problem document: %.400s", r.method, r.path, rec.Body.String())
				}
				if want != tc.want {
					continue // refused before it was read: no pointers
				}
				for _, want := range tc.pointers {
					if !hasPointer(p.Errors, want) {
						t.Fatalf("%s %s: no problem at %s in %+v", r.method, r.path, want, p.Errors)
					}
				}
			}
		})
	}
	designs, _, err := h.store.ListDesigns(context.Background(), store.DesignFilter{})
	if err != nil {
		t.Fatal(err)
	}
	if len(designs) != 1 { // only the "unknown component" document is a valid design
		t.Fatalf("%d designs were saved from broken documents, want only the valid one", len(designs))
	}
}

func hasPointer(problems []domain.FieldProblem, pointer string) bool {
	for _, p := range problems {
		if p.Pointer == pointer {
			return true
		}
	}
	return false
}

// TestConcurrentDesignPatchesLoseNothing sends merge patches of different
// fields of one design at once with If-Match "*", as
// TestConcurrentPatchesLoseNothing does for components: each patch that
// succeeds must still be visible at the end.
func TestConcurrentDesignPatchesLoseNothing(t *testing.T) {
	h := newDesignHarness(t, Config{})
	var d store.StoredDesign
	h.expect(h.call(http.MethodPost, "/v1/designs", "ada", []byte(benchLampDesign)), http.StatusCreated, &d)
	path := fmt.Sprintf("/v1/designs/%d", d.ID)
	patches := []struct{ field, body string }{
		{"name", `{"name": "Renamed lamp"}`},
		{"description", `{"description": "on the bench by the door"}`},
		{"ambient_c", `{"ambient_c": 31}`},
		{"target_runtime_h", `{"target_runtime_h": 2}`},
	}
	statuses := make([]int, len(patches))
	var wg sync.WaitGroup
	for i, p := range patches {
		wg.Go(func() { statuses[i] = h.call(http.MethodPatch, path, "ada", []byte(p.body), "If-Match", "*").Code })
	}
	wg.Wait()
	var final store.StoredDesign
	h.expect(h.call(http.MethodGet, path, "ada", nil), http.StatusOK, &final)
	var doc map[string]any
	if err := json.Unmarshal(final.Document, &doc); err != nil {
		t.Fatal(err)
	}
	applied := 0
	for i, p := range patches {
		var want map[string]any
		if err := json.Unmarshal([]byte(p.body), &want); err != nil {
			t.Fatal(err)
		}
		switch statuses[i] {
		case http.StatusOK:
			applied++
			if doc[p.field] != want[p.field] {
				t.Errorf("patch of %s answered 200 but is lost: %v", p.field, doc[p.field])
			}
		case http.StatusPreconditionFailed:
		default:
			t.Errorf("patch of %s: status %d", p.field, statuses[i])
		}
	}
	if applied == 0 || final.Version != d.Version+int64(applied) {
		t.Errorf("%d patches applied, version %d from %d", applied, final.Version, d.Version)
	}
}
