package api

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"mime"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"testing"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/getkin/kin-openapi/openapi3filter"
	"github.com/getkin/kin-openapi/routers"
	"github.com/getkin/kin-openapi/routers/gorillamux"

	"wattshelf/domain/review"
)

// loadOpenAPI loads and validates the embedded document.
func loadOpenAPI(t *testing.T) *openapi3.T {
	t.Helper()
	raw, err := OpenAPIDocument()
	if err != nil {
		t.Fatal(err)
	}
	loader := openapi3.NewLoader()
	doc, err := loader.LoadFromData(raw)
	if err != nil {
		t.Fatalf("load openapi.yaml: %v", err)
	}
	if err := doc.Validate(loader.Context); err != nil {
		t.Fatalf("openapi.yaml is not a valid OpenAPI 3 document: %v", err)
	}
	return doc
}

// TestOpenAPICoversEveryRoute holds the document and the router to the
// same set of routes, both ways.
func TestOpenAPICoversEveryRoute(t *testing.T) {
	doc := loadOpenAPI(t)
	h := newDesignHarness(t, Config{})
	registered := map[string]bool{}
	for _, r := range h.router.Routes() {
		if r.Method == echoRouteNotFound {
			continue
		}
		path := openAPIPath(r.Path)
		key := r.Method + " " + path
		registered[key] = true
		item := doc.Paths.Find(path)
		if item == nil || item.GetOperation(r.Method) == nil {
			t.Errorf("route %s is not in openapi.yaml", key)
		}
	}
	for path, item := range doc.Paths.Map() {
		for method := range item.Operations() {
			if !registered[method+" "+path] {
				t.Errorf("openapi.yaml documents %s %s, which the router does not serve", method, path)
			}
		}
	}
}

// echoRouteNotFound is the method echo lists a group's not-found
// handlers under; they are not routes anyone calls.
const echoRouteNotFound = "echo_route_not_found"

// openAPIPath turns echo's /v1/designs/:id into /v1/designs/{id}.
func openAPIPath(echoPath string) string {
	parts := strings.Split(echoPath, "/")
	for i, p := range parts {
		if name, ok := strings.CutPrefix(p, ":"); ok {
			parts[i] = "{" + name + "}"
		}
	}
	return strings.Join(parts, "/")
}

// openAPICheck sends requests through the router and checks each request
// and its response against the document.
type openAPICheck struct {
	t       *testing.T
	h       *designHarness
	router  routers.Router
	covered map[string]bool // operations answered with a 2xx
}

// textualMedia are the media types kin-openapi decodes; other bodies
// (pages, images, styles) are checked by their Content-Type alone.
var textualMedia = []string{"application/json", "application/problem+json", "application/yaml", "text/plain"}

func (oc *openAPICheck) send(method, target, who string, body []byte, want int, headers ...string) []byte {
	t := oc.t
	t.Helper()
	newReq := func() *http.Request {
		req := httptest.NewRequest(method, target, bytes.NewReader(body))
		req.RemoteAddr = "192.0.2.20:5555"
		if body != nil {
			req.Header.Set("Content-Type", "application/json")
		}
		if who != "" {
			req.Header.Set("Authorization", "Bearer "+oc.h.tokens[who])
		}
		for i := 0; i+1 < len(headers); i += 2 {
			req.Header.Set(headers[i], headers[i+1])
		}
		return req
	}
	req := newReq()
	route, params, err := oc.router.FindRoute(req)
	if err != nil {
		t.Fatalf("%s %s is not in openapi.yaml: %v", method, target, err)
	}
	in := &openapi3filter.RequestValidationInput{Request: req, PathParams: params, Route: route,
		Options: &openapi3filter.Options{AuthenticationFunc: openapi3filter.NoopAuthenticationFunc}}
	// Requests meant to be refused are sent as they are; the rest must
	// match the document, so its examples of use stay true.
	if want < 400 {
		if err := openapi3filter.ValidateRequest(t.Context(), in); err != nil {
			t.Fatalf("%s %s: the request does not match openapi.yaml: %v", method, target, err)
		}
	}
	rec := httptest.NewRecorder()
	oc.h.router.ServeHTTP(rec, newReq())
	if rec.Code != want {
		t.Fatalf("%s %s: status %d, want %d; body %.500s", method, target, rec.Code, want, rec.Body.String())
	}
	media, _, _ := mime.ParseMediaType(rec.Header().Get("Content-Type"))
	textual := media == "" || slices.Contains(textualMedia, media)
	out := &openapi3filter.ResponseValidationInput{
		RequestValidationInput: in, Status: rec.Code, Header: rec.Header(),
		Body:    io.NopCloser(bytes.NewReader(rec.Body.Bytes())),
		Options: &openapi3filter.Options{IncludeResponseStatus: true, ExcludeResponseBody: !textual},
	}
	if err := openapi3filter.ValidateResponse(t.Context(), out); err != nil {
		t.Fatalf("%s %s: the %d response does not match openapi.yaml: %v", method, target, rec.Code, err)
	}
	if !textual {
		documented := route.Operation.Responses.Status(rec.Code)
		if documented == nil || documented.Value.Content.Get(media) == nil {
			t.Fatalf("%s %s: a %d response of %s is not documented", method, target, rec.Code, media)
		}
	}
	if rec.Code < 400 { // a success, or the redirect a route exists for
		oc.covered[route.Method+" "+route.Path] = true
	}
	return rec.Body.Bytes()
}

func decodeInto(t *testing.T, body []byte, v any) {
	t.Helper()
	if err := json.Unmarshal(body, v); err != nil {
		t.Fatalf("decode %.300s: %v", body, err)
	}
}

// TestOpenAPIResponses sends a representative request to every route and
// checks request and response against the document.
func TestOpenAPIResponses(t *testing.T) {
	doc := loadOpenAPI(t)
	router, err := gorillamux.NewRouter(doc)
	if err != nil {
		t.Fatal(err)
	}
	h := newDesignHarness(t, Config{})
	if _, err := h.store.SeedDefaultLimits(t.Context()); err != nil {
		t.Fatal(err)
	}
	oc := &openAPICheck{t: t, h: h, router: router, covered: map[string]bool{}}
	const get, post, put, patch, del = http.MethodGet, http.MethodPost, http.MethodPut, http.MethodPatch, http.MethodDelete

	oc.send(get, "/healthz", "", nil, 200)
	oc.send(get, "/readyz", "", nil, 200)
	oc.send(get, "/metrics", "", nil, 200)
	oc.send(get, "/openapi.yaml", "", nil, 200)
	oc.send(get, "/v1/schemas/design.json", "", nil, 200)

	// The shelf.
	var motor struct{ ID int64 }
	decodeInto(t, oc.send(post, "/v1/components", "ada",
		[]byte(`{"name": "drill motor", "kind": "motor", "bin": "B2", "quantity": 1, "rated_v": 12, "stall_a": 4}`), 201), &motor)
	comp := fmt.Sprintf("/v1/components/%d", motor.ID)
	oc.send(get, "/v1/components?kind=motor&limit=10", "ada", nil, 200)
	oc.send(get, comp, "bo", nil, 200)
	oc.send(put, comp, "ada", []byte(`{"name": "drill motor", "kind": "motor", "bin": "B3", "rated_v": 12}`), 200, "If-Match", `"1"`)
	oc.send(patch, comp, "ada", []byte(`{"quantity": 2}`), 200, "If-Match", `"2"`)
	for _, p := range [][2]float64{{0.5, 5250}, {1, 4500}, {2, 3000}} {
		oc.send(post, comp+"/measurements", "bo", []byte(fmt.Sprintf(`{"voltage_v": 12, "current_a": %g, "speed_rpm": %g}`, p[0], p[1])), 201)
	}
	oc.send(get, comp+"/measurements", "ada", nil, 200)
	oc.send(get, comp+"/motor-fit", "ada", nil, 200)
	oc.send(get, comp+"/motor-fit?voltage_v=24", "ada", nil, 422)
	oc.send(get, "/v1/shelf", "", nil, 200)

	// Designs and reviews.
	var design struct{ ID int64 }
	decodeInto(t, oc.send(post, "/v1/designs", "ada", []byte(benchLampDesign), 201), &design)
	dpath := fmt.Sprintf("/v1/designs/%d", design.ID)
	oc.send(get, "/v1/designs", "rowan", nil, 200)
	oc.send(get, dpath, "ada", nil, 200)
	oc.send(get, dpath, "bo", nil, 403)
	oc.send(put, dpath, "ada", []byte(benchLampDesign), 200, "If-Match", `"1"`)
	oc.send(patch, dpath, "ada", []byte(`{"name": "Bench lamp two"}`), 200, "If-Match", `"2"`)
	var stored StoredReviewView
	decodeInto(t, oc.send(post, dpath+"/reviews", "ada", nil, 201), &stored)
	oc.send(get, dpath+"/reviews", "ada", nil, 200)
	oc.send(post, "/v1/reviews", "", []byte(overvoltDesign), 200)
	oc.send(post, "/v1/reviews?limits_version=1", "", []byte(benchLampDesign), 200)
	oc.send(post, "/v1/reviews?propose=1", "", []byte(overvoltDesign), 200)
	oc.send(post, "/v1/reviews?propose=1", "", []byte(heaterDesign), 200)
	oc.send(post, "/v1/reviews", "", []byte(`{"format": 1, "nodes": [{"id": "x", "type": "toaster"}]}`), 422)
	oc.send(post, "/v1/reviews", "", []byte(`{"format": 1,`), 400)

	// Limits.
	oc.send(get, "/v1/limits", "bo", nil, 200)
	oc.send(get, "/v1/limits/1", "bo", nil, 200)
	defaults := review.DefaultLimits()
	body, err := json.Marshal(LimitsInput{Limits: &defaults, Note: "the defaults again"})
	if err != nil {
		t.Fatal(err)
	}
	oc.send(put, "/v1/limits", "rowan", body, 201, "If-Match", `"1"`)
	oc.send(put, "/v1/limits", "bo", body, 403, "If-Match", `"2"`)

	// Pages.
	oc.send(get, "/", "", nil, 303)
	oc.send(get, "/shelf", "", nil, 200)
	oc.send(get, "/shelf?wall=1&q=drill&kind=motor&bin=B3&limit=5&every_s=3&idle_s=9", "", nil, 200)
	oc.send(get, fmt.Sprintf("/shelf/%d", motor.ID), "", nil, 200)
	oc.send(get, fmt.Sprintf("/shelf/%d/qr.svg", motor.ID), "", nil, 200)
	oc.send(get, fmt.Sprintf("/shelf/%d/qr.png", motor.ID), "", nil, 200)
	oc.send(get, "/reports/"+stored.ShareID, "", nil, 200)
	oc.send(get, "/reports/no-such-report", "", nil, 404)
	oc.send(get, "/reports/"+stored.ShareID+"/design.json", "", nil, 200)
	oc.send(get, "/reports/"+stored.ShareID+"/report.json", "", nil, 200)
	oc.send(get, "/reports/no-such-report/report.json", "", nil, 404)
	oc.send(get, "/assets/site.css", "", nil, 200)
	oc.send(get, "/assets/kiosk.js", "", nil, 200)

	// Deletions last: they take the records above with them.
	oc.send(del, dpath, "ada", nil, 204)
	oc.send(del, comp, "ada", nil, 204, "If-Match", `"3"`)

	for path, item := range doc.Paths.Map() {
		for method := range item.Operations() {
			if !oc.covered[method+" "+path] {
				t.Errorf("no request to %s %s was answered with a 2xx or 3xx in this test", method, path)
			}
		}
	}
}

// The document's list of check names is the engine's: a check added to
// one and not the other fails here.
func TestOpenAPIListsEveryCheck(t *testing.T) {
	doc := loadOpenAPI(t)
	check := doc.Components.Schemas["Report"].Value.Properties["checks"].Value.Items.Value.Properties["check"].Value
	var listed []string
	for _, e := range check.Enum {
		listed = append(listed, fmt.Sprint(e))
	}
	slices.Sort(listed)
	if want := review.CheckNames(); !slices.Equal(listed, want) {
		t.Errorf("openapi.yaml lists checks %v, the engine runs %v", listed, want)
	}
}
