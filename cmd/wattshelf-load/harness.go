package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"net/http"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"wattshelf/api/client"
)

// The routes the budgets name.
var (
	routeHealthz = "GET /healthz"
	routeReadyz  = "GET /readyz"
	routeShelf   = fmt.Sprintf("GET /v1/shelf?limit=%d", loadShelfPageSize)
	routeReview  = fmt.Sprintf("POST /v1/reviews (%d nodes)", loadReviewDesignNodes)
	routeStored  = "POST /v1/designs/{id}/reviews"
)

// loadRoute is one kind of request the harness sends. do returns the
// status of the request it timed; a verify step it takes afterwards
// (reading a write back) is part of the same timing.
type loadRoute struct {
	name  string
	floor string // "HTTP" or "DB": the floor this route is compared with
	// steady routes make up the steady phase's mix.
	steady bool
	do     func(ctx context.Context, c *loadClient, n int) (int, error)
	// partOf names the route a mixed phase's request n of client c
	// went to, so its latencies can be told apart; nil elsewhere.
	partOf func(c *loadClient, n int) string
}

// phaseResult is what one phase measured.
type phaseResult struct {
	route      loadRoute
	requests   int
	elapsed    time.Duration
	p50, p99   time.Duration
	fiveXX     int
	other      int // answers that are neither the expected success nor 5xx
	transport  int // requests that got no answer
	firstError string
	parts      []partResult // a mixed phase's latencies by route
}

// partResult is what one route measured inside a mixed phase.
type partResult struct {
	name     string
	requests int
	p50, p99 time.Duration
}

func (r phaseResult) throughput() float64 {
	if r.elapsed <= 0 {
		return 0
	}
	return float64(r.requests) / r.elapsed.Seconds()
}

func (r phaseResult) failed() int { return r.fiveXX + r.other + r.transport }

// tally collects what a phase measures; each client of a flat-out phase
// keeps its own and merges it at the end.
type tally struct {
	timings    []time.Duration
	byPart     map[string][]time.Duration
	fiveXX     int
	other      int
	transport  int
	firstError string
}

// record counts one request: part is the route it went to inside a mixed
// phase, or "". Reads and inline reviews answer 200, creates 201.
func (t *tally) record(part string, took time.Duration, status int, err error) {
	t.timings = append(t.timings, took)
	if part != "" {
		if t.byPart == nil {
			t.byPart = map[string][]time.Duration{}
		}
		t.byPart[part] = append(t.byPart[part], took)
	}
	if err == nil && (status == http.StatusOK || status == http.StatusCreated) {
		return
	}
	switch {
	case status == 0:
		t.transport++
	case status >= 500:
		t.fiveXX++
	default:
		t.other++
	}
	if t.firstError == "" {
		t.firstError = fmt.Sprintf("status %d: %v", status, err)
	}
}

func (t *tally) merge(o *tally) {
	t.timings = append(t.timings, o.timings...)
	for part, d := range o.byPart {
		if t.byPart == nil {
			t.byPart = map[string][]time.Duration{}
		}
		t.byPart[part] = append(t.byPart[part], d...)
	}
	t.fiveXX += o.fiveXX
	t.other += o.other
	t.transport += o.transport
	if t.firstError == "" {
		t.firstError = o.firstError
	}
}

func (t *tally) result(route loadRoute, elapsed time.Duration) phaseResult {
	res := phaseResult{route: route, requests: len(t.timings), elapsed: elapsed, fiveXX: t.fiveXX, other: t.other,
		transport: t.transport, firstError: t.firstError}
	slices.Sort(t.timings)
	res.p50, res.p99 = percentile(t.timings, 0.50), percentile(t.timings, 0.99)
	for part, d := range t.byPart {
		slices.Sort(d)
		res.parts = append(res.parts, partResult{name: part, requests: len(d),
			p50: percentile(d, 0.50), p99: percentile(d, 0.99)})
	}
	slices.SortFunc(res.parts, func(a, b partResult) int { return strings.Compare(a.name, b.name) })
	return res
}

// loadState is what the routes share: the designs to review, and every
// acknowledged create, checked again at the end.
type loadState struct {
	design    []byte
	designIDs []client.ID // one stored design per client
	partIDs   []client.ID // parts on the shelf, for their pages

	mu           sync.Mutex
	components   []client.ID
	reviewShares map[client.ID][]string // design id -> share ids
}

func (st *loadState) ackComponent(id client.ID) {
	st.mu.Lock()
	st.components = append(st.components, id)
	st.mu.Unlock()
}

func (st *loadState) ackReview(design client.ID, share string) {
	st.mu.Lock()
	st.reviewShares[design] = append(st.reviewShares[design], share)
	st.mu.Unlock()
}

func runLoad(ctx context.Context, cfg loadConfig, progress io.Writer) (*loadReport, error) {
	transport := &http.Transport{
		MaxIdleConns:        cfg.clients * 2,
		MaxIdleConnsPerHost: cfg.clients * 2,
		IdleConnTimeout:     30 * time.Second,
		// A review's answer is about 50 KB: read it in a few system calls,
		// not a dozen, and send a design with its headers in one, so the
		// harness takes less of the CPU it shares with the server.
		ReadBufferSize:  64 << 10,
		WriteBufferSize: 16 << 10,
	}
	defer transport.CloseIdleConnections()
	httpClient := &http.Client{Transport: transport, Timeout: 30 * time.Second}
	clients := make([]*loadClient, cfg.clients)
	for i := range clients {
		clients[i] = &loadClient{http: httpClient, base: cfg.base, token: cfg.token, id: i}
	}
	state := &loadState{design: reviewDesign("load review", loadReviewDesignNodes), reviewShares: map[client.ID][]string{}}
	if err := prepareLoad(ctx, clients, state, progress); err != nil {
		return nil, err
	}

	rss := newRSSSampler(cfg.pid)
	stopRSS := rss.start()
	routes := loadRoutes(state)
	report := &loadReport{partial: cfg.only != ""}
	// A short unmeasured warm-up fills the connection pools on both sides.
	warm := cfg
	warm.requests, warm.duration = cfg.clients*10, 2*time.Second
	runPhase(ctx, warm, clients, mixedRoute(routes))
	if !report.partial {
		fmt.Fprintf(progress, "load: steady, %d requests a second for %s ...\n", budgetSteadyRate, cfg.steady)
		report.steady = runSteady(ctx, cfg.steady, clients, routes)
	}
	for _, r := range selectRoutes(append(routes, mixedRoute(routes)), cfg.only) {
		if ctx.Err() != nil {
			break
		}
		fmt.Fprintf(progress, "load: %s ...\n", r.name)
		report.phases = append(report.phases, runPhase(ctx, cfg, clients, r))
	}
	if !report.partial && ctx.Err() == nil {
		fmt.Fprintf(progress, "load: %d reviews of a %d-node design ...\n", largeReviews, largeDesignNodes)
		report.large = runLarge(ctx, clients[0])
	}
	stopRSS()
	report.rssPeak, report.rssSource = rss.peak()
	if report.rssSource == "" {
		report.rssPeak, report.rssSource = scrapeRSS(ctx, clients[0])
	}
	if ctx.Err() != nil {
		// Interrupted: what ran is printed, but the run cannot pass, and
		// the writes are not read back on a cancelled context.
		report.partial = true
		return report, nil
	}
	report.acked, report.lost, report.lostDetail = checkWrites(ctx, clients[0], state)
	return report, nil
}

// prepareLoad fills the shelf to more than a page and stores one design
// per client for the stored-review route.
func prepareLoad(ctx context.Context, clients []*loadClient, state *loadState, progress io.Writer) error {
	c := clients[0]
	req, err := client.NewGetReadyzRequest(c.base)
	if _, _, err := c.expect(ctx, req, err, http.StatusOK); err != nil {
		return fmt.Errorf("the server at %s is not ready: %w", c.base, err)
	}
	limit := client.Limit(200)
	req, err = client.NewGetV1ComponentsRequest(c.base, &client.GetV1ComponentsParams{Limit: &limit})
	res, err := c.do(ctx, req, err)
	if err != nil {
		return fmt.Errorf("list components: %w", err)
	}
	list, err := client.ParseGetV1ComponentsResponse(res)
	if err == nil {
		err = parsed(res, list.Body, list.JSON200 != nil)
	}
	if err != nil {
		return fmt.Errorf("the token does not list components: %w", err)
	}
	for _, it := range list.JSON200.Items {
		state.partIDs = append(state.partIDs, it.Id)
	}
	if have := len(list.JSON200.Items); have < loadMinShelfSize {
		fmt.Fprintf(progress, "load: adding %d components so the shelf holds more than a page\n", loadMinShelfSize-have)
		for i := have; i < loadMinShelfSize; i++ {
			id, err := createLoadComponent(ctx, c, state, i)
			if err != nil {
				return fmt.Errorf("add a component: %w", err)
			}
			state.partIDs = append(state.partIDs, id)
		}
	}
	for i := range clients {
		doc := reviewDesign(fmt.Sprintf("load design %d", i), loadReviewDesignNodes)
		req, err := client.NewPostV1DesignsRequestWithBody(c.base, "application/json", bytes.NewReader(doc))
		res, err := c.do(ctx, req, err)
		if err != nil {
			return fmt.Errorf("store a design: %w", err)
		}
		created, err := client.ParsePostV1DesignsResponse(res)
		if err == nil {
			err = parsed(res, created.Body, created.JSON201 != nil)
		}
		if err != nil {
			return fmt.Errorf("store a design: %w", err)
		}
		state.designIDs = append(state.designIDs, created.JSON201.Id)
	}
	return nil
}

// createLoadComponent stores one component and records it as acknowledged.
func createLoadComponent(ctx context.Context, c *loadClient, state *loadState, n int) (client.ID, error) {
	// Written out rather than marshalled: the harness shares the cores with
	// the server it measures. A small gear motor's figures (invented load
	// data).
	body := fmt.Appendf(nil, `{"name":"load part %d-%d","kind":"motor","bin":"load bin %d","quantity":%d,`+
		`"condition":"working","spec_source":"measured","description":"written by wattshelf-load",`+
		`"rated_v":6.0,"no_load_a":0.15,"stall_a":2.2,"min_v":3.0,"max_v":7.2}`, c.id, n, n%7, 1+n%5)
	req, err := client.NewPostV1ComponentsRequestWithBody(c.base, "application/json", bytes.NewReader(body))
	res, err := c.do(ctx, req, err)
	if err != nil {
		return 0, err
	}
	created, err := client.ParsePostV1ComponentsResponse(res)
	if err != nil {
		return 0, &answerError{status: res.StatusCode, err: err}
	}
	if err := parsed(res, created.Body, created.JSON201 != nil && created.JSON201.Id != 0); err != nil {
		return 0, &answerError{status: res.StatusCode, err: err}
	}
	state.ackComponent(created.JSON201.Id)
	return created.JSON201.Id, nil
}

// answerError is an answer other than the one a route expects, with its
// status.
type answerError struct {
	status int
	err    error
}

func (e *answerError) Error() string { return e.err.Error() }
func (e *answerError) Unwrap() error { return e.err }

func loadRoutes(state *loadState) []loadRoute {
	pageSize := client.Limit(loadShelfPageSize)
	return []loadRoute{
		{name: routeHealthz, floor: "HTTP",
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				req, err := client.NewGetHealthzRequest(c.base)
				status, _, err := c.expect(ctx, req, err, http.StatusOK)
				return status, err
			}},
		{name: routeReadyz, floor: "DB",
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				req, err := client.NewGetReadyzRequest(c.base)
				status, _, err := c.expect(ctx, req, err, http.StatusOK)
				return status, err
			}},
		{name: routeShelf, floor: "DB", steady: true,
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				req, err := client.NewGetV1ShelfRequest(c.base, &client.GetV1ShelfParams{Limit: &pageSize})
				status, _, err := c.expect(ctx, req, err, http.StatusOK)
				return status, err
			}},
		{name: "GET /shelf/{id} (a part's page)", floor: "DB", steady: true,
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				req, err := client.NewGetShelfIdRequest(c.base, strconv.Itoa(state.partIDs[n%len(state.partIDs)]))
				status, _, err := c.expect(ctx, req, err, http.StatusOK)
				return status, err
			}},
		{name: routeReview, floor: "HTTP", steady: true,
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				req, err := client.NewPostV1ReviewsRequestWithBody(c.base, nil, "application/json", bytes.NewReader(state.design))
				status, _, err := c.expect(ctx, req, err, http.StatusOK)
				return status, err
			}},
		{name: "POST /v1/components, GET it back", floor: "DB", steady: true,
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				id, err := createLoadComponent(ctx, c, state, n)
				var ae *answerError
				if errors.As(err, &ae) {
					return ae.status, err
				}
				if err != nil {
					return 0, err
				}
				req, err := client.NewGetV1ComponentsIdRequest(c.base, id)
				res, err := c.do(ctx, req, err)
				if err != nil {
					return 0, err
				}
				got, err := client.ParseGetV1ComponentsIdResponse(res)
				if err == nil {
					err = parsed(res, got.Body, got.JSON200 != nil)
				}
				if err == nil && !strings.HasPrefix(got.JSON200.Name, "load part ") {
					err = fmt.Errorf("component %d read back as %q", id, got.JSON200.Name)
				}
				return res.StatusCode, err
			}},
		{name: routeStored, floor: "DB", steady: true,
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				design := state.designIDs[c.id]
				req, err := client.NewPostV1DesignsIdReviewsRequest(c.base, design, nil)
				status, header, err := c.expect(ctx, req, err, http.StatusCreated)
				if err != nil {
					return status, err
				}
				share, err := shareIDOf(header)
				if err != nil {
					return status, err
				}
				state.ackReview(design, share)
				return status, nil
			}},
	}
}

// selectRoutes keeps every route, or with only set the routes whose name
// contains it followed by the two floors, so a profile taken from the
// start of the run sees the chosen route alone.
func selectRoutes(routes []loadRoute, only string) []loadRoute {
	if only == "" {
		return routes
	}
	var chosen, floors []loadRoute
	for _, r := range routes {
		switch {
		case r.name == routeHealthz || r.name == routeReadyz:
			floors = append(floors, r)
		case strings.Contains(r.name, only):
			chosen = append(chosen, r)
		}
	}
	return append(chosen, floors...)
}

// mixedRoute sends every route in turn, each client starting at its own.
func mixedRoute(routes []loadRoute) loadRoute {
	pick := func(c *loadClient, n int) loadRoute { return routes[(c.id+n)%len(routes)] }
	return loadRoute{name: "mixed, all of the above",
		do: func(ctx context.Context, c *loadClient, n int) (int, error) {
			return pick(c, n).do(ctx, c, n)
		},
		partOf: func(c *loadClient, n int) string { return pick(c, n).name },
	}
}

// runPhase runs one route with every client until cfg.requests or
// cfg.duration is spent, and summarises what it measured. When the time is up
// no client starts another request, but every request started is waited
// for and counted: one abandoned mid-way would leave the server working on
// it while the next phase is measured.
func runPhase(ctx context.Context, cfg loadConfig, clients []*loadClient, route loadRoute) phaseResult {
	var (
		left atomic.Int64
		mu   sync.Mutex
		wg   sync.WaitGroup
		all  tally
	)
	left.Store(int64(cfg.requests))
	start := time.Now()
	stop := start.Add(cfg.duration)
	for _, c := range clients {
		wg.Add(1)
		go func() {
			defer wg.Done()
			local := tally{timings: make([]time.Duration, 0, cfg.requests/len(clients)+1)}
			for n := 0; time.Now().Before(stop) && left.Add(-1) >= 0; n++ {
				t0 := time.Now()
				status, err := route.do(ctx, c, n)
				took := time.Since(t0)
				if ctx.Err() != nil {
					break // the run was interrupted: not a failure of the server
				}
				part := ""
				if route.partOf != nil {
					part = route.partOf(c, n)
				}
				local.record(part, took, status, err)
			}
			mu.Lock()
			all.merge(&local)
			mu.Unlock()
		}()
	}
	wg.Wait()
	return all.result(route, time.Since(start))
}

// runSteady sends the steady routes in turn at budgetSteadyRate requests
// a second for d, whatever is still in flight. Each request's latency
// counts from when it was due, not from when it went out, so a server
// (or harness) that falls behind shows it instead of hiding it by
// sending less.
func runSteady(ctx context.Context, d time.Duration, clients []*loadClient, routes []loadRoute) phaseResult {
	var mix []loadRoute
	for _, r := range routes {
		if r.steady {
			mix = append(mix, r)
		}
	}
	var (
		mu  sync.Mutex
		wg  sync.WaitGroup
		all tally
	)
	interval := time.Second / budgetSteadyRate
	start := time.Now()
	for i := 0; i < int(d/interval); i++ {
		due := start.Add(time.Duration(i) * interval)
		select {
		case <-ctx.Done():
		case <-time.After(time.Until(due)):
		}
		if ctx.Err() != nil {
			break
		}
		route, c := mix[i%len(mix)], clients[i%len(clients)]
		wg.Add(1)
		go func() {
			defer wg.Done()
			status, err := route.do(ctx, c, i)
			took := time.Since(due)
			if ctx.Err() != nil {
				return
			}
			mu.Lock()
			all.record(route.name, took, status, err)
			mu.Unlock()
		}()
	}
	wg.Wait()
	return all.result(loadRoute{name: fmt.Sprintf("steady, %d requests a second", budgetSteadyRate)}, time.Since(start))
}

// largeResult is what the large design's reviews measured.
type largeResult struct {
	times      []time.Duration // of the reviews answered 200, sorted
	failed     int
	firstError string
}

func (r largeResult) median() time.Duration { return percentile(r.times, 0.50) }

// runLarge reviews a design of largeDesignNodes nodes through POST
// /v1/reviews largeReviews times, one after another, each timed from
// sending the document to the last byte of the report.
func runLarge(ctx context.Context, c *loadClient) largeResult {
	doc := reviewDesign("load large design", largeDesignNodes)
	var res largeResult
	for range largeReviews {
		t0 := time.Now()
		req, err := client.NewPostV1ReviewsRequestWithBody(c.base, nil, "application/json", bytes.NewReader(doc))
		_, _, err = c.expect(ctx, req, err, http.StatusOK)
		took := time.Since(t0)
		if ctx.Err() != nil {
			break
		}
		if err != nil {
			res.failed++
			if res.firstError == "" {
				res.firstError = err.Error()
			}
			continue
		}
		res.times = append(res.times, took)
	}
	slices.Sort(res.times)
	return res
}

// percentile reads the q-quantile of sorted durations (nearest rank).
func percentile(sorted []time.Duration, q float64) time.Duration {
	if len(sorted) == 0 {
		return 0
	}
	rank := int(q*float64(len(sorted))+0.999999) - 1
	return sorted[min(max(rank, 0), len(sorted)-1)]
}

// checkWrites reads back every acknowledged create: a component that
// answered 201 and a stored review that answered 201 must still be there.
func checkWrites(ctx context.Context, c *loadClient, state *loadState) (acked, lost int, detail string) {
	state.mu.Lock()
	defer state.mu.Unlock()
	miss := func(what string, err error) {
		lost++
		if detail == "" {
			detail = fmt.Sprintf("%s: %v", what, err)
		}
	}
	for _, id := range state.components {
		acked++
		req, err := client.NewGetV1ComponentsIdRequest(c.base, id)
		if _, _, err := c.expect(ctx, req, err, http.StatusOK); err != nil {
			miss(fmt.Sprintf("component %d", id), err)
		}
	}
	for design, shares := range state.reviewShares {
		stored, err := storedShares(ctx, c, design)
		for _, s := range shares {
			acked++
			if !stored[s] {
				miss(fmt.Sprintf("review %s of design %d", s, design), err)
			}
		}
	}
	return acked, lost, detail
}

// storedShares lists the share ids of every stored review of design, and
// the error that ended the listing early, if one did.
func storedShares(ctx context.Context, c *loadClient, design client.ID) (map[string]bool, error) {
	stored := map[string]bool{}
	limit := 100
	params := &client.GetV1DesignsIdReviewsParams{Limit: &limit}
	for {
		req, err := client.NewGetV1DesignsIdReviewsRequest(c.base, design, params)
		res, err := c.do(ctx, req, err)
		if err != nil {
			return stored, err
		}
		page, err := client.ParseGetV1DesignsIdReviewsResponse(res)
		if err == nil {
			err = parsed(res, page.Body, page.JSON200 != nil)
		}
		if err != nil {
			return stored, err
		}
		for _, it := range page.JSON200.Items {
			stored[it.ShareId] = true
		}
		if page.JSON200.Next == nil || *page.JSON200.Next == "" {
			return stored, nil
		}
		params.Cursor = page.JSON200.Next
	}
}
