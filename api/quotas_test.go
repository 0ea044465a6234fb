package api_test

import (
	"fmt"
	"net/http"
	"strconv"
	"strings"
	"testing"

	"wattshelf/domain/store"
)

// A small, valid design; its bytes are what the byte quota counts.
const quotaDesign = `{"format": 1, "name": "Quota lamp", "nodes": [
 {"id": "bench", "type": "supply", "output_v": 5, "max_a": 2},
 {"id": "lamp", "type": "load", "min_v": 4.5, "max_v": 5.5, "current_a": 0.5,
  "feed": {"from": "bench", "wire": {"gauge": "22AWG", "length_m": 0.5}}}]}`

func (a *shelfAPI) setQuotas(q store.Quotas) {
	a.t.Helper()
	if err := a.store.SetQuotas(a.t.Context(), "test", q); err != nil {
		a.t.Fatal(err)
	}
}

// createDesign stores quotaDesign as token's and returns its id.
func (a *shelfAPI) createDesign(token string) int64 {
	a.t.Helper()
	r := a.do(http.MethodPost, "/v1/designs", token, quotaDesign)
	if r.status != http.StatusCreated {
		a.t.Fatalf("create design: %d %s", r.status, r.body)
	}
	var d store.StoredDesign
	r.decode(a.t, &d)
	return d.ID
}

// wantQuota checks a quota problem: the status RFC 9110 gives the case
// (429 for a rate, section 15.5.4 of RFC 6585; 403 for a total, RFC 9110
// section 15.5.4) and the quota it names.
func wantQuota(t *testing.T, r reply, status int, kind, quota string) {
	t.Helper()
	p := wantProblem(t, r, status, kind)
	if p.Quota != quota || !strings.Contains(p.Detail, quota) {
		t.Errorf("problem names quota %q (detail %q), want %q", p.Quota, p.Detail, quota)
	}
}

func TestStoredReviewsPerHourQuota(t *testing.T) {
	a := startShelfAPI(t)
	a.setQuotas(store.Quotas{ReviewsPerHour: 2, Designs: 10, StoredBytes: 1 << 30})
	id := a.createDesign(a.owner)
	reviews := fmt.Sprintf("/v1/designs/%d/reviews", id)
	for i := range 2 {
		if r := a.do(http.MethodPost, reviews, a.owner, nil); r.status != http.StatusCreated {
			t.Fatalf("review %d within the quota: %d %s", i+1, r.status, r.body)
		}
	}
	r := a.do(http.MethodPost, reviews, a.owner, nil)
	wantQuota(t, r, http.StatusTooManyRequests, "quota-rate", store.QuotaReviewsPerHour)
	// RFC 9110 section 10.2.3: Retry-After in whole seconds; the oldest
	// review of the hour frees a place within the hour.
	if s, err := strconv.Atoi(r.header.Get("Retry-After")); err != nil || s < 1 || s > 3600 {
		t.Errorf("Retry-After %q, want 1 to 3600 seconds", r.header.Get("Retry-After"))
	}

	// Deleting the design does not give the hour's reviews back.
	if r := a.do(http.MethodDelete, fmt.Sprintf("/v1/designs/%d", id), a.owner, nil); r.status != http.StatusNoContent {
		t.Fatalf("delete: %d %s", r.status, r.body)
	}
	again := a.createDesign(a.owner)
	wantQuota(t, a.do(http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", again), a.owner, nil),
		http.StatusTooManyRequests, "quota-rate", store.QuotaReviewsPerHour)

	// Another member has a quota of their own, and staff have none.
	other := a.createDesign(a.other)
	if r := a.do(http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", other), a.other, nil); r.status != http.StatusCreated {
		t.Fatalf("another member's review: %d %s", r.status, r.body)
	}
	for i := range 3 {
		if r := a.do(http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", again), a.staff, nil); r.status != http.StatusCreated {
			t.Fatalf("staff review %d: %d %s", i+1, r.status, r.body)
		}
	}

	// A quota staff raise is seen at once: nothing is kept in memory.
	a.setQuotas(store.Quotas{ReviewsPerHour: 3, Designs: 10, StoredBytes: 1 << 30})
	if r := a.do(http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", again), a.owner, nil); r.status != http.StatusCreated {
		t.Fatalf("review after the quota was raised: %d %s", r.status, r.body)
	}
}

func TestDesignAndStoredBytesQuotas(t *testing.T) {
	a := startShelfAPI(t)
	a.setQuotas(store.Quotas{ReviewsPerHour: 100, Designs: 1, StoredBytes: 1 << 30})
	id := a.createDesign(a.owner)
	wantQuota(t, a.do(http.MethodPost, "/v1/designs", a.owner, quotaDesign), http.StatusForbidden, "quota-total", store.QuotaDesigns)
	a.createDesign(a.staff)
	a.createDesign(a.staff)

	// Room for the design and a little more, not for a stored review's
	// report and document.
	a.setQuotas(store.Quotas{ReviewsPerHour: 100, Designs: 10, StoredBytes: int64(len(quotaDesign)) + 100})
	reviews := fmt.Sprintf("/v1/designs/%d/reviews", id)
	wantQuota(t, a.do(http.MethodPost, reviews, a.owner, nil), http.StatusForbidden, "quota-total", store.QuotaStoredBytes)
	wantQuota(t, a.do(http.MethodPost, "/v1/designs", a.owner, quotaDesign), http.StatusForbidden, "quota-total", store.QuotaStoredBytes)
	if r := a.do(http.MethodPost, reviews, a.staff, nil); r.status != http.StatusCreated {
		t.Fatalf("staff review of the member's design: %d %s", r.status, r.body)
	}
	list, _, err := a.store.ReviewsOfDesign(t.Context(), id, 0, 10)
	if err != nil || len(list) != 1 || list[0].CreatedBy != "kim" {
		t.Fatalf("stored reviews %+v, %v: want only staff's", list, err)
	}
}

func TestAnonymousReviewBodyCapIsLowerThanAMembers(t *testing.T) {
	a := startShelfAPI(t)
	// Trailing white space is valid JSON (RFC 8259 section 2), so the
	// body is a real design either way, only larger than the anonymous cap.
	padded := quotaDesign + strings.Repeat(" ", 300<<10)
	wantProblem(t, a.do(http.MethodPost, "/v1/reviews", "", padded), http.StatusRequestEntityTooLarge, "too-large")
	// Without a Content-Length the cap holds as the body is read.
	wantProblem(t, a.do(http.MethodPost, "/v1/reviews", "", strings.NewReader(padded)), http.StatusRequestEntityTooLarge, "too-large")
	if r := a.do(http.MethodPost, "/v1/reviews", a.owner, padded); r.status != http.StatusOK {
		t.Fatalf("a member's review of the same body: %d %s", r.status, r.body)
	}
	if r := a.do(http.MethodPost, "/v1/reviews", "", quotaDesign); r.status != http.StatusOK {
		t.Fatalf("a small anonymous review: %d %s", r.status, r.body)
	}
}
