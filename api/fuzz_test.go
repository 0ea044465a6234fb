package api

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"log/slog"
	"math"
	"net/http"
	"net/http/httptest"
	"net/url"
	"slices"
	"strings"
	"testing"

	"github.com/labstack/echo/v4"
	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/domain"
	"wattshelf/domain/store/storetest"
)

// fuzzRouter is the real router on a database of the fuzz run's own,
// with a staff token and the router's cursor codec.
func fuzzRouter(f *testing.F) (*echo.Echo, string, cursorCodec) {
	f.Helper()
	st, _ := storetest.NewStore(f)
	router, err := New(Config{Store: st, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)), Registry: prometheus.NewRegistry()})
	if err != nil {
		f.Fatal(err)
	}
	token, err := st.CreateToken(context.Background(), "fuzz", "fuzz-staff", domain.RoleStaff)
	if err != nil {
		f.Fatal(err)
	}
	key, err := st.CursorKey(context.Background())
	if err != nil {
		f.Fatal(err)
	}
	return router, token, cursorCodec{key: key}
}

// fuzzCall sends a request for path with the query exactly as given.
func fuzzCall(router *echo.Echo, token, method, path, rawQuery string, body []byte, headers ...string) *httptest.ResponseRecorder {
	req := httptest.NewRequest(method, path, bytes.NewReader(body))
	req.URL.RawQuery = rawQuery
	req.Header.Set("Content-Type", "application/json")
	if token != "" {
		req.Header.Set("Authorization", "Bearer "+token)
	}
	for i := 0; i+1 < len(headers); i += 2 {
		req.Header.Set(headers[i], headers[i+1])
	}
	rec := httptest.NewRecorder()
	router.ServeHTTP(rec, req)
	return rec
}

// FuzzComponentPayload sends arbitrary bytes as a component through the
// router, as a create and as a merge patch. The answer is a success or a
// 4xx problem, never a 5xx; what is stored validates and reads back the
// same.
func FuzzComponentPayload(f *testing.F) {
	f.Add([]byte(`{"name": "Gear motor", "kind": "motor", "rated_v": 7.2, "stall_a": 9.5}`))
	router, token, _ := fuzzRouter(f)
	target := fuzzCall(router, token, http.MethodPost, "/v1/components", "", []byte(`{"name": "Patch target", "kind": "light"}`))
	if target.Code != http.StatusCreated {
		f.Fatalf("create the patch target: %d %s", target.Code, target.Body)
	}
	var patched domain.Component
	if err := json.Unmarshal(target.Body.Bytes(), &patched); err != nil {
		f.Fatal(err)
	}
	patchPath := fmt.Sprintf("/v1/components/%d", patched.ID)

	f.Fuzz(func(t *testing.T, body []byte) {
		for _, call := range []struct{ method, path string }{{http.MethodPost, "/v1/components"}, {http.MethodPatch, patchPath}} {
			rec := fuzzCall(router, token, call.method, call.path, "", body, "If-Match", "*")
			switch rec.Code {
			case http.StatusCreated, http.StatusOK:
				var c domain.Component
				if err := json.Unmarshal(rec.Body.Bytes(), &c); err != nil {
					t.Fatalf("%s answered %d with %s: %v", call.method, rec.Code, rec.Body, err)
				}
				if err := c.ComponentInput.Validate(); err != nil {
					t.Fatalf("%s stored a component that does not validate: %v", call.method, err)
				}
				back := fuzzCall(router, token, http.MethodGet, fmt.Sprintf("/v1/components/%d", c.ID), "", nil)
				var stored domain.Component
				if back.Code != http.StatusOK || json.Unmarshal(back.Body.Bytes(), &stored) != nil {
					t.Fatalf("read back component %d: %d %s", c.ID, back.Code, back.Body)
				}
				a, _ := json.Marshal(c)
				b, _ := json.Marshal(stored)
				if !bytes.Equal(a, b) {
					t.Fatalf("component %d answered %s but reads back %s", c.ID, a, b)
				}
			case http.StatusBadRequest, http.StatusRequestEntityTooLarge, http.StatusUnprocessableEntity:
				var p Problem
				if err := json.Unmarshal(rec.Body.Bytes(), &p); err != nil || p.Status != rec.Code || p.Type == "" {
					t.Fatalf("%s answered %d without a problem document: %s", call.method, rec.Code, rec.Body)
				}
			default:
				t.Fatalf("%s of %q answered %d: %s", call.method, body, rec.Code, rec.Body)
			}
		}
	})
}

// FuzzComponentFilter reads arbitrary query strings as the component
// listing's filters, then sends them through the router to the listing
// and the public shelf. A filter that parses is within its bounds and
// lists (200); anything else is a 400 problem, never a 5xx.
func FuzzComponentFilter(f *testing.F) {
	f.Add("kind=motor&fits_v=12&q=gear&limit=20")
	router, token, cursors := fuzzRouter(f)
	for _, c := range []string{
		`{"name": "Gear motor", "kind": "motor", "bin": "M1", "rated_v": 12, "min_v": 4, "max_v": 13.8}`,
		`{"name": "100% duty fan", "kind": "motor", "bin": "M_2", "description": "quote ' and backslash \\"}`,
	} {
		if rec := fuzzCall(router, token, http.MethodPost, "/v1/components", "", []byte(c)); rec.Code != http.StatusCreated {
			f.Fatalf("seed component: %d %s", rec.Code, rec.Body)
		}
	}

	f.Fuzz(func(t *testing.T, rawQuery string) {
		values, parseErr := url.ParseQuery(rawQuery)
		if parseErr == nil {
			filter, err := parseComponentFilter(values.Get, cursors)
			if err == nil {
				if filter.Limit < 1 || filter.Limit > maxPageSize {
					t.Fatalf("limit %d out of bounds", filter.Limit)
				}
				if filter.Kind != "" && !slices.Contains(domain.ComponentKinds(), filter.Kind) {
					t.Fatalf("kind %q accepted", filter.Kind)
				}
				if filter.FitsV != nil && (math.IsNaN(*filter.FitsV) || *filter.FitsV < 0 || *filter.FitsV > domain.MaxVoltageV) {
					t.Fatalf("fits_v %v accepted", *filter.FitsV)
				}
				if filter.AfterID < 0 || len(filter.Query) > domain.MaxNameLen || len(filter.Bin) > domain.MaxShortFieldLen {
					t.Fatalf("filter out of bounds: %+v", filter)
				}
			}
		}
		if strings.ContainsFunc(rawQuery, func(r rune) bool { return r <= ' ' || r == 0x7f || r == '#' }) {
			return // not a request line any client could send
		}
		for _, path := range []string{"/v1/components", "/v1/shelf"} {
			rec := fuzzCall(router, token, http.MethodGet, path, rawQuery, nil)
			if rec.Code != http.StatusOK && rec.Code != http.StatusBadRequest {
				t.Fatalf("GET %s?%s answered %d: %s", path, rawQuery, rec.Code, rec.Body)
			}
			if rec.Code == http.StatusOK && path == "/v1/components" && parseErr == nil {
				if _, err := parseComponentFilter(values.Get, cursors); err != nil {
					t.Fatalf("GET %s?%s listed although the filter is refused: %v", path, rawQuery, err)
				}
			}
		}
	})
}
