package api

import (
	"context"
	"encoding/json"
	"errors"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

func TestLimitsVersionsThroughTheAPI(t *testing.T) {
	h := newDesignHarness(t, Config{})
	if _, err := h.store.SeedDefaultLimits(t.Context()); err != nil {
		t.Fatal(err)
	}
	var v1 store.LimitsSet
	rec := h.call(http.MethodGet, "/v1/limits", "bo", nil)
	h.expect(rec, http.StatusOK, &v1)
	if v1.Version != 1 || rec.Header().Get("ETag") != `"1"` {
		t.Fatalf("current limits v%d, ETag %s; want v1", v1.Version, rec.Header().Get("ETag"))
	}
	var limits review.Limits
	if err := json.Unmarshal(v1.Body, &limits); err != nil {
		t.Fatal(err)
	}
	// The seeded drop limits: 3 % critical, 10 % otherwise (DESIGN section 9, marine DC practice).
	if limits.VoltageDrop.CriticalPct.Value != 3 || limits.VoltageDrop.NonCriticalPct.Value != 10 {
		t.Fatalf("seeded drop limits %+v", limits.VoltageDrop)
	}
	h.expect(h.call(http.MethodGet, "/v1/limits", "", nil), http.StatusUnauthorized, nil)

	// Tighten the critical drop limit to 2 %.
	tighter := limits
	tighter.VoltageDrop.CriticalPct = review.Sourced{Value: 2, Source: "the space's own rule for camera rigs"}
	body, err := json.Marshal(LimitsInput{Limits: &tighter, Note: "tighter drop for cameras"})
	if err != nil {
		t.Fatal(err)
	}
	h.expect(h.call(http.MethodPut, "/v1/limits", "bo", body, "If-Match", `"1"`), http.StatusForbidden, nil)
	h.expect(h.call(http.MethodPut, "/v1/limits", "", body, "If-Match", `"1"`), http.StatusUnauthorized, nil)
	h.expect(h.call(http.MethodPut, "/v1/limits", "rowan", body), http.StatusPreconditionRequired, nil)

	invalid := limits
	invalid.Policy.UtilisationPct = review.Sourced{Value: -80, Source: "typo"}
	bad, _ := json.Marshal(LimitsInput{Limits: &invalid})
	rec = h.call(http.MethodPut, "/v1/limits", "rowan", bad, "If-Match", `"1"`)
	h.expect(rec, http.StatusUnprocessableEntity, nil)
	var p Problem
	if err := json.Unmarshal(rec.Body.Bytes(), &p); err != nil || len(p.Errors) == 0 || !strings.HasPrefix(p.Errors[0].Pointer, "/limits/policy") {
		t.Fatalf("invalid limits problem %s, want pointers under /limits/policy", rec.Body.String())
	}
	h.expect(h.call(http.MethodPut, "/v1/limits", "rowan", []byte(`{"note": "no limits"}`), "If-Match", `"1"`), http.StatusUnprocessableEntity, nil)
	h.expect(h.call(http.MethodPut, "/v1/limits", "rowan", []byte(`{"limits": {}, "extra": 1}`), "If-Match", `"1"`), http.StatusUnprocessableEntity, nil)
	h.expect(h.call(http.MethodPut, "/v1/limits", "rowan", []byte(`{"limits": `), "If-Match", `"1"`), http.StatusBadRequest, nil)

	var v2 store.LimitsSet
	rec = h.call(http.MethodPut, "/v1/limits", "rowan", body, "If-Match", `"1"`)
	h.expect(rec, http.StatusCreated, &v2)
	if v2.Version != 2 || v2.CreatedBy != "rowan" || v2.Note != "tighter drop for cameras" || rec.Header().Get("Location") != "/v1/limits/2" {
		t.Fatalf("put made %+v at %s", v2, rec.Header().Get("Location"))
	}
	// A second change from the same stale copy is refused.
	h.expect(h.call(http.MethodPut, "/v1/limits", "rowan", body, "If-Match", `"1"`), http.StatusPreconditionFailed, nil)

	var old store.LimitsSet
	h.expect(h.call(http.MethodGet, "/v1/limits/1", "ada", nil), http.StatusOK, &old)
	var oldLimits review.Limits
	if err := json.Unmarshal(old.Body, &oldLimits); err != nil || oldLimits.VoltageDrop.CriticalPct.Value != 3 {
		t.Fatalf("version 1 after the put: %+v, %v; want it unchanged", oldLimits.VoltageDrop, err)
	}
	h.expect(h.call(http.MethodGet, "/v1/limits/3", "ada", nil), http.StatusNotFound, nil)
	h.expect(h.call(http.MethodGet, "/v1/limits/latest", "ada", nil), http.StatusNotFound, nil)

	// Reviews use the new version at once, and the old one on request:
	// the bench lamp's 2.49 % drop passes under 3 % and warns under 2 %.
	var rep review.Report
	h.expect(h.call(http.MethodPost, "/v1/reviews", "", []byte(benchLampDesign)), http.StatusOK, &rep)
	if rep.LimitsVersion != 2 || checkStatus(t, rep, review.CheckWireDrop, "lamp") != review.Warn || rep.Status != review.Warn {
		t.Fatalf("under v2: limits v%d, drop %s, status %s; want v2, warn, warn",
			rep.LimitsVersion, checkStatus(t, rep, review.CheckWireDrop, "lamp"), rep.Status)
	}
	h.expect(h.call(http.MethodPost, "/v1/reviews?limits_version=1", "", []byte(benchLampDesign)), http.StatusOK, &rep)
	if rep.LimitsVersion != 1 || checkStatus(t, rep, review.CheckWireDrop, "lamp") != review.Pass {
		t.Fatalf("under v1: limits v%d, drop %s; want v1 and pass", rep.LimitsVersion, checkStatus(t, rep, review.CheckWireDrop, "lamp"))
	}

	trail, err := h.store.AuditTrail(t.Context(), "limits", "2", 5)
	if err != nil || len(trail) != 1 || trail[0].Action != "limits.put" || trail[0].Actor != "rowan" {
		t.Fatalf("audit of v2: %+v, %v", trail, err)
	}
}

// fakeLimitsStore counts the queries the cache makes.
type fakeLimitsStore struct {
	current, currentCalls, limitsCalls int
}

func (f *fakeLimitsStore) CurrentLimitsVersion(ctx context.Context) (int, error) {
	f.currentCalls++
	return f.current, nil
}

func (f *fakeLimitsStore) Limits(ctx context.Context, v int) (store.LimitsSet, error) {
	f.limitsCalls++
	body, _ := json.Marshal(review.DefaultLimits())
	return store.LimitsSet{Version: v, Body: body}, nil
}

func TestLimitsCacheQueries(t *testing.T) {
	now := time.Date(2026, 1, 1, 12, 0, 0, 0, time.UTC)
	fake := &fakeLimitsStore{current: 1}
	lc := newLimitsCache(fake, func() time.Time { return now })
	for range 100 {
		if _, v, err := lc.get(t.Context(), 0); err != nil || v != 1 {
			t.Fatalf("get current: v%d, %v", v, err)
		}
	}
	if fake.currentCalls != 1 || fake.limitsCalls != 1 {
		t.Fatalf("100 reviews cost %d version and %d limits queries, want 1 and 1", fake.currentCalls, fake.limitsCalls)
	}
	// Another replica stores version 2: noticed once the TTL has passed.
	fake.current = 2
	if _, v, _ := lc.get(t.Context(), 0); v != 1 {
		t.Fatalf("within the TTL the cache answered v%d, want the cached v1", v)
	}
	now = now.Add(currentLimitsTTL + time.Second)
	if _, v, _ := lc.get(t.Context(), 0); v != 2 {
		t.Fatalf("after the TTL the cache answered v%d, want v2", v)
	}
	// A PUT on this replica is current at once, with no query.
	lc.remember(3, review.DefaultLimits())
	calls := fake.currentCalls + fake.limitsCalls
	if _, v, _ := lc.get(t.Context(), 0); v != 3 || fake.currentCalls+fake.limitsCalls != calls {
		t.Fatalf("after remember(3): v%d with %d more queries", v, fake.currentCalls+fake.limitsCalls-calls)
	}
}

// TestReadingLimitsNeverStoresThem: on a database where nothing stored
// the default limits, reading them is a 404 and reviewing a 503, and the
// database still holds no limits afterwards; serve and migrate up store
// them.
func TestReadingLimitsNeverStoresThem(t *testing.T) {
	st, _ := storetest.NewStore(t)
	router, err := New(Config{Store: st, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)), Registry: prometheus.NewRegistry()})
	if err != nil {
		t.Fatal(err)
	}
	secret, err := st.CreateToken(t.Context(), "test", "kim", domain.RoleStaff)
	if err != nil {
		t.Fatal(err)
	}
	for _, route := range []struct {
		method, path, body string
		status             int
		problem            string
	}{
		{http.MethodGet, "/v1/limits", "", http.StatusNotFound, "problem:not-found"},
		{http.MethodPost, "/v1/reviews", benchLampDesign, http.StatusServiceUnavailable, "problem:unavailable"},
	} {
		req := httptest.NewRequest(route.method, route.path, strings.NewReader(route.body))
		req.Header.Set("Authorization", "Bearer "+secret)
		req.Header.Set("Content-Type", "application/json")
		rec := httptest.NewRecorder()
		router.ServeHTTP(rec, req)
		if rec.Code != route.status || !strings.Contains(rec.Body.String(), route.problem) {
			t.Errorf("%s %s with no limits stored: %d %s, want %d %s", route.method, route.path, rec.Code, rec.Body.String(),
				route.status, route.problem)
		}
	}
	if v, err := st.CurrentLimitsVersion(t.Context()); !errors.Is(err, domain.ErrNotFound) {
		t.Errorf("after the reads the database holds limits version %d (%v), want none", v, err)
	}
}

// A value staff change without writing a source of their own is stored
// citing their change and the published rule it departs from, so reports
// no longer cite a 3 % rule for a 2 % limit.
func TestLimitsEditCitesTheStaffChange(t *testing.T) {
	h := newDesignHarness(t, Config{})
	if _, err := h.store.SeedDefaultLimits(t.Context()); err != nil {
		t.Fatal(err)
	}
	var v1 store.LimitsSet
	h.expect(h.call(http.MethodGet, "/v1/limits", "rowan", nil), http.StatusOK, &v1)
	var limits review.Limits
	if err := json.Unmarshal(v1.Body, &limits); err != nil {
		t.Fatal(err)
	}
	limits.VoltageDrop.CriticalPct.Value = 2 // the source text left as it was
	body, err := json.Marshal(LimitsInput{Limits: &limits, Note: "tighter drop"})
	if err != nil {
		t.Fatal(err)
	}
	var v2 store.LimitsSet
	h.expect(h.call(http.MethodPut, "/v1/limits", "rowan", body, "If-Match", `"1"`), http.StatusCreated, &v2)
	var stored review.Limits
	if err := json.Unmarshal(v2.Body, &stored); err != nil {
		t.Fatal(err)
	}
	src := stored.VoltageDrop.CriticalPct.Source
	if !strings.HasPrefix(src, "staff change by rowan on ") || !strings.Contains(src, "was 3 under marine DC wiring practice") {
		t.Errorf("the edited limit's source is %q", src)
	}
	if stored.VoltageDrop.NonCriticalPct != limits.VoltageDrop.NonCriticalPct {
		t.Errorf("an unchanged limit's source changed: %+v", stored.VoltageDrop.NonCriticalPct)
	}
}
