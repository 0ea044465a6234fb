package main

import (
	"fmt"
	"io"
	"runtime"
	"text/tabwriter"
	"time"
)

// The budgets the service is held to on a 2-core machine shared by the
// server, PostgreSQL and this harness (issue 12), sized for a large
// makerspace with room to spare.
const (
	budgetSteadyRate          = 50 // requests a second of the steady mix
	budgetSteadyP99           = 15 * time.Millisecond
	budgetFlatOutP99          = 100 * time.Millisecond
	budgetShelfOfDBFloor      = 0.50
	budgetReviewOfHTTPFloor   = 0.15
	budgetStoredReviewsPerSec = 300
	budgetLargeReview         = 100 * time.Millisecond // median, end to end
	budgetRSSBytes            = 100 << 20

	largeDesignNodes = 5000
	largeReviews     = 7
)

// loadReport is the whole run's outcome.
type loadReport struct {
	partial    bool // --only, or interrupted: some budgets were not measured
	steady     phaseResult
	phases     []phaseResult // flat out, floors first
	large      largeResult
	acked      int
	lost       int
	lostDetail string
	rssPeak    int64
	rssSource  string
}

// verdict is one budget and what the run measured against it.
type verdict struct {
	budget   string
	measured string
	met      bool
}

// phase finds a flat-out phase by route name.
func (r *loadReport) phase(name string) (phaseResult, bool) {
	for _, p := range r.phases {
		if p.route.name == name {
			return p, true
		}
	}
	return phaseResult{}, false
}

// verdicts holds the run to every budget; a budget the run did not
// measure is missed, never passed.
func (r *loadReport) verdicts() []verdict {
	var out []verdict
	add := func(budget string, met bool, format string, args ...any) {
		out = append(out, verdict{budget: budget, measured: fmt.Sprintf(format, args...), met: met})
	}
	if r.partial {
		add("every budget measured", false, "only part of the run (--only, or interrupted)")
	}

	steadyLabel := fmt.Sprintf("steady %d/s", budgetSteadyRate)
	if r.steady.requests == 0 {
		add(steadyLabel, false, "not run")
	} else {
		add(steadyLabel+": every answer as expected", r.steady.failed() == 0, "%d of %d not (%d 5xx)",
			r.steady.failed(), r.steady.requests, r.steady.fiveXX)
		for _, part := range r.steady.parts {
			add(fmt.Sprintf("%s: p99 of %s < %s", steadyLabel, part.name, budgetSteadyP99), part.p99 < budgetSteadyP99,
				"%.2f ms", ms(part.p99))
		}
	}

	for _, p := range r.phases {
		add(fmt.Sprintf("flat out: %s answers as expected", p.route.name), p.failed() == 0,
			"%d of %d not (%d 5xx)", p.failed(), p.requests, p.fiveXX)
		// The mixed phase is held route by route: its p99 over all of them
		// is no route's.
		if p.parts == nil {
			add(fmt.Sprintf("flat out: p99 of %s < %s", p.route.name, budgetFlatOutP99), p.p99 < budgetFlatOutP99,
				"%.2f ms", ms(p.p99))
		}
		for _, part := range p.parts {
			add(fmt.Sprintf("flat out, in mixed: p99 of %s < %s", part.name, budgetFlatOutP99),
				part.p99 < budgetFlatOutP99, "%.2f ms", ms(part.p99))
		}
	}
	ratio := func(route, floor string, want float64) {
		label := fmt.Sprintf("flat out: %s >= %.2f of the %s floor", route, want, floor)
		p, ok := r.phase(route)
		f, fok := r.phase(floor)
		if !ok || !fok || f.throughput() <= 0 {
			add(label, false, "not measured")
			return
		}
		got := p.throughput() / f.throughput()
		add(label, got >= want, "%.2f (%.0f of %.0f req/s)", got, p.throughput(), f.throughput())
	}
	ratio(routeShelf, routeReadyz, budgetShelfOfDBFloor)
	ratio(routeReview, routeHealthz, budgetReviewOfHTTPFloor)
	if p, ok := r.phase(routeStored); ok {
		add(fmt.Sprintf("flat out: %s >= %d/s", routeStored, budgetStoredReviewsPerSec),
			p.throughput() >= budgetStoredReviewsPerSec, "%.0f/s", p.throughput())
	} else {
		add(fmt.Sprintf("flat out: %s >= %d/s", routeStored, budgetStoredReviewsPerSec), false, "not measured")
	}
	add("no acknowledged write lost", r.lost == 0, "%d of %d lost", r.lost, r.acked)

	largeLabel := fmt.Sprintf("POST /v1/reviews (%d nodes): median of %d < %s", largeDesignNodes, largeReviews, budgetLargeReview)
	if len(r.large.times) < largeReviews {
		add(largeLabel, false, "%d of %d answered 200", len(r.large.times), largeReviews)
	} else {
		add(largeLabel, r.large.median() < budgetLargeReview, "%.1f ms (%.1f to %.1f)",
			ms(r.large.median()), ms(r.large.times[0]), ms(r.large.times[len(r.large.times)-1]))
	}

	rssLabel := fmt.Sprintf("server resident memory < %d MB", budgetRSSBytes>>20)
	if r.rssSource == "" {
		add(rssLabel, false, "not measured (give --pid, or expose process_resident_memory_bytes)")
	} else {
		add(rssLabel, r.rssPeak < budgetRSSBytes, "%.1f MB", float64(r.rssPeak)/(1<<20))
	}
	return out
}

// missed lists the budgets the run did not meet.
func (r *loadReport) missed() []verdict {
	var out []verdict
	for _, v := range r.verdicts() {
		if !v.met {
			out = append(out, v)
		}
	}
	return out
}

func (r *loadReport) print(w io.Writer, cfg loadConfig) {
	fmt.Fprintf(w, "wattshelf-load: %s; %d CPUs shared by server, database and harness\n\n", cfg.base, runtime.NumCPU())

	if r.steady.requests > 0 {
		fmt.Fprintf(w, "steady: %d requests a second for %s, the routes below in turn; latency from when each was due\n",
			budgetSteadyRate, cfg.steady)
		tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "route\trequests\tp50 ms\tp99 ms\t")
		for _, part := range r.steady.parts {
			fmt.Fprintf(tw, "%s\t%d\t%.2f\t%.2f\t\n", part.name, part.requests, ms(part.p50), ms(part.p99))
		}
		tw.Flush()
		fmt.Fprintln(w)
	}

	fmt.Fprintf(w, "flat out: %d clients, each route alone for at most %d requests or %s, then all mixed\n",
		cfg.clients, cfg.requests, cfg.duration)
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "route\trequests\treq/s\tp50 ms\tp99 ms\t5xx\tother\tfloor\tratio\t")
	for _, p := range r.phases {
		ratio := ""
		if f, ok := r.phase(map[string]string{"HTTP": routeHealthz, "DB": routeReadyz}[p.route.floor]); ok && f.throughput() > 0 {
			ratio = fmt.Sprintf("%.2f", p.throughput()/f.throughput())
		}
		fmt.Fprintf(tw, "%s\t%d\t%.0f\t%.2f\t%.2f\t%d\t%d\t%s\t%s\t\n", p.route.name, p.requests, p.throughput(),
			ms(p.p50), ms(p.p99), p.fiveXX, p.other+p.transport, p.route.floor, ratio)
		// Within the mixed phase the routes share the time, so each
		// shows its latencies, not a throughput of its own.
		for _, part := range p.parts {
			fmt.Fprintf(tw, "in mixed: %s\t%d\t\t%.2f\t%.2f\t\t\t\t\t\n", part.name, part.requests, ms(part.p50), ms(part.p99))
		}
	}
	tw.Flush()
	fmt.Fprintln(w)

	for _, p := range append([]phaseResult{r.steady}, r.phases...) {
		if p.firstError != "" {
			fmt.Fprintf(w, "first unexpected answer on %s: %s\n", p.route.name, p.firstError)
		}
	}
	if r.large.firstError != "" {
		fmt.Fprintf(w, "first unexpected answer to the large design: %s\n", r.large.firstError)
	}
	if r.lostDetail != "" {
		fmt.Fprintf(w, "first lost write: %s\n", r.lostDetail)
	}
	if r.rssSource != "" {
		fmt.Fprintf(w, "resident memory: %s\n", r.rssSource)
	}

	fmt.Fprintln(w, "\nbudgets")
	tw = tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	for _, v := range r.verdicts() {
		state := "met"
		if !v.met {
			state = "MISSED"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\n", v.budget, v.measured, state)
	}
	tw.Flush()
	if missed := r.missed(); len(missed) == 0 {
		fmt.Fprintln(w, "\nall budgets met")
	} else {
		fmt.Fprintf(w, "\n%d budgets missed\n", len(missed))
	}
}

func ms(d time.Duration) float64 { return float64(d.Microseconds()) / 1000 }
