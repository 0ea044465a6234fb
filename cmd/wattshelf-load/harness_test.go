package main

import (
	"bytes"
	"context"
	"errors"
	jsonv2 "github.com/go-json-experiment/json"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
	"wattshelf/api/client"
	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store/storetest"
)

func TestReviewDesignIsAValidDesignOfTheAskedSize(t *testing.T) {
	for _, n := range []int{10, loadReviewDesignNodes} {
		doc, err := domain.DecodeDesign(reviewDesign("load", n))
		if err != nil {
			t.Fatalf("%d nodes: %v", n, err)
		}
		if err := doc.Validate(); err != nil {
			t.Fatalf("%d nodes: %v", n, err)
		}
		if len(doc.Nodes) != n {
			t.Errorf("asked for %d nodes, got %d", n, len(doc.Nodes))
		}
		rep, err := review.Review(doc, review.DefaultLimits(), 1, nil)
		if err != nil {
			t.Fatalf("%d nodes: review: %v", n, err)
		}
		// Every node is solved, so the review works on all of them.
		if len(rep.Nodes) != n {
			t.Errorf("report covers %d of %d nodes", len(rep.Nodes), n)
		}
		if rep.Status == review.Fail || rep.Status == review.OutOfScope {
			t.Errorf("%d nodes: the generated design is meant to be sound, got %s: %+v", n, rep.Status, failing(rep))
		}
	}
}

func failing(rep review.Report) []review.Check {
	var out []review.Check
	for _, c := range rep.Checks {
		if c.Status == review.Fail {
			out = append(out, c)
		}
	}
	return out
}

func TestPercentileIsNearestRank(t *testing.T) {
	ms := func(v ...int) []time.Duration {
		out := make([]time.Duration, len(v))
		for i, x := range v {
			out[i] = time.Duration(x) * time.Millisecond
		}
		return out
	}
	// Nearest-rank definition (common practice): the smallest value with
	// at least q of the sample at or below it.
	for _, c := range []struct {
		sorted []time.Duration
		q      float64
		want   time.Duration
	}{
		{ms(1, 2, 3, 4, 5, 6, 7, 8, 9, 10), 0.5, 5 * time.Millisecond},
		{ms(1, 2, 3, 4, 5, 6, 7, 8, 9, 10), 0.99, 10 * time.Millisecond},
		{ms(7), 0.99, 7 * time.Millisecond},
		{nil, 0.5, 0},
	} {
		if got := percentile(c.sorted, c.q); got != c.want {
			t.Errorf("percentile(%v, %g) = %v, want %v", c.sorted, c.q, got, c.want)
		}
	}
}

func TestRequireLoopback(t *testing.T) {
	for u, ok := range map[string]bool{
		"http://127.0.0.1:8080": true, "http://localhost:8080": true, "http://[::1]:8080": true,
		"http://127.0.0.9:1": true, "http://10.0.0.1:8080": false, "http://example.org": false,
		"ftp://127.0.0.1": false, "127.0.0.1:8080": false,
	} {
		if err := requireLoopback(u); (err == nil) != ok {
			t.Errorf("requireLoopback(%q) = %v", u, err)
		}
	}
}

func TestLoadReportTargets(t *testing.T) {
	r := &loadReport{phases: []phaseResult{
		{route: loadRoute{name: "GET /healthz", floor: "HTTP"}, requests: 1000, elapsed: time.Second, p99: time.Millisecond},
		{route: loadRoute{name: "GET /readyz", floor: "DB"}, requests: 500, elapsed: time.Second, p99: time.Millisecond},
		{route: loadRoute{name: "GET /v1/shelf?limit=50", floor: "DB"}, requests: 200, elapsed: time.Second, p99: 60 * time.Millisecond},
		{route: loadRoute{name: "POST /v1/reviews (30 nodes)", floor: "HTTP"}, requests: 600, elapsed: time.Second, p99: time.Millisecond, fiveXX: 1},
	}, rssPeak: 120 << 20, rssSource: "test"}
	missed := r.missedTargets()
	// shelf: ratio 0.4 and p99 60 ms; reviews: one 5xx; memory 120 MB.
	if len(missed) != 4 {
		t.Fatalf("missed %d targets, want 4: %q", len(missed), missed)
	}
	var out bytes.Buffer
	r.print(&out, loadConfig{clients: 32, requests: 1000, duration: time.Second, base: "http://127.0.0.1:1"})
	for _, want := range []string{"0.40", "0.60", "targets missed", "120.0 MB"} {
		if !bytes.Contains(out.Bytes(), []byte(want)) {
			t.Errorf("report lacks %q:\n%s", want, out.String())
		}
	}
}

// BenchmarkReviewPipeline measures the CPU one POST /v1/reviews of the
// load design costs the server, step by step, the way api/reviews.go does
// it: rules prepared once (the API keeps them per limits version),
// DecodeDesign, Rules.Review (which validates the document itself) and
// AppendJSON into a buffer that is reused (the API pools them). "validate"
// is the part of "review" that Design.Validate takes; "whole" is the three
// steps the server runs, one after the other.
//
//	go test ./cmd/wattshelf-load -run '^$' -bench ReviewPipeline -benchmem -cpu 1 -count 5
func BenchmarkReviewPipeline(b *testing.B) {
	body := reviewDesign("bench", loadReviewDesignNodes)
	rules, err := review.Prepare(review.DefaultLimits(), 1)
	if err != nil {
		b.Fatal(err)
	}
	doc, err := domain.DecodeDesign(body)
	if err != nil {
		b.Fatal(err)
	}
	rep, err := rules.Review(doc, nil)
	if err != nil {
		b.Fatal(err)
	}
	b.Run("decode", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := domain.DecodeDesign(body); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("validate", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if err := doc.Validate(); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("review", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := rules.Review(doc, nil); err != nil {
				b.Fatal(err)
			}
		}
	})
	var buf []byte
	b.Run("encode", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if buf, err = jsonv2.Marshal(rep, domain.StrictJSON()); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("whole", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			d, err := domain.DecodeDesign(body)
			if err != nil {
				b.Fatal(err)
			}
			r, err := rules.Review(d, nil)
			if err != nil {
				b.Fatal(err)
			}
			if buf, err = jsonv2.Marshal(r, domain.StrictJSON()); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Logf("report of %d nodes: %d bytes, %d checks", loadReviewDesignNodes, len(buf), len(rep.Checks))
}

func TestShareIDOfReadsTheReportLocation(t *testing.T) {
	for _, c := range []struct {
		location, want string
		ok             bool
	}{
		{"/reports/AbC-12_x", "AbC-12_x", true},
		{"http://shelf.local:8080/reports/AbC-12_x", "AbC-12_x", true},
		{"", "", false},
		{"/reports/", "", false},
		{"/reports/a/b", "", false},
		{"/v1/reviews/abc", "", false},
		{"http://[::1", "", false},
	} {
		got, err := shareIDOf(http.Header{"Location": {c.location}})
		if got != c.want || (err == nil) != c.ok {
			t.Errorf("%q: %q, %v; want %q (ok %t)", c.location, got, err, c.want, c.ok)
		}
	}
}

// startServer serves the real router on a loopback port over a database
// of its own, and returns its address and a staff token.
func startServer(t *testing.T) (base, token string) {
	t.Helper()
	st, _ := storetest.NewStore(t)
	router, err := api.New(api.Config{Store: st, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)), Registry: prometheus.NewRegistry()})
	if err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewServer(router)
	t.Cleanup(srv.Close)
	token, err = st.CreateToken(context.Background(), "test", "load", domain.RoleStaff)
	if err != nil {
		t.Fatal(err)
	}
	return srv.URL, token
}

// TestLoadRunsEveryRouteAgainstAServer runs the harness, with small
// budgets, against the real router on a database of its own: every route
// answers as expected, and every write it acknowledged is found again.
// It checks what the harness counts, not how fast anything is.
func TestLoadRunsEveryRouteAgainstAServer(t *testing.T) {
	ctx := context.Background()
	base, token := startServer(t)
	cfg := loadConfig{base: base, token: token, clients: 4, requests: 40, duration: 10 * time.Second}
	report, err := runLoad(ctx, cfg, io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	if len(report.phases) != 7 {
		t.Fatalf("%d phases, want 6 routes and the mix", len(report.phases))
	}
	for _, p := range report.phases {
		if p.requests == 0 || p.fiveXX+p.other+p.transport != 0 || p.firstError != "" {
			t.Errorf("%s: %d requests, %d 5xx, %d other, %d without answer (%s)", p.route.name, p.requests,
				p.fiveXX, p.other, p.transport, p.firstError)
		}
	}
	if report.acked < 40 || report.lost != 0 {
		t.Errorf("%d acknowledged creates, %d lost (%s)", report.acked, report.lost, report.lostDetail)
	}
	// The mixed phase accounts for each of its requests under the route
	// it went to: 40 requests over 6 routes.
	mixed := report.phases[len(report.phases)-1]
	if len(mixed.parts) != 6 {
		t.Fatalf("mixed phase split into %d routes, want 6: %+v", len(mixed.parts), mixed.parts)
	}
	total := 0
	for _, part := range mixed.parts {
		total += part.requests
		if part.requests == 0 || part.p50 <= 0 || part.p99 < part.p50 {
			t.Errorf("mixed part %s: %d requests, p50 %v, p99 %v", part.name, part.requests, part.p50, part.p99)
		}
	}
	if total != mixed.requests {
		t.Errorf("mixed parts hold %d requests, the phase %d", total, mixed.requests)
	}
	var out bytes.Buffer
	report.print(&out, cfg)
	for _, want := range []string{"lost writes: 0 of ", "POST /v1/designs/{id}/reviews", "in mixed: POST /v1/reviews (30 nodes)"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("printed report lacks %q:\n%s", want, out.String())
		}
	}
}

// TestAnUnexpectedAnswerIsItsProblemDocument: a refusal reaches the
// harness's error counts as the typed problem document the server sent.
func TestAnUnexpectedAnswerIsItsProblemDocument(t *testing.T) {
	base, token := startServer(t)
	c := &loadClient{http: http.DefaultClient, base: base, token: token}
	req, err := client.NewPostV1DesignsIdReviewsRequest(base, 999999, nil)
	status, _, err := c.expect(context.Background(), req, err, http.StatusCreated)
	var p *client.Problem
	if status != http.StatusNotFound || !errors.As(err, &p) || p.Status != http.StatusNotFound {
		t.Errorf("review of a design that is not there: status %d, %v; want 404 as a problem document", status, err)
	}
}
