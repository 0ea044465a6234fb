package api_test

import (
	"fmt"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
	"wattshelf/domain/store"
)

// storeReview stores design as token's and a review of it, and returns
// the review.
func (a *shelfAPI) storeReview(token string, design []byte) store.StoredReview {
	a.t.Helper()
	r := a.do(http.MethodPost, "/v1/designs", token, string(design))
	if r.status != http.StatusCreated {
		a.t.Fatalf("create design: %d %.300s", r.status, r.body)
	}
	var d store.StoredDesign
	r.decode(a.t, &d)
	r = a.do(http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", d.ID), token, nil)
	if r.status != http.StatusCreated {
		a.t.Fatalf("store review: %d %.300s", r.status, r.body)
	}
	var rev store.StoredReview
	r.decode(a.t, &rev)
	return rev
}

func TestReportPageETag(t *testing.T) {
	a := startShelfAPI(t)
	rev := a.storeReview(a.owner, []byte(quotaDesign))
	page := "/reports/" + rev.ShareID
	first := a.do(http.MethodGet, page, "", nil)
	tag := first.header.Get("ETag")
	// RFC 9110 section 8.8.3: a strong tag is a quoted opaque string.
	if first.status != http.StatusOK || !regexp.MustCompile(`^"[A-Za-z0-9_-]+"$`).MatchString(tag) {
		t.Fatalf("first view: %d with ETag %q, want 200 and a strong tag", first.status, tag)
	}
	// RFC 9110 section 13.1.2: If-None-Match compares weakly, takes a list
	// and "*"; a match is 304 without a body (section 15.4.5).
	for _, field := range []string{tag, "W/" + tag, `"other", ` + tag, "*"} {
		r := a.do(http.MethodGet, page, "", nil, "If-None-Match", field)
		if r.status != http.StatusNotModified || len(r.body) != 0 || r.header.Get("ETag") != tag {
			t.Errorf("If-None-Match %s: %d, %d bytes, ETag %q; want 304, empty, the same tag", field, r.status, len(r.body), r.header.Get("ETag"))
		}
	}
	if r := a.do(http.MethodGet, page, "", nil, "If-None-Match", `"other"`); r.status != http.StatusOK || string(r.body) != string(first.body) {
		t.Errorf("If-None-Match of another tag: %d, same page %t; want 200 and the same page", r.status, string(r.body) == string(first.body))
	}

	// Another replica on the same database gives the same tag.
	e, err := api.New(api.Config{Store: a.store, Logger: slog.New(slog.DiscardHandler), Registry: prometheus.NewRegistry()})
	if err != nil {
		t.Fatal(err)
	}
	replica := httptest.NewServer(e)
	defer replica.Close()
	resp, err := http.Get(replica.URL + page)
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	if got := resp.Header.Get("ETag"); resp.StatusCode != http.StatusOK || got != tag {
		t.Errorf("the other replica: %d with ETag %q, want 200 and %q", resp.StatusCode, got, tag)
	}

	// Another review, and the same review once the shelf has changed (its
	// records fill what nodes leave out), have tags of their own.
	other := a.do(http.MethodGet, "/reports/"+a.storeReview(a.owner, []byte(quotaDesign)).ShareID, "", nil)
	if other.header.Get("ETag") == tag {
		t.Error("two reviews share an ETag")
	}
	a.created(a.owner, component("bench supply", "other"))
	if r := a.do(http.MethodGet, page, "", nil, "If-None-Match", tag); r.status != http.StatusOK || r.header.Get("ETag") == tag {
		t.Errorf("after a shelf change: %d with ETag %q; want 200 and a new tag", r.status, r.header.Get("ETag"))
	}
	// Each download has a tag of its own too.
	for _, dl := range []string{"/design.json", "/report.json"} {
		if r := a.do(http.MethodGet, page+dl, "", nil); r.status != http.StatusOK || r.header.Get("ETag") == "" || r.header.Get("ETag") == tag {
			t.Errorf("%s: %d with ETag %q, want 200 and a tag unlike the page's", dl, r.status, r.header.Get("ETag"))
		}
	}
}

func TestLargeDesignReportIsASummaryWithDownloads(t *testing.T) {
	a := startShelfAPI(t)
	const nodes = 600
	design := chainDesign(nodes)
	rev := a.storeReview(a.staff, design)
	page := "/reports/" + rev.ShareID
	r := a.do(http.MethodGet, page, "", nil)
	if r.status != http.StatusOK {
		t.Fatalf("page: %d", r.status)
	}
	html := string(r.body)
	for _, want := range []string{
		fmt.Sprintf("This design has %d nodes", nodes),
		`href="` + page + `/design.json"`, `href="` + page + `/report.json"`,
		`data-node-findings="stage2"`, "regulator.headroom",
	} {
		if !strings.Contains(html, want) {
			t.Errorf("summary page lacks %q", want)
		}
	}
	// No diagram or operating-point table of every node; findings of
	// every failing stage, but no passes.
	if strings.Contains(html, `class="tree"`) || strings.Contains(html, "points-heading") {
		t.Error("summary page draws the tree or tabulates every operating point")
	}
	// The first stage's feed from the pack has no fuse; every later stage
	// gets 5 V and needs 5.5 V.
	if got := strings.Count(html, `data-node-findings="stage`); got != nodes-1 {
		t.Errorf("findings listed for %d stages, want %d", got, nodes-1)
	}
	if strings.Contains(html, `<tr data-status="pass">`) {
		t.Error("summary page lists passes")
	}
	// The downloads are the stored bytes, as attachments.
	dl := a.do(http.MethodGet, page+"/design.json", "", nil)
	if dl.status != http.StatusOK || string(dl.body) != string(design) ||
		!strings.HasPrefix(dl.header.Get("Content-Disposition"), "attachment") || dl.header.Get("Content-Type") != "application/json" {
		t.Errorf("design download: %d, same bytes %t, %q, %q", dl.status, string(dl.body) == string(design),
			dl.header.Get("Content-Disposition"), dl.header.Get("Content-Type"))
	}
	rep := a.do(http.MethodGet, page+"/report.json", "", nil)
	if rep.status != http.StatusOK || string(rep.body) != string(rev.Report) {
		t.Errorf("report download: %d, same bytes %t", rep.status, string(rep.body) == string(rev.Report))
	}

	// A small design keeps its diagram and table, and offers the downloads.
	small := a.do(http.MethodGet, "/reports/"+a.storeReview(a.owner, []byte(quotaDesign)).ShareID, "", nil)
	if s := string(small.body); !strings.Contains(s, `class="tree"`) || !strings.Contains(s, "points-heading") || !strings.Contains(s, "/report.json") {
		t.Error("a small design's page lacks its tree, its operating points or its downloads")
	}
}

func TestReportRendersAreRateLimitedPerClient(t *testing.T) {
	a := startShelfAPI(t)
	page := "/reports/" + a.storeReview(a.owner, []byte(quotaDesign)).ShareID
	var tag string
	limited := -1
	for i := range 40 {
		r := a.do(http.MethodGet, page, "", nil)
		if r.status == http.StatusTooManyRequests {
			if s, err := strconv.Atoi(r.header.Get("Retry-After")); err != nil || s < 1 {
				t.Errorf("429 with Retry-After %q, want whole seconds", r.header.Get("Retry-After"))
			}
			limited = i
			break
		}
		if r.status != http.StatusOK {
			t.Fatalf("view %d: %d", i+1, r.status)
		}
		tag = r.header.Get("ETag")
	}
	// Common practice: a burst of about a dozen, then a few a minute.
	if limited < 5 || limited > 30 {
		t.Fatalf("the render limit came after %d renders, want between 5 and 30", limited)
	}
	// A client that holds the page is still answered, and not counted.
	if r := a.do(http.MethodGet, page, "", nil, "If-None-Match", tag); r.status != http.StatusNotModified {
		t.Errorf("a limited client with the page's tag: %d, want 304", r.status)
	}
	wantLimited := a.do(http.MethodGet, page+"/report.json", "", nil)
	if wantLimited.status != http.StatusTooManyRequests {
		t.Errorf("a download while limited: %d, want 429", wantLimited.status)
	}
}
