package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/url"
	"os"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"text/tabwriter"
	"time"
	"wattshelf/api/client"
)

const loadUsage = `usage: wattshelf-load --url URL [--token TOKEN] [--clients 32] [--requests 20000] [--duration 5s] [--pid PID] [--only ROUTE]

Drives traffic at a wattshelf server on this machine (loopback only) and
prints throughput and latency per route beside the HTTP floor (GET /healthz)
and the database floor (GET /readyz). Each route runs alone with every client
for at most --requests requests or --duration (a request started in time is
waited for and counted), then all routes run mixed.
The token (or WATTSHELF_TOKEN) must be a member's or staff's: the run writes
components, designs and stored reviews, all named "load ...".`

// loadTargets are the figures the service is held to on a 2-core machine
// at 32 clients (issue 6).
const (
	targetShelfOfDBFloor     = 0.50
	targetReviewOfHTTPFloor  = 0.50
	targetP99                = 50 * time.Millisecond
	targetRSSBytes           = 100 << 20
	loadReviewDesignNodes    = 30
	loadShelfPageSize        = 50
	loadMinShelfSize         = loadShelfPageSize + 10
	loadDefaultClients       = 32
	loadDefaultRequests      = 20000
	loadDefaultPhaseDuration = 5 * time.Second
)

type loadConfig struct {
	base     string
	token    string
	clients  int
	requests int
	duration time.Duration
	pid      int
	only     string
}

// run is the whole program, callable from tests: args exclude the program
// name, getenv stands in for os.Getenv.
func run(ctx context.Context, args []string, getenv func(string) string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("wattshelf-load", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	cfg := loadConfig{}
	fs.StringVar(&cfg.base, "url", "http://127.0.0.1:8080", "server to load; must be on this machine")
	fs.StringVar(&cfg.token, "token", getenv("WATTSHELF_TOKEN"), "bearer token of a member or staff")
	fs.IntVar(&cfg.clients, "clients", loadDefaultClients, "concurrent clients")
	fs.IntVar(&cfg.requests, "requests", loadDefaultRequests, "most requests per route")
	fs.DurationVar(&cfg.duration, "duration", loadDefaultPhaseDuration, "most time per route")
	fs.IntVar(&cfg.pid, "pid", 0, "server process id, to read its resident memory from /proc")
	fs.StringVar(&cfg.only, "only", "", "run only the routes whose name contains this (the floors always run), e.g. when profiling one")
	if err := fs.Parse(args); err != nil || fs.NArg() != 0 {
		return &exitError{code: 2, msg: loadUsage}
	}
	if cfg.token == "" || cfg.clients < 1 || cfg.clients > 1024 || cfg.requests < 1 || cfg.duration <= 0 ||
		cfg.duration > 10*time.Minute {
		return &exitError{code: 2, msg: loadUsage}
	}
	cfg.base = strings.TrimRight(cfg.base, "/")
	if err := requireLoopback(cfg.base); err != nil {
		return &exitError{code: 2, msg: err.Error()}
	}
	report, err := runLoad(ctx, cfg, stderr)
	if err != nil {
		return err
	}
	report.print(stdout, cfg)
	if missed := report.missedTargets(); len(missed) > 0 {
		return &exitError{code: 1, msg: "targets missed: " + strings.Join(missed, "; ")}
	}
	return nil
}

// requireLoopback keeps the harness pointed at this machine: load is
// for measuring our own server, never for sending floods elsewhere.
func requireLoopback(base string) error {
	u, err := url.Parse(base)
	if err != nil || (u.Scheme != "http" && u.Scheme != "https") || u.Host == "" {
		return fmt.Errorf("load: --url %q is not an http URL", base)
	}
	host := u.Hostname()
	if host == "localhost" {
		return nil
	}
	if ip := net.ParseIP(host); ip != nil && ip.IsLoopback() {
		return nil
	}
	return fmt.Errorf("load: --url %q is not a loopback address; the harness only loads a server on this machine", base)
}

// loadRoute is one kind of request the harness sends. do returns the
// status of the request it timed; a verify step it takes afterwards
// (reading a write back) is part of the same timing.
type loadRoute struct {
	name  string
	floor string // "HTTP" or "DB": the floor this route is compared with
	do    func(ctx context.Context, c *loadClient, n int) (int, error)
	// partOf names the route a mixed phase's request n of client c
	// went to, so its latencies can be told apart; nil elsewhere.
	partOf func(c *loadClient, n int) string
}

// phaseResult is what one route measured.
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

// partResult is what one route measured inside the mixed phase.
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

// loadReport is the whole run's outcome.
type loadReport struct {
	phases     []phaseResult
	acked      int
	lost       int
	lostDetail string
	rssPeak    int64
	rssSource  string
}

// loadState is what the routes share: the designs to review, and every
// acknowledged create, checked again at the end.
type loadState struct {
	design    []byte
	designIDs []client.ID // one stored design per client

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
	report := &loadReport{}
	// A short unmeasured warm-up fills the connection pools on both sides.
	warm := cfg
	warm.requests, warm.duration = cfg.clients*10, 2*time.Second
	runPhase(ctx, warm, clients, mixedRoute(routes))
	for _, r := range selectRoutes(append(routes, mixedRoute(routes)), cfg.only) {
		fmt.Fprintf(progress, "load: %s ...\n", r.name)
		res := runPhase(ctx, cfg, clients, r)
		report.phases = append(report.phases, res)
		if ctx.Err() != nil {
			break
		}
	}
	stopRSS()
	report.rssPeak, report.rssSource = rss.peak()
	if report.rssSource == "" {
		report.rssPeak, report.rssSource = scrapeRSS(ctx, clients[0])
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
		return fmt.Errorf("load: the server at %s is not ready: %w", c.base, err)
	}
	limit := client.Limit(200)
	req, err = client.NewGetV1ComponentsRequest(c.base, &client.GetV1ComponentsParams{Limit: &limit})
	res, err := c.do(ctx, req, err)
	if err != nil {
		return fmt.Errorf("load: list components: %w", err)
	}
	list, err := client.ParseGetV1ComponentsResponse(res)
	if err == nil {
		err = parsed(res, list.Body, list.JSON200 != nil)
	}
	if err != nil {
		return fmt.Errorf("load: the token does not list components: %w", err)
	}
	if have := len(list.JSON200.Items); have < loadMinShelfSize {
		fmt.Fprintf(progress, "load: adding %d components so the shelf holds more than a page\n", loadMinShelfSize-have)
		for i := have; i < loadMinShelfSize; i++ {
			if _, err := createLoadComponent(ctx, c, state, i); err != nil {
				return fmt.Errorf("load: add a component: %w", err)
			}
		}
	}
	for i := range clients {
		doc := reviewDesign(fmt.Sprintf("load design %d", i), loadReviewDesignNodes)
		req, err := client.NewPostV1DesignsRequestWithBody(c.base, "application/json", bytes.NewReader(doc))
		res, err := c.do(ctx, req, err)
		if err != nil {
			return fmt.Errorf("load: store a design: %w", err)
		}
		created, err := client.ParsePostV1DesignsResponse(res)
		if err == nil {
			err = parsed(res, created.Body, created.JSON201 != nil)
		}
		if err != nil {
			return fmt.Errorf("load: store a design: %w", err)
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
		{name: "GET /healthz", floor: "HTTP",
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				req, err := client.NewGetHealthzRequest(c.base)
				status, _, err := c.expect(ctx, req, err, http.StatusOK)
				return status, err
			}},
		{name: "GET /readyz", floor: "DB",
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				req, err := client.NewGetReadyzRequest(c.base)
				status, _, err := c.expect(ctx, req, err, http.StatusOK)
				return status, err
			}},
		{name: fmt.Sprintf("GET /v1/shelf?limit=%d", loadShelfPageSize), floor: "DB",
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				req, err := client.NewGetV1ShelfRequest(c.base, &client.GetV1ShelfParams{Limit: &pageSize})
				status, _, err := c.expect(ctx, req, err, http.StatusOK)
				return status, err
			}},
		{name: fmt.Sprintf("POST /v1/reviews (%d nodes)", loadReviewDesignNodes), floor: "HTTP",
			do: func(ctx context.Context, c *loadClient, n int) (int, error) {
				req, err := client.NewPostV1ReviewsRequestWithBody(c.base, nil, "application/json", bytes.NewReader(state.design))
				status, _, err := c.expect(ctx, req, err, http.StatusOK)
				return status, err
			}},
		{name: "POST /v1/components, GET it back", floor: "DB",
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
		{name: "POST /v1/designs/{id}/reviews", floor: "DB",
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
		case r.name == "GET /healthz" || r.name == "GET /readyz":
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

// runPhase runs one route with every client until the request budget or
// the time is spent, and summarises what it measured. When the time is up
// no client starts another request, but every request started is waited
// for and counted: one abandoned mid-way would leave the server working on
// it while the next phase is measured.
func runPhase(ctx context.Context, cfg loadConfig, clients []*loadClient, route loadRoute) phaseResult {
	var (
		budget  atomic.Int64
		mu      sync.Mutex
		wg      sync.WaitGroup
		res     = phaseResult{route: route}
		timings []time.Duration
		byPart  = map[string][]time.Duration{}
	)
	budget.Store(int64(cfg.requests))
	// Reads and inline reviews answer 200, creates 201.
	want := func(status int) bool { return status == http.StatusOK || status == http.StatusCreated }
	start := time.Now()
	stop := start.Add(cfg.duration)
	for _, c := range clients {
		wg.Add(1)
		go func() {
			defer wg.Done()
			local := make([]time.Duration, 0, cfg.requests/len(clients)+1)
			localParts := map[string][]time.Duration{}
			var fiveXX, other, transport int
			var firstErr string
			for n := 0; time.Now().Before(stop) && budget.Add(-1) >= 0; n++ {
				t0 := time.Now()
				status, err := route.do(ctx, c, n)
				took := time.Since(t0)
				if ctx.Err() != nil {
					break // the run was interrupted: not a failure of the server
				}
				local = append(local, took)
				if route.partOf != nil {
					part := route.partOf(c, n)
					localParts[part] = append(localParts[part], took)
				}
				switch {
				case err != nil && status == 0:
					transport++
				case status >= 500:
					fiveXX++
				case err != nil || !want(status):
					other++
				}
				if (err != nil || !want(status)) && firstErr == "" {
					firstErr = fmt.Sprintf("status %d %v", status, err)
				}
			}
			mu.Lock()
			timings = append(timings, local...)
			for part, d := range localParts {
				byPart[part] = append(byPart[part], d...)
			}
			res.fiveXX += fiveXX
			res.other += other
			res.transport += transport
			if res.firstError == "" {
				res.firstError = firstErr
			}
			mu.Unlock()
		}()
	}
	wg.Wait()
	res.elapsed = time.Since(start)
	res.requests = len(timings)
	slices.Sort(timings)
	res.p50, res.p99 = percentile(timings, 0.50), percentile(timings, 0.99)
	for part, d := range byPart {
		slices.Sort(d)
		res.parts = append(res.parts, partResult{name: part, requests: len(d),
			p50: percentile(d, 0.50), p99: percentile(d, 0.99)})
	}
	slices.SortFunc(res.parts, func(a, b partResult) int { return strings.Compare(a.name, b.name) })
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

// rssSampler reads a process's resident memory from /proc while the
// load runs, keeping the highest value seen.
type rssSampler struct {
	pid  int
	max  atomic.Int64
	done chan struct{}
}

func newRSSSampler(pid int) *rssSampler { return &rssSampler{pid: pid, done: make(chan struct{})} }

func (s *rssSampler) start() (stop func()) {
	if s.pid <= 0 {
		return func() {}
	}
	stopped := make(chan struct{})
	go func() {
		defer close(s.done)
		tick := time.NewTicker(100 * time.Millisecond)
		defer tick.Stop()
		for {
			if v, err := readVmRSS(s.pid); err == nil && v > s.max.Load() {
				s.max.Store(v)
			}
			select {
			case <-stopped:
				return
			case <-tick.C:
			}
		}
	}()
	return func() {
		close(stopped)
		<-s.done
	}
}

func (s *rssSampler) peak() (int64, string) {
	if s.pid <= 0 || s.max.Load() == 0 {
		return 0, ""
	}
	return s.max.Load(), fmt.Sprintf("peak VmRSS of pid %d, sampled every 100 ms", s.pid)
}

// readVmRSS reads the VmRSS line of /proc/PID/status, in bytes.
func readVmRSS(pid int) (int64, error) {
	f, err := os.Open(fmt.Sprintf("/proc/%d/status", pid))
	if err != nil {
		return 0, err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		rest, ok := strings.CutPrefix(sc.Text(), "VmRSS:")
		if !ok {
			continue
		}
		fields := strings.Fields(rest)
		if len(fields) != 2 || fields[1] != "kB" {
			return 0, fmt.Errorf("unexpected VmRSS line %q", sc.Text())
		}
		kb, err := strconv.ParseInt(fields[0], 10, 64)
		return kb * 1024, err
	}
	return 0, fmt.Errorf("no VmRSS in /proc/%d/status", pid)
}

// scrapeRSS reads process_resident_memory_bytes from /metrics when the
// server exposes it: the memory at the end of the run, not the peak.
func scrapeRSS(ctx context.Context, c *loadClient) (int64, string) {
	req, err := client.NewGetMetricsRequest(c.base)
	res, err := c.do(ctx, req, err)
	if err != nil {
		return 0, ""
	}
	defer res.Body.Close()
	body, err := io.ReadAll(res.Body)
	if err != nil || res.StatusCode != http.StatusOK {
		return 0, ""
	}
	for line := range strings.SplitSeq(string(body), "\n") {
		if v, ok := strings.CutPrefix(line, "process_resident_memory_bytes "); ok {
			f, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
			if err == nil {
				return int64(f), "process_resident_memory_bytes from /metrics after the run"
			}
		}
	}
	return 0, ""
}

func (r *loadReport) floor(name string) float64 {
	for _, p := range r.phases {
		if (name == "HTTP" && p.route.name == "GET /healthz") || (name == "DB" && p.route.name == "GET /readyz") {
			return p.throughput()
		}
	}
	return 0
}

// targetFor is the ratio a route must reach against its floor, if any.
func targetFor(route string) float64 {
	switch {
	case strings.HasPrefix(route, "GET /v1/shelf"):
		return targetShelfOfDBFloor
	case strings.HasPrefix(route, "POST /v1/reviews"):
		return targetReviewOfHTTPFloor
	}
	return 0
}

func (r *loadReport) print(w io.Writer, cfg loadConfig) {
	fmt.Fprintf(w, "wattshelf load: %d clients, each route alone for at most %d requests or %s, then mixed; %s; %d CPUs shared by server, database and load\n\n",
		cfg.clients, cfg.requests, cfg.duration, cfg.base, runtime.NumCPU())
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "route\trequests\treq/s\tp50 ms\tp99 ms\t5xx\tother\tfloor\tratio\ttarget\t")
	for _, p := range r.phases {
		floorName, ratio, target := "", "", ""
		if p.route.floor != "" {
			floorName = p.route.floor
			if f := r.floor(p.route.floor); f > 0 {
				ratio = fmt.Sprintf("%.2f", p.throughput()/f)
			}
		}
		if t := targetFor(p.route.name); t > 0 {
			target = fmt.Sprintf(">= %.2f", t)
		}
		fmt.Fprintf(tw, "%s\t%d\t%.0f\t%.2f\t%.2f\t%d\t%d\t%s\t%s\t%s\t\n", p.route.name, p.requests, p.throughput(),
			ms(p.p50), ms(p.p99), p.fiveXX, p.other+p.transport, floorName, ratio, target)
		// Within the mixed phase the routes share the time, so each
		// shows its latencies, not a throughput of its own.
		for _, part := range p.parts {
			fmt.Fprintf(tw, "in mixed: %s\t%d\t\t%.2f\t%.2f\t\t\t\t\t\t\n", part.name, part.requests, ms(part.p50), ms(part.p99))
		}
	}
	tw.Flush()
	fmt.Fprintln(w)
	fmt.Fprintf(w, "lost writes: %d of %d acknowledged creates missing afterwards", r.lost, r.acked)
	if r.lostDetail != "" {
		fmt.Fprintf(w, " (first: %s)", r.lostDetail)
	}
	fmt.Fprintln(w)
	if r.rssSource != "" {
		fmt.Fprintf(w, "server resident memory: %.1f MB (%s)\n", float64(r.rssPeak)/(1<<20), r.rssSource)
	} else {
		fmt.Fprintln(w, "server resident memory: unknown (give --pid, or expose process_resident_memory_bytes)")
	}
	for _, p := range r.phases {
		if p.firstError != "" {
			fmt.Fprintf(w, "first unexpected answer on %s: %s\n", p.route.name, p.firstError)
		}
	}
	if missed := r.missedTargets(); len(missed) == 0 {
		fmt.Fprintln(w, "targets: all met")
	} else {
		fmt.Fprintf(w, "targets missed: %s\n", strings.Join(missed, "; "))
	}
}

func ms(d time.Duration) float64 { return float64(d.Microseconds()) / 1000 }

// missedTargets lists every target the run did not meet.
func (r *loadReport) missedTargets() []string {
	var missed []string
	for _, p := range r.phases {
		if p.fiveXX > 0 {
			missed = append(missed, fmt.Sprintf("%s answered 5xx %d times", p.route.name, p.fiveXX))
		}
		if p.p99 >= targetP99 {
			missed = append(missed, fmt.Sprintf("%s p99 %.1f ms is not under %.0f ms", p.route.name, ms(p.p99), ms(targetP99)))
		}
		if t := targetFor(p.route.name); t > 0 {
			if f := r.floor(p.route.floor); f > 0 && p.throughput()/f < t {
				missed = append(missed, fmt.Sprintf("%s at %.2f of the %s floor, below %.2f", p.route.name, p.throughput()/f, p.route.floor, t))
			}
		}
	}
	if r.lost > 0 {
		missed = append(missed, fmt.Sprintf("%d acknowledged writes lost", r.lost))
	}
	if r.rssSource != "" && r.rssPeak >= targetRSSBytes {
		missed = append(missed, fmt.Sprintf("resident memory %.1f MB is not under %d MB", float64(r.rssPeak)/(1<<20), targetRSSBytes>>20))
	}
	return missed
}

// reviewDesign builds a valid format-1 design of
// exactly nodes nodes, at least 10: a 4-cell LiFePO4 pack feeding two
// motor drivers with two gear motors each, a lamp, and a 5 V buck rail
// with a 3.3 V linear rail below it; the remaining nodes are small loads
// shared between the two rails. The figures are invented but plausible,
// so the review does real work on every check.
func reviewDesign(name string, nodes int) []byte {
	nodes = max(nodes, 10)
	type m = map[string]any
	wire := func(gauge string, length float64) m { return m{"gauge": gauge, "length_m": length} }
	list := []m{
		{"id": "pack", "type": "battery", "chemistry": "lifepo4", "series": 4, "parallel": 1,
			"cell_capacity_mah": 3000, "max_discharge_a": 15},
		{"id": "lamp", "type": "load", "min_v": 9, "max_v": 15, "current_a": 0.6, "duty": 0.5,
			"feed": m{"from": "pack", "wire": wire("20AWG", 0.6),
				"fuse": m{"rating_a": 1, "speed": "slow", "family": "blade", "distance_from_source_m": 0.12}}},
		{"id": "buck5", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 2,
			"efficiency": 0.88, "min_input_v": 7, "max_input_v": 28, "quiescent_a": 0.002,
			"feed": m{"from": "pack", "wire": wire("22AWG", 0.3),
				"fuse": m{"rating_a": 2, "speed": "fast", "family": "blade", "distance_from_source_m": 0.08}}},
		{"id": "ldo3v3", "type": "regulator", "topology": "linear", "output_v": 3.3, "max_output_a": 0.5,
			"dropout_v": 0.4, "quiescent_a": 0.005, "theta_ja_c_per_w": 60, "tj_max_c": 125,
			"feed": m{"from": "buck5", "wire": wire("24AWG", 0.1)}},
	}
	for d := 1; d <= 2; d++ {
		drv := fmt.Sprintf("drive%d", d)
		list = append(list, m{"id": drv, "type": "driver", "max_input_v": 30, "continuous_a": 3, "peak_a": 6,
			"quiescent_a": 0.005,
			"feed": m{"from": "pack", "wire": m{"gauge": "18AWG", "length_m": 0.4, "insulation_c": 105, "bundled": 2},
				"fuse":       m{"rating_a": 5, "speed": "slow", "family": "blade", "distance_from_source_m": 0.1},
				"connectors": []m{{"family": "xt30"}}}})
		for w := 1; w <= 2; w++ {
			list = append(list, m{"id": fmt.Sprintf("motor%d%d", d, w), "type": "motor", "rated_v": 12,
				"no_load_a": 0.15, "stall_a": 2, "min_v": 6, "max_v": 15, "duty": 0.3,
				"feed": m{"from": drv, "wire": wire("20AWG", 0.5)}})
		}
	}
	for i := 0; len(list) < nodes; i++ {
		if i%2 == 0 {
			list = append(list, m{"id": fmt.Sprintf("board%d", i), "type": "load", "min_v": 4.5, "max_v": 5.5,
				"current_a": 0.03, "peak_a": 0.06, "feed": m{"from": "buck5", "wire": wire("24AWG", 0.2)}})
		} else {
			list = append(list, m{"id": fmt.Sprintf("sensor%d", i), "type": "load", "min_v": 3.0, "max_v": 3.6,
				"current_a": 0.005, "duty": 0.5, "feed": m{"from": "ldo3v3", "wire": wire("26AWG", 0.3)}})
		}
	}
	doc, err := json.Marshal(m{"format": 1, "name": name, "ambient_c": 25, "target_runtime_h": 1, "nodes": list})
	if err != nil {
		panic(err) // maps of plain values always encode
	}
	return doc
}
