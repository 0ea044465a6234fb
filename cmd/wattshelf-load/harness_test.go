package main

import (
	"bytes"
	"context"
	"errors"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"testing"
	"time"

	jsonv2 "github.com/go-json-experiment/json"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
	"wattshelf/api/client"
	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store/storetest"
)

func TestReviewDesignIsAValidDesignOfTheAskedSize(t *testing.T) {
	for _, n := range []int{10, loadReviewDesignNodes, largeDesignNodes} {
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

// passingReport meets every budget of issue 12, each with room to spare.
func passingReport() *loadReport {
	ms := time.Millisecond
	phase := func(name, floor string, requests int, p99 time.Duration) phaseResult {
		return phaseResult{route: loadRoute{name: name, floor: floor}, requests: requests, elapsed: time.Second,
			p50: p99 / 2, p99: p99}
	}
	mixed := phase("mixed, all of the above", "", 2000, 40*ms)
	mixed.parts = []partResult{{name: routeShelf, requests: 1000, p50: 5 * ms, p99: 30 * ms},
		{name: routeStored, requests: 1000, p50: 9 * ms, p99: 60 * ms}}
	steady := phase("steady", "", 250, 6*ms)
	steady.parts = []partResult{{name: routeShelf, requests: 125, p50: ms, p99: 4 * ms},
		{name: routeReview, requests: 125, p50: 2 * ms, p99: 8 * ms}}
	large := largeResult{}
	for range largeReviews {
		large.times = append(large.times, 40*ms)
	}
	return &loadReport{
		steady: steady,
		phases: []phaseResult{
			phase(routeHealthz, "HTTP", 10000, 5*ms),
			phase(routeReadyz, "DB", 5000, 8*ms),
			phase(routeShelf, "DB", 3000, 20*ms),
			phase(routeReview, "HTTP", 2000, 30*ms),
			phase(routeStored, "DB", 400, 70*ms),
			mixed,
		},
		large:   large,
		acked:   500,
		rssPeak: 80 << 20, rssSource: "test",
	}
}

// TestBudgets holds a report to the budgets of issue 12: one that meets
// them all passes, and each way of missing one is caught and named.
func TestBudgets(t *testing.T) {
	if missed := passingReport().missed(); len(missed) != 0 {
		t.Fatalf("a report within every budget missed %+v", missed)
	}
	ms := time.Millisecond
	for _, c := range []struct {
		name   string
		change func(r *loadReport)
		want   string // in the one budget missed
	}{
		{"steady p99 at 15 ms", func(r *loadReport) { r.steady.parts[1].p99 = 15 * ms }, "steady 50/s: p99 of " + routeReview},
		{"steady answer refused", func(r *loadReport) { r.steady.other = 1 }, "steady 50/s: every answer"},
		{"steady not run", func(r *loadReport) { r.steady = phaseResult{} }, "steady 50/s"},
		{"a 5xx flat out", func(r *loadReport) { r.phases[3].fiveXX = 1 }, "flat out: " + routeReview + " answers"},
		{"flat-out p99 at 100 ms", func(r *loadReport) { r.phases[4].p99 = 100 * ms }, "flat out: p99 of " + routeStored},
		{"mixed route p99 over 100 ms", func(r *loadReport) { r.phases[5].parts[1].p99, r.phases[5].p99 = 120*ms, 120*ms },
			"in mixed: p99 of " + routeStored},
		{"shelf at 0.48 of the DB floor", func(r *loadReport) { r.phases[2].requests = 2400 }, routeShelf + " >= 0.50"},
		{"inline review at 0.14 of the HTTP floor", func(r *loadReport) { r.phases[3].requests = 1400 }, routeReview + " >= 0.15"},
		{"299 stored reviews a second", func(r *loadReport) { r.phases[4].requests = 299 }, routeStored + " >= 300/s"},
		{"stored reviews not run", func(r *loadReport) { r.phases = slices.Delete(r.phases, 4, 5) }, routeStored + " >= 300/s"},
		{"a write lost", func(r *loadReport) { r.lost = 1 }, "no acknowledged write lost"},
		{"large design median 100 ms", func(r *loadReport) {
			for i := range 4 {
				r.large.times[len(r.large.times)-1-i] = 100 * ms
			}
		}, "(5000 nodes): median of 7"},
		{"large design refused once", func(r *loadReport) { r.large.times = r.large.times[1:]; r.large.failed = 1 }, "(5000 nodes)"},
		{"100 MB resident", func(r *loadReport) { r.rssPeak = 100 << 20 }, "resident memory < 100 MB"},
		{"memory not measured", func(r *loadReport) { r.rssSource = "" }, "resident memory < 100 MB"},
		{"a partial run", func(r *loadReport) { r.partial = true }, "every budget measured"},
	} {
		t.Run(c.name, func(t *testing.T) {
			r := passingReport()
			c.change(r)
			missed := r.missed()
			if len(missed) != 1 || !strings.Contains(missed[0].budget, c.want) {
				t.Errorf("missed %+v; want one budget naming %q", missed, c.want)
			}
			var out bytes.Buffer
			r.print(&out, loadConfig{clients: 32, requests: 1000, duration: time.Second, steady: time.Second, base: "http://127.0.0.1:1"})
			if !strings.Contains(out.String(), "MISSED") || !strings.Contains(out.String(), "1 budgets missed") {
				t.Errorf("printed report does not show the miss:\n%s", out.String())
			}
		})
	}
}

// BenchmarkReviewPipeline measures the CPU one POST /v1/reviews of the
// load design costs the server, step by step, the way api/reviews.go does
// it: rules prepared once (the API keeps them per limits version),
// DecodeDesign, Design.Validated, Rules.Review (which trusts the document
// it is given as validated) and the report's JSON. "whole" is the four
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
	valid, err := doc.Validated()
	if err != nil {
		b.Fatal(err)
	}
	rep, err := rules.Review(valid, nil)
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
			if _, err := doc.Validated(); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("review", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := rules.Review(valid, nil); err != nil {
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
			v, err := d.Validated()
			if err != nil {
				b.Fatal(err)
			}
			r, err := rules.Review(v, nil)
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
	// As serve does when it starts: a read never stores the defaults.
	if _, err := st.SeedDefaultLimits(context.Background()); err != nil {
		t.Fatal(err)
	}
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
	cfg := loadConfig{base: base, token: token, clients: 4, requests: 40, duration: 10 * time.Second, steady: time.Second}
	report, err := runLoad(ctx, cfg, io.Discard)
	if err != nil {
		t.Fatal(err)
	}
	const routes = 7
	if len(report.phases) != routes+1 {
		t.Fatalf("%d phases, want %d routes and the mix", len(report.phases), routes)
	}
	for _, p := range append(report.phases, report.steady) {
		if p.requests == 0 || p.failed() != 0 || p.firstError != "" {
			t.Errorf("%s: %d requests, %d 5xx, %d other, %d without answer (%s)", p.route.name, p.requests,
				p.fiveXX, p.other, p.transport, p.firstError)
		}
	}
	// The steady phase sends 50 requests in its second, in turn to the
	// five routes of the mix.
	if report.steady.requests != budgetSteadyRate || len(report.steady.parts) != 5 {
		t.Errorf("steady phase: %d requests over %d routes, want %d over 5", report.steady.requests,
			len(report.steady.parts), budgetSteadyRate)
	}
	if len(report.large.times) != largeReviews || report.large.failed != 0 || report.large.median() <= 0 {
		t.Errorf("large design: %d reviews answered, %d not (%s)", len(report.large.times), report.large.failed,
			report.large.firstError)
	}
	if report.acked < 40 || report.lost != 0 {
		t.Errorf("%d acknowledged creates, %d lost (%s)", report.acked, report.lost, report.lostDetail)
	}
	// The mixed phase accounts for each of its requests under the route
	// it went to: 40 requests over the routes.
	mixed := report.phases[len(report.phases)-1]
	if len(mixed.parts) != routes {
		t.Fatalf("mixed phase split into %d routes, want %d: %+v", len(mixed.parts), routes, mixed.parts)
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
	if report.rssSource == "" {
		t.Error("resident memory not read from /metrics")
	}
	var out bytes.Buffer
	report.print(&out, cfg)
	for _, want := range []string{"0 of ", "POST /v1/designs/{id}/reviews", "in mixed: POST /v1/reviews (30 nodes)",
		"GET /shelf/{id} (a part's page)", "budgets"} {
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

// TestRunRefusesBeforeSendingAnything: usage errors and a server off this
// machine exit 2 without a request; the port given has nothing behind it.
func TestRunRefusesBeforeSendingAnything(t *testing.T) {
	noToken := func(string) string { return "" }
	for _, args := range [][]string{
		{"--url", "http://127.0.0.1:1"},
		{"--url", "http://10.0.0.1:8080", "--token", "t"},
		{"--url", "http://127.0.0.1:1", "--token", "t", "--steady", "0s"},
		{"--url", "http://127.0.0.1:1", "--token", "t", "--clients", "0"},
		{"--url", "http://127.0.0.1:1", "--token", "t", "extra"},
		{"--no-such-flag"},
	} {
		var stdout, stderr bytes.Buffer
		err := run(context.Background(), args, noToken, &stdout, &stderr)
		var ee *exitError
		if !errors.As(err, &ee) || ee.code != 2 || stdout.Len() != 0 {
			t.Errorf("%q: %v, stdout %q; want exit 2 and nothing printed", args, err, stdout.String())
		}
	}
}
