package api_test

import (
	"fmt"
	"net/http"
	"net/url"
	"slices"
	"strings"
	"sync"
	"testing"

	"wattshelf/domain"
)

func TestComponentCreateReadReplacePatchDelete(t *testing.T) {
	a := startShelfAPI(t)

	body := component("Cordless-drill motor", "motor", "rated_v", 14.4, "no_load_a", 2.1, "stall_a", 48.0, "max_v", 16.8)
	r := a.do(http.MethodPost, "/v1/components", a.owner, body)
	if r.status != http.StatusCreated {
		t.Fatalf("create: %d %s", r.status, r.body)
	}
	var c domain.Component
	r.decode(t, &c)
	if loc := r.header.Get("Location"); loc != fmt.Sprintf("/v1/components/%d", c.ID) {
		t.Errorf("Location %q for id %d", loc, c.ID)
	}
	if r.header.Get("ETag") != `"1"` || c.Version != 1 || c.Owner != "ada" {
		t.Errorf("created ETag %q version %d owner %q", r.header.Get("ETag"), c.Version, c.Owner)
	}
	// Defaults fill what the client left out.
	if c.Condition != "untested" || c.SpecSource != "estimated" || *c.StallA != 48 {
		t.Errorf("created %+v", c)
	}
	if !strings.HasPrefix(r.header.Get("Content-Type"), "application/json") {
		t.Errorf("Content-Type %q", r.header.Get("Content-Type"))
	}

	path := fmt.Sprintf("/v1/components/%d", c.ID)
	r = a.do(http.MethodGet, path, a.other, nil)
	var got domain.Component
	r.decode(t, &got)
	if r.status != http.StatusOK || r.header.Get("ETag") != `"1"` || got.Name != "Cordless-drill motor" || got.Notes == "" {
		t.Errorf("get: %d ETag %q %+v", r.status, r.header.Get("ETag"), got)
	}

	// PUT replaces the whole record: fields left out go back to defaults.
	replacement := component("Cordless-drill motor", "motor", "rated_v", 14.4, "condition", "working", "spec_source", "measured")
	wantProblem(t, a.do(http.MethodPut, path, a.owner, replacement), http.StatusPreconditionRequired, "precondition-required")
	r = a.do(http.MethodPut, path, a.owner, replacement, "If-Match", `"1"`)
	got = domain.Component{}
	r.decode(t, &got)
	if r.status != http.StatusOK || r.header.Get("ETag") != `"2"` || got.Version != 2 || got.StallA != nil || got.Condition != "working" {
		t.Errorf("put: %d ETag %q %+v", r.status, r.header.Get("ETag"), got)
	}
	wantProblem(t, a.do(http.MethodPut, path, a.owner, replacement, "If-Match", `"1"`), http.StatusPreconditionFailed, "precondition-failed")

	// PATCH is a JSON merge patch: named fields change, null removes, the rest stays.
	patch := `{"quantity": 3, "rated_v": null, "max_v": 18, "description": "brushes replaced"}`
	wantProblem(t, a.do(http.MethodPatch, path, a.owner, patch), http.StatusPreconditionRequired, "precondition-required")
	wantProblem(t, a.do(http.MethodPatch, path, a.owner, patch, "If-Match", `"1"`), http.StatusPreconditionFailed, "precondition-failed")
	r = a.do(http.MethodPatch, path, a.owner, patch, "If-Match", `"2"`)
	got = domain.Component{}
	r.decode(t, &got)
	if r.status != http.StatusOK || got.Version != 3 || got.Quantity != 3 || got.RatedV != nil || got.MaxV == nil || *got.MaxV != 18 ||
		got.Description != "brushes replaced" || got.Condition != "working" || got.Name != "Cordless-drill motor" || got.Bin != "T1" {
		t.Errorf("patch: %d %+v", r.status, got)
	}
	// A patch is validated as a whole record would be.
	p := wantProblem(t, a.do(http.MethodPatch, path, a.owner, `{"name": null, "max_v": -3}`, "If-Match", `"3"`), http.StatusUnprocessableEntity, "validation")
	if !slices.Equal(pointersOf(p), []string{"/name", "/max_v"}) {
		t.Errorf("patch problems at %v", pointersOf(p))
	}
	p = wantProblem(t, a.do(http.MethodPatch, path, a.owner, `{"colour": "red"}`, "If-Match", `"3"`), http.StatusUnprocessableEntity, "validation")
	if !slices.Equal(pointersOf(p), []string{"/colour"}) {
		t.Errorf("patch with an unknown field: problems at %v", pointersOf(p))
	}
	// A weak ETag never matches a write (RFC 9110 section 13.1.1); "*" matches any version.
	wantProblem(t, a.do(http.MethodPatch, path, a.owner, `{"quantity": 4}`, "If-Match", `W/"3"`), http.StatusPreconditionFailed, "precondition-failed")
	if r := a.do(http.MethodPatch, path, a.owner, `{"quantity": 5}`, "If-Match", `*`); r.status != http.StatusOK || r.header.Get("ETag") != `"4"` {
		t.Errorf("If-Match *: %d %s", r.status, r.body)
	}

	wantProblem(t, a.do(http.MethodDelete, path, a.owner, nil, "If-Match", `"3"`), http.StatusPreconditionFailed, "precondition-failed")
	if r := a.do(http.MethodDelete, path, a.owner, nil, "If-Match", `"4"`); r.status != http.StatusNoContent || len(r.body) != 0 {
		t.Errorf("delete: %d %s", r.status, r.body)
	}
	wantProblem(t, a.do(http.MethodGet, path, a.owner, nil), http.StatusNotFound, "not-found")
	wantProblem(t, a.do(http.MethodDelete, path, a.owner, nil), http.StatusNotFound, "not-found")
	wantProblem(t, a.do(http.MethodPut, path, a.owner, replacement, "If-Match", `"5"`), http.StatusNotFound, "not-found")
}

func TestComponentListFiltersAndPages(t *testing.T) {
	a := startShelfAPI(t)
	var ids []int64
	for _, body := range []map[string]any{
		component("Mixer motor", "motor", "min_v", 3.0, "max_v", 8.4, "bin", "M1"),
		component("Winder motor", "motor", "rated_v", 12.0, "bin", "M1"),
		component("100% duty fan", "motor", "bin", "M2"),
		component("1000 rpm fan", "motor", "bin", "M2"),
		component("Buck board", "regulator", "min_input_v", 4.5, "max_input_v", 28.0, "bin", "R1", "description", "from a dashcam charger"),
		component("relay_board", "switch", "bin", "S1"),
		component("relayXboard", "switch", "bin", "S1"),
	} {
		ids = append(ids, a.created(a.staff, body).ID)
	}
	names := func(query string) []string {
		t.Helper()
		r := a.do(http.MethodGet, "/v1/components?"+query, a.owner, nil)
		if r.status != http.StatusOK {
			t.Fatalf("list ?%s: %d %s", query, r.status, r.body)
		}
		var page struct {
			Items []domain.Component `json:"items"`
			Next  string             `json:"next"`
		}
		r.decode(t, &page)
		if page.Items == nil {
			t.Errorf("?%s: items is null, want a list", query)
		}
		var out []string
		for _, c := range page.Items {
			out = append(out, c.Name)
		}
		return out
	}
	for _, tt := range []struct {
		query string
		want  []string
	}{
		{"kind=regulator", []string{"Buck board"}},
		{"kind=camera", nil},
		{"bin=M2", []string{"100% duty fan", "1000 rpm fan"}},
		{"q=" + url.QueryEscape("100%"), []string{"100% duty fan"}},
		{"q=relay_board", []string{"relay_board"}},
		{"q=DASHCAM", []string{"Buck board"}},
		{"q=" + url.QueryEscape("' OR ''='"), nil},
		// Rated 12 V, ±10 % (domain.RatedVoltageTolerance): 10.8–13.2 V.
		{"fits_v=5", []string{"Mixer motor", "Buck board"}},
		{"fits_v=12", []string{"Winder motor", "Buck board"}},
		{"fits_v=30", nil},
		{"kind=motor&fits_v=10", nil},
		{"kind=motor&fits_v=11", []string{"Winder motor"}},
	} {
		if got := names(tt.query); !slices.Equal(got, tt.want) {
			t.Errorf("?%s: %q, want %q", tt.query, got, tt.want)
		}
	}

	// Follow the cursor through pages of three.
	var seen []int64
	var sizes []int
	query := "limit=3"
	for range 10 {
		r := a.do(http.MethodGet, "/v1/components?"+query, a.other, nil)
		var page struct {
			Items []domain.Component `json:"items"`
			Next  string             `json:"next"`
		}
		r.decode(t, &page)
		sizes = append(sizes, len(page.Items))
		for _, c := range page.Items {
			seen = append(seen, c.ID)
		}
		if page.Next == "" {
			break
		}
		query = "limit=3&cursor=" + url.QueryEscape(page.Next)
	}
	if !slices.Equal(sizes, []int{3, 3, 1}) || !slices.Equal(seen, ids) {
		t.Errorf("pages of %v holding %v, want 3,3,1 holding %v", sizes, seen, ids)
	}

	for _, tt := range []struct{ query, pointer string }{
		{"limit=0", "/limit"},
		{"limit=201", "/limit"},
		{"limit=ten", "/limit"},
		{"kind=robot", "/kind"},
		{"fits_v=twelve", "/fits_v"},
		{"fits_v=-1", "/fits_v"},
		{"fits_v=NaN", "/fits_v"},
		{"fits_v=1001", "/fits_v"},
		{"cursor=not-a-cursor", "/cursor"},
		{"cursor=" + url.QueryEscape("YWZ0ZXI6LTE"), "/cursor"}, // "after:-1"
		{"q=" + strings.Repeat("q", domain.MaxNameLen+1), "/q"},
		{"bin=" + strings.Repeat("b", domain.MaxShortFieldLen+1), "/bin"},
	} {
		t.Run(tt.query[:min(len(tt.query), 20)], func(t *testing.T) {
			p := wantProblem(t, a.do(http.MethodGet, "/v1/components?"+tt.query, a.owner, nil), http.StatusBadRequest, "bad-query")
			if !slices.Equal(pointersOf(p), []string{tt.pointer}) {
				t.Errorf("problems at %v, want %s", pointersOf(p), tt.pointer)
			}
		})
	}
	// limit=200 is the largest page.
	if r := a.do(http.MethodGet, "/v1/components?limit=200", a.owner, nil); r.status != http.StatusOK {
		t.Errorf("limit=200: %d", r.status)
	}
}

func TestMeasurementsAPI(t *testing.T) {
	a := startShelfAPI(t)
	c := a.created(a.staff, component("Toy motor", "motor"))
	path := fmt.Sprintf("/v1/components/%d/measurements", c.ID)

	r := a.do(http.MethodGet, path, a.owner, nil)
	if r.status != http.StatusOK || strings.TrimSpace(string(r.body)) != `{"items":[]}` {
		t.Errorf("no readings: %d %s", r.status, r.body)
	}
	for _, body := range []string{
		`{"voltage_v": 3, "current_a": 0.3, "speed_rpm": 9500, "note": "free running"}`,
		`{"voltage_v": 3, "current_a": 2.2}`,
	} {
		r := a.do(http.MethodPost, path, a.owner, body)
		if r.status != http.StatusCreated || r.header.Get("Location") != path {
			t.Fatalf("record: %d %s (Location %q)", r.status, r.body, r.header.Get("Location"))
		}
		var m domain.Measurement
		r.decode(t, &m)
		if m.RecordedBy != "ada" || m.ComponentID != c.ID || m.RecordedAt.IsZero() {
			t.Errorf("recorded %+v", m)
		}
	}
	var list struct {
		Items []domain.Measurement `json:"items"`
	}
	a.do(http.MethodGet, path, a.other, nil).decode(t, &list)
	if len(list.Items) != 2 || list.Items[0].SpeedRPM == nil || *list.Items[0].SpeedRPM != 9500 || list.Items[1].SpeedRPM != nil {
		t.Errorf("readings %+v", list.Items)
	}

	p := wantProblem(t, a.do(http.MethodPost, path, a.owner, `{"voltage_v": -1, "current_a": 2000}`), http.StatusUnprocessableEntity, "validation")
	if !slices.Equal(pointersOf(p), []string{"/voltage_v", "/current_a"}) {
		t.Errorf("problems at %v", pointersOf(p))
	}
	p = wantProblem(t, a.do(http.MethodPost, path, a.owner, `{"voltage_v": 3, "current_a": 1, "recorded_by": "kim"}`), http.StatusUnprocessableEntity, "validation")
	if !slices.Equal(pointersOf(p), []string{"/recorded_by"}) {
		t.Errorf("who recorded a reading is the service's to say; problems at %v", pointersOf(p))
	}
	// A reading without its voltage or current is refused, not stored as zero.
	for body, want := range map[string][]string{
		`{}`:                                    {"/voltage_v", "/current_a"},
		`{"current_a": 1.2, "speed_rpm": 4000}`: {"/voltage_v"},
		`{"voltage_v": 6, "note": "forgot amps"}`: {"/current_a"},
		`{"voltage_v": null, "current_a": 1}`:     {"/voltage_v"},
	} {
		p := wantProblem(t, a.do(http.MethodPost, path, a.owner, body), http.StatusUnprocessableEntity, "validation")
		if !slices.Equal(pointersOf(p), want) {
			t.Errorf("%s: problems at %v, want %v", body, pointersOf(p), want)
		}
	}
	// Zero is a reading like any other.
	if r := a.do(http.MethodPost, path, a.owner, `{"voltage_v": 0, "current_a": 0}`); r.status != http.StatusCreated {
		t.Errorf("reading of 0 V, 0 A: %d %s", r.status, r.body)
	}
	wantProblem(t, a.do(http.MethodPost, "/v1/components/999999/measurements", a.owner, `{"voltage_v": 3, "current_a": 1}`), http.StatusNotFound, "not-found")
	wantProblem(t, a.do(http.MethodGet, "/v1/components/999999/measurements", a.owner, nil), http.StatusNotFound, "not-found")
}

func TestShelfIsPublicAndCacheable(t *testing.T) {
	a := startShelfAPI(t)
	a.created(a.owner, component("Speaker from a talking toy", "audio", "bin", "A2", "notes", "keep away from the kiosk"))
	a.created(a.staff, component("Camera board", "camera", "bin", "A1"))

	r := a.do(http.MethodGet, "/v1/shelf", "", nil)
	if r.status != http.StatusOK {
		t.Fatalf("shelf: %d %s", r.status, r.body)
	}
	var shelf struct {
		Items []map[string]any `json:"items"`
	}
	r.decode(t, &shelf)
	if len(shelf.Items) != 2 || shelf.Items[0]["bin"] != "A1" {
		t.Fatalf("shelf items %v, want both, by bin", shelf.Items)
	}
	for _, item := range shelf.Items {
		for _, hidden := range []string{"owner", "notes", "version", "created_at"} {
			if _, ok := item[hidden]; ok {
				t.Errorf("shelf item shows %q: %v", hidden, item)
			}
		}
	}
	for _, secret := range []string{"ada", "kim", "keep away", "staff only"} {
		if strings.Contains(string(r.body), secret) {
			t.Errorf("shelf body contains %q", secret)
		}
	}

	etag := r.header.Get("ETag")
	if etag == "" {
		t.Fatal("shelf has no ETag")
	}
	if again := a.do(http.MethodGet, "/v1/shelf", "", nil, "If-None-Match", etag); again.status != http.StatusNotModified || len(again.body) != 0 {
		t.Errorf("unchanged shelf with If-None-Match: %d %s", again.status, again.body)
	}
	a.created(a.staff, component("Fuse", "fuse"))
	if changed := a.do(http.MethodGet, "/v1/shelf", "", nil, "If-None-Match", etag); changed.status != http.StatusOK || changed.header.Get("ETag") == etag {
		t.Errorf("changed shelf with the old ETag: %d, ETag %q", changed.status, changed.header.Get("ETag"))
	}
}

// TestConcurrentPatchesLoseNothing sends merge patches of different fields
// at once with If-Match "*": each patch that succeeds must still be visible
// at the end, so none may be computed from a copy another one overwrote.
func TestConcurrentPatchesLoseNothing(t *testing.T) {
	a := startShelfAPI(t)
	c := a.created(a.owner, component("Drill pack", "battery"))
	path := fmt.Sprintf("/v1/components/%d", c.ID)
	fields := []string{"min_v", "max_v", "nominal_v", "current_a", "peak_a", "rated_v", "rating_v", "rating_a"}
	a.url("") // start serving before the goroutines share the harness
	statuses := make([]int, len(fields))
	var wg sync.WaitGroup
	for i, f := range fields {
		wg.Go(func() {
			req, _ := http.NewRequest(http.MethodPatch, a.url(path), strings.NewReader(fmt.Sprintf(`{%q: %d}`, f, i+1)))
			req.Header.Set("Authorization", "Bearer "+a.owner)
			req.Header.Set("If-Match", "*")
			req.Header.Set("Content-Type", "application/merge-patch+json")
			resp, err := http.DefaultClient.Do(req)
			if err != nil {
				t.Error(err)
				return
			}
			resp.Body.Close()
			statuses[i] = resp.StatusCode
		})
	}
	wg.Wait()
	var final map[string]any
	a.do(http.MethodGet, path, a.owner, nil).decode(t, &final)
	applied := 0
	for i, f := range fields {
		switch statuses[i] {
		case http.StatusOK:
			applied++
			if final[f] != float64(i+1) {
				t.Errorf("patch of %s answered 200 but is lost: %v", f, final[f])
			}
		case http.StatusPreconditionFailed:
		default:
			t.Errorf("patch of %s: status %d", f, statuses[i])
		}
	}
	if applied == 0 || final["version"] != float64(1+applied) {
		t.Errorf("%d patches applied, version %v", applied, final["version"])
	}
}
