package api

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"log/slog"
	"math"
	"net/http"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/domain/review"
	"wattshelf/domain/store"
)

func TestStoredReviews(t *testing.T) {
	h := newDesignHarness(t, Config{PublicBaseURL: "http://shelf.example"})
	var d store.StoredDesign
	h.expect(h.call(http.MethodPost, "/v1/designs", "ada", []byte(benchLampDesign)), http.StatusCreated, &d)
	reviews := fmt.Sprintf("/v1/designs/%d/reviews", d.ID)

	// Only the owner and staff may review or read the reviews.
	h.expect(h.call(http.MethodPost, reviews, "bo", nil), http.StatusForbidden, nil)
	h.expect(h.call(http.MethodGet, reviews, "bo", nil), http.StatusForbidden, nil)
	h.expect(h.call(http.MethodPost, reviews, "", nil), http.StatusUnauthorized, nil)
	h.expect(h.call(http.MethodPost, "/v1/designs/999/reviews", "ada", nil), http.StatusNotFound, nil)

	shareID := regexp.MustCompile(`^[A-Za-z0-9_-]{24}$`)
	var made []StoredReviewView
	for _, who := range []string{"ada", "rowan", "ada"} {
		var r StoredReviewView
		rec := h.call(http.MethodPost, reviews, who, nil)
		h.expect(rec, http.StatusCreated, &r)
		if !shareID.MatchString(r.ShareID) {
			t.Fatalf("share id %q is not 24 URL-safe characters (144 random bits)", r.ShareID)
		}
		if want := "http://shelf.example/reports/" + r.ShareID; r.ReportURL != want || rec.Header().Get("Location") != want {
			t.Fatalf("report url %q, Location %q; want %q", r.ReportURL, rec.Header().Get("Location"), want)
		}
		if r.DocumentSHA256 != store.DocumentDigest([]byte(benchLampDesign)) || r.CreatedBy != who || r.LimitsVersion != 1 {
			t.Fatalf("review %+v: wrong digest, author or limits version", r.StoredReview)
		}
		var rep review.Report
		if err := json.Unmarshal(r.Report, &rep); err != nil {
			t.Fatal(err)
		}
		if rep.Status != review.Pass || string(rep.Status) != r.Status || rep.LimitsVersion != 1 {
			t.Fatalf("report status %s (stored %s), limits v%d; want pass under v1", rep.Status, r.Status, rep.LimitsVersion)
		}
		if got := checkValue(t, rep, review.CheckWireDrop, "lamp"); math.Abs(got-benchLampDropPct) > 0.01*benchLampDropPct {
			t.Fatalf("wire.drop to lamp = %g %%, want %g %% (worked by hand beside benchLampDesign)", got, benchLampDropPct)
		}
		made = append(made, r)
	}
	if made[0].ShareID == made[1].ShareID || made[1].ShareID == made[2].ShareID || made[0].ShareID == made[2].ShareID {
		t.Fatal("two reviews got the same share id")
	}

	var page ReviewPage
	h.expect(h.call(http.MethodGet, reviews+"?limit=2", "rowan", nil), http.StatusOK, &page)
	if len(page.Items) != 2 || page.Items[0].ID != made[2].ID || page.Items[1].ID != made[1].ID || page.Next == "" {
		t.Fatalf("first page %+v, want the two newest, newest first, and a cursor", page)
	}
	var rest ReviewPage
	h.expect(h.call(http.MethodGet, reviews+"?limit=2&cursor="+page.Next, "ada", nil), http.StatusOK, &rest)
	if len(rest.Items) != 1 || rest.Items[0].ID != made[0].ID || rest.Next != "" {
		t.Fatalf("second page %+v, want the oldest review alone", rest)
	}

	// The share id opens the stored review without any token.
	shared, err := h.store.ReviewByShareID(t.Context(), made[1].ShareID)
	if err != nil || shared.ID != made[1].ID {
		t.Fatalf("ReviewByShareID: %+v, %v", shared, err)
	}

	// A stored design that no longer reviews (its part left the shelf)
	// is a 422 naming the node, and no review is stored.
	withPart := []byte(`{"format": 1, "name": "Needs a part", "nodes": [
		{"id": "bench", "type": "supply", "output_v": 5, "max_a": 2},
		{"id": "lamp", "type": "load", "component_id": 31337,
		 "feed": {"from": "bench", "wire": {"gauge": "24AWG", "length_m": 0.5}}}]}`)
	var orphan store.StoredDesign
	h.expect(h.call(http.MethodPost, "/v1/designs", "ada", withPart), http.StatusCreated, &orphan)
	rec := h.call(http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", orphan.ID), "ada", nil)
	h.expect(rec, http.StatusUnprocessableEntity, nil)
	var empty ReviewPage
	h.expect(h.call(http.MethodGet, fmt.Sprintf("/v1/designs/%d/reviews", orphan.ID), "ada", nil), http.StatusOK, &empty)
	if len(empty.Items) != 0 {
		t.Fatalf("a failed review was stored: %+v", empty.Items)
	}
}

func TestAnonymousReview(t *testing.T) {
	h := newDesignHarness(t, Config{})
	var rep review.Report
	rec := h.call(http.MethodPost, "/v1/reviews", "", []byte(overvoltDesign))
	h.expect(rec, http.StatusOK, &rep)
	if rep.Status != review.Fail || rep.LimitsVersion != 1 || len(rep.Cautions) == 0 {
		t.Fatalf("status %s under v%d with %d cautions; want fail under v1 with the cautions", rep.Status, rep.LimitsVersion, len(rep.Cautions))
	}
	if got := checkStatus(t, rep, review.CheckVoltageRange, "sensor"); got != review.Fail {
		t.Fatalf("voltage.range of sensor = %s, want fail: 14 V reaches a 5.5 V part", got)
	}
	// A database nobody prepared got the defaults as version 1 on first use.
	if v, err := h.store.CurrentLimitsVersion(t.Context()); err != nil || v != 1 {
		t.Fatalf("current limits version %d, %v; want 1", v, err)
	}
	// Nothing is stored by an anonymous review.
	if list, _, err := h.store.ListDesigns(t.Context(), store.DesignFilter{}); err != nil || len(list) != 0 {
		t.Fatalf("designs after an anonymous review: %d, %v", len(list), err)
	}
	h.expect(h.call(http.MethodPost, "/v1/reviews?limits_version=2", "", []byte(overvoltDesign)), http.StatusBadRequest, nil)
	h.expect(h.call(http.MethodPost, "/v1/reviews?limits_version=one", "", []byte(overvoltDesign)), http.StatusBadRequest, nil)
}

func TestAnonymousReviewRateLimit(t *testing.T) {
	h := newDesignHarness(t, Config{ReviewsPerMinute: 1, ReviewBurst: 2})
	doc := []byte(benchLampDesign)
	for range 2 {
		h.expect(h.callFrom("198.51.100.7:1000", http.MethodPost, "/v1/reviews", "", doc), http.StatusOK, nil)
	}
	// Forwarding headers are anyone's to write; they do not buy a new bucket.
	rec := h.callFrom("198.51.100.7:1001", http.MethodPost, "/v1/reviews", "", doc, "X-Forwarded-For", "203.0.113.9")
	h.expect(rec, http.StatusTooManyRequests, nil)
	var p Problem
	if err := json.Unmarshal(rec.Body.Bytes(), &p); err != nil || p.Type != ProblemTypePrefix+"rate-limited" {
		t.Fatalf("429 body %s is not the rate-limited problem", rec.Body.String())
	}
	// One review a minute: the next token is a minute away.
	retry, err := strconv.Atoi(rec.Header().Get("Retry-After"))
	if err != nil || retry < 55 || retry > 60 {
		t.Fatalf("Retry-After %q, want about 60 seconds", rec.Header().Get("Retry-After"))
	}
	// Another address, and a token holder at the same address, have buckets of their own.
	h.expect(h.callFrom("198.51.100.8:1000", http.MethodPost, "/v1/reviews", "", doc), http.StatusOK, nil)
	h.expect(h.callFrom("198.51.100.7:1002", http.MethodPost, "/v1/reviews", "ada", doc), http.StatusOK, nil)
	// IPv6 clients are counted by their /64.
	h.expect(h.callFrom("[2001:db8::1]:1000", http.MethodPost, "/v1/reviews", "", doc), http.StatusOK, nil)
	h.expect(h.callFrom("[2001:db8::2]:1000", http.MethodPost, "/v1/reviews", "", doc), http.StatusOK, nil)
	h.expect(h.callFrom("[2001:db8::3]:1000", http.MethodPost, "/v1/reviews", "", doc), http.StatusTooManyRequests, nil)
}

// Behind a trusted reverse proxy every request arrives from the proxy; the
// limit follows the client the proxy names instead.
func TestAnonymousReviewRateLimitBehindAProxy(t *testing.T) {
	proxies, err := ParseTrustedProxies("10.0.0.2")
	if err != nil {
		t.Fatal(err)
	}
	h := newDesignHarness(t, Config{ReviewsPerMinute: 1, ReviewBurst: 1, TrustedProxies: proxies})
	doc := []byte(benchLampDesign)
	h.expect(h.callFrom("10.0.0.2:1000", http.MethodPost, "/v1/reviews", "", doc, "X-Forwarded-For", "198.51.100.7"), http.StatusOK, nil)
	h.expect(h.callFrom("10.0.0.2:1001", http.MethodPost, "/v1/reviews", "", doc, "X-Forwarded-For", "198.51.100.7"), http.StatusTooManyRequests, nil)
	h.expect(h.callFrom("10.0.0.2:1002", http.MethodPost, "/v1/reviews", "", doc, "X-Forwarded-For", "198.51.100.8"), http.StatusOK, nil)
	// A client cannot escape its bucket by writing the header itself: the
	// proxy appends the address it saw, and that is the one counted.
	h.expect(h.callFrom("10.0.0.2:1003", http.MethodPost, "/v1/reviews", "", doc, "X-Forwarded-For", "203.0.113.50, 198.51.100.7"), http.StatusTooManyRequests, nil)
}

func checkValue(t *testing.T, rep review.Report, check, node string) float64 {
	t.Helper()
	for _, c := range rep.Checks {
		if c.Check == check && c.Node == node && c.Value != nil {
			return *c.Value
		}
	}
	t.Fatalf("no %s check on %s in the report", check, node)
	return 0
}

func checkStatus(t *testing.T, rep review.Report, check, node string) review.Status {
	t.Helper()
	for _, c := range rep.Checks {
		if c.Check == check && c.Node == node {
			return c.Status
		}
	}
	t.Fatalf("no %s check on %s in the report", check, node)
	return ""
}

// A shared report draws the document it reviewed, even after the design
// was rewritten; a review of the new text draws the new one.
func TestSharedReportShowsTheReviewedDocument(t *testing.T) {
	h := newDesignHarness(t, Config{})
	withConnector := func(family string, amps int) []byte {
		return []byte(strings.Replace(benchLampDesign, `"distance_from_source_m": 0.05}`,
			fmt.Sprintf(`"distance_from_source_m": 0.05}, "connectors": [{"family": %q, "rating_a": %d}]`, family, amps), 1))
	}
	var d store.StoredDesign
	h.expect(h.call(http.MethodPost, "/v1/designs", "ada", withConnector("spade-terminal", 15)), http.StatusCreated, &d)
	reviews := fmt.Sprintf("/v1/designs/%d/reviews", d.ID)
	var before StoredReviewView
	h.expect(h.call(http.MethodPost, reviews, "ada", nil), http.StatusCreated, &before)

	h.expect(h.call(http.MethodPut, fmt.Sprintf("/v1/designs/%d", d.ID), "ada", withConnector("barrel-plug", 5),
		"If-Match", `"1"`), http.StatusOK, nil)
	var after StoredReviewView
	h.expect(h.call(http.MethodPost, reviews, "ada", nil), http.StatusCreated, &after)

	for _, c := range []struct {
		shareID   string
		want, not string
	}{{before.ShareID, "spade-terminal 15 A", "barrel-plug"}, {after.ShareID, "barrel-plug 5 A", "spade-terminal"}} {
		rec := h.call(http.MethodGet, "/reports/"+c.shareID, "", nil)
		page := rec.Body.String()
		if rec.Code != http.StatusOK || !strings.Contains(page, ">"+c.want+"</text>") || strings.Contains(page, c.not) {
			t.Errorf("report %s (status %d): want the connector %q and no %q", c.shareID, rec.Code, c.want, c.not)
		}
		// The fuse's speed is only in the document.
		if !strings.Contains(page, ">fuse 1 A fast</text>") {
			t.Errorf("report %s does not label the fuse with its speed", c.shareID)
		}
	}
}

// TestStoredReviewFollowsAnotherReplica reviews a design on one router,
// changes it through a second router on the
// same database, and reviews it on the first again: the stored review must
// be of the changed document, and of nothing once the design is deleted.
func TestStoredReviewFollowsAnotherReplica(t *testing.T) {
	h := newDesignHarness(t, Config{})
	other, err := store.Open(context.Background(), h.dbURL)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(other.Close)
	replica := &designHarness{t: t, store: other, tokens: h.tokens}
	if replica.router, err = New(Config{Store: other, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)),
		Registry: prometheus.NewRegistry()}); err != nil {
		t.Fatal(err)
	}
	var d store.StoredDesign
	h.expect(h.call(http.MethodPost, "/v1/designs", "ada", []byte(benchLampDesign)), http.StatusCreated, &d)
	reviews := fmt.Sprintf("/v1/designs/%d/reviews", d.ID)
	var first, after StoredReviewView
	h.expect(h.call(http.MethodPost, reviews, "ada", nil), http.StatusCreated, &first)
	if first.Status != "pass" || first.DocumentSHA256 != store.DocumentDigest([]byte(benchLampDesign)) {
		t.Fatalf("first review: status %s, digest %s; want pass of the bench lamp", first.Status, first.DocumentSHA256)
	}

	replica.expect(replica.call(http.MethodPut, fmt.Sprintf("/v1/designs/%d", d.ID), "ada", []byte(overvoltDesign),
		"If-Match", "*"), http.StatusOK, nil)
	h.expect(h.call(http.MethodPost, reviews, "ada", nil), http.StatusCreated, &after)
	// overvoltDesign puts 14 V on a 5.5 V part: a fail (DESIGN section 7).
	if after.Status != "fail" || after.DocumentSHA256 != store.DocumentDigest([]byte(overvoltDesign)) {
		t.Fatalf("review after the edit on the other router: status %s, digest %s; want fail of the new document",
			after.Status, after.DocumentSHA256)
	}
	// Staff may review any design; bo may not.
	h.expect(h.call(http.MethodPost, reviews, "bo", nil), http.StatusForbidden, nil)
	h.expect(h.call(http.MethodPost, reviews, "rowan", nil), http.StatusCreated, nil)

	replica.expect(replica.call(http.MethodDelete, fmt.Sprintf("/v1/designs/%d", d.ID), "ada", nil), http.StatusNoContent, nil)
	h.expect(h.call(http.MethodPost, reviews, "ada", nil), http.StatusNotFound, nil)
}
