package main

import (
	"bufio"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"

	"wattshelf/api"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// TestDatabaseOutageMidTraffic takes PostgreSQL away while clients keep
// calling, then brings it back. While it is gone the service answers 503
// problem documents with Retry-After and never 500 or a dropped
// connection; once it is back the service recovers by itself.
//
// Two kinds of outage: the database refuses and resets connections (it
// stopped or restarted), or it goes silent (a network partition, a frozen
// host), where only timeouts end the wait.
func TestDatabaseOutageMidTraffic(t *testing.T) {
	t.Run("connections reset", func(t *testing.T) { testOutage(t, (*tcpProxy).cut) })
	t.Run("database silent", func(t *testing.T) { testOutage(t, (*tcpProxy).stall) })
}

func testOutage(t *testing.T, takeAway func(*tcpProxy)) {
	dbURL := storetest.NewDatabaseURL(t)
	token := mintToken(t, dbURL, "outage-staff", "staff")
	proxy := newTCPProxy(t, hostOf(t, dbURL))

	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	logs := newLogBuffer()
	served := make(chan error, 1)
	go func() {
		served <- run(ctx, []string{"serve", "--addr", "127.0.0.1:0"}, envWith(viaProxy(t, dbURL, proxy.addr())), logs, logs)
	}()
	base := logs.waitForAddr(t, 30*time.Second)
	client := newAPIClient(base, token)
	anon := newAPIClient(base, "")

	status, _, body, err := client.do(ctx, http.MethodPost, "/v1/components", componentBody("before", 0))
	if err != nil || status != http.StatusCreated {
		t.Fatalf("create before the outage: %d %v %s", status, err, body)
	}

	// Background traffic through the whole outage: every answer must be a
	// success or a 503 problem; anything else is a defect.
	var (
		stop       atomic.Bool
		wg         sync.WaitGroup
		mu         sync.Mutex
		unexpected []string
		answered   atomic.Int64
		refused    atomic.Int64
	)
	for w := range 6 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := 0; !stop.Load(); i++ {
				var status int
				var h http.Header
				var body []byte
				var err error
				switch (w + i) % 3 {
				case 0:
					status, h, body, err = anon.do(ctx, http.MethodGet, "/v1/shelf", nil)
				case 1:
					status, h, body, err = client.do(ctx, http.MethodGet, "/v1/components?kind=motor", nil)
				default:
					status, h, body, err = client.do(ctx, http.MethodPost, "/v1/components", componentBody("bg", i))
				}
				answered.Add(1)
				if status == http.StatusServiceUnavailable {
					refused.Add(1)
				}
				ok := err == nil && (status == 200 || status == 201 ||
					(status == 503 && h.Get("Retry-After") != "" && strings.HasPrefix(h.Get("Content-Type"), "application/problem+json")))
				if !ok {
					mu.Lock()
					unexpected = append(unexpected, strings.TrimSpace(http.StatusText(status)+" "+string(body)+" "+errString(err)))
					mu.Unlock()
				}
				time.Sleep(5 * time.Millisecond)
			}
		}()
	}

	time.Sleep(300 * time.Millisecond)
	takeAway(proxy)
	time.Sleep(300 * time.Millisecond)

	// Each answer must come within the service's wait limit on the
	// database, plus slack for a loaded test machine.
	bound := api.DatabaseWaitLimit + 3*time.Second
	for _, probe := range []struct {
		what   string
		client *apiClient
		method string
		path   string
		body   any
	}{
		{"/readyz", anon, http.MethodGet, "/readyz", nil},
		{"GET /v1/shelf", anon, http.MethodGet, "/v1/shelf", nil},
		{"GET /v1/components", client, http.MethodGet, "/v1/components?q=part", nil},
		{"POST /v1/components", client, http.MethodPost, "/v1/components", componentBody("during", 0)},
	} {
		start := time.Now()
		status, h, body, err := probe.client.do(ctx, probe.method, probe.path, probe.body)
		if err != nil {
			t.Errorf("%s during the outage: %v", probe.what, err)
			continue
		}
		checkUnavailable(t, probe.what+" during the outage", status, h, body)
		if took := time.Since(start); took > bound {
			t.Errorf("%s during the outage took %s; a client should hear 503 within %s", probe.what, took, bound)
		}
	}
	status, _, _, err = anon.do(ctx, http.MethodGet, "/healthz", nil)
	if err != nil || status != http.StatusOK {
		t.Errorf("/healthz during the outage: %d %v; the process itself is fine", status, err)
	}

	proxy.restore()
	deadline := time.Now().Add(20 * time.Second)
	for {
		status, _, _, err := anon.do(ctx, http.MethodGet, "/readyz", nil)
		if err == nil && status == http.StatusOK {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("service did not recover within 20 s of the database returning (last /readyz %d %v)", status, err)
		}
		time.Sleep(100 * time.Millisecond)
	}
	status, _, body, err = client.do(ctx, http.MethodPost, "/v1/components", componentBody("after", 0))
	if err != nil || status != http.StatusCreated {
		t.Errorf("create after the outage: %d %v %s", status, err, body)
	}
	time.Sleep(200 * time.Millisecond)
	stop.Store(true)
	wg.Wait()

	if refused.Load() == 0 {
		t.Error("the background traffic never saw the outage; the test proved nothing")
	}
	if len(unexpected) > 0 {
		t.Errorf("%d of %d answers were neither success nor a 503 problem, e.g. %q", len(unexpected), answered.Load(), unexpected[0])
	}
	if strings.Contains(logs.String(), "panic") {
		t.Errorf("the server panicked:\n%s", logs.String())
	}
	cancel()
	select {
	case err := <-served:
		if err != nil {
			t.Errorf("serve returned %v", err)
		}
	case <-time.After(20 * time.Second):
		t.Error("serve did not stop after its context ended")
	}
}

func errString(err error) string {
	if err == nil {
		return ""
	}
	return err.Error()
}

// TestSIGTERMUnderLoad stops a real server process with SIGTERM while
// clients keep writing. A request in flight when the signal arrives is
// finished, a new connection is refused, the process exits 0, and the
// database holds exactly the writes that were acknowledged, each whole.
func TestSIGTERMUnderLoad(t *testing.T) {
	bin := buildBinary(t)
	dbURL := storetest.NewDatabaseURL(t)
	token := mintToken(t, dbURL, "sigterm-member", "member")
	p := startProcess(t, bin, dbURL)
	client := newAPIClient(p.url, token)
	ctx := context.Background()

	// One request is held in flight: its headers and half its body are
	// sent before the signal, the rest after.
	body, err := json.Marshal(componentBody("inflight", 0))
	if err != nil {
		t.Fatal(err)
	}
	host := strings.TrimPrefix(p.url, "http://")
	held, err := net.Dial("tcp", host)
	if err != nil {
		t.Fatal(err)
	}
	defer held.Close()
	fmt.Fprintf(held, "POST /v1/components HTTP/1.1\r\nHost: %s\r\nAuthorization: Bearer %s\r\nContent-Type: application/json\r\nContent-Length: %d\r\n\r\n",
		host, token, len(body))
	half := len(body) / 2
	if _, err := held.Write(body[:half]); err != nil {
		t.Fatal(err)
	}

	var (
		wg    sync.WaitGroup
		mu    sync.Mutex
		acked []int64
		stop  atomic.Bool
		fails []string
	)
	for w := range 8 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := 0; !stop.Load(); i++ {
				status, _, resp, err := client.do(ctx, http.MethodPost, "/v1/components", componentBody(fmt.Sprintf("w%d", w), i))
				if err != nil {
					return // the server is going away: refused or closed
				}
				mu.Lock()
				if status == http.StatusCreated {
					acked = append(acked, createdID(t, resp))
				} else {
					fails = append(fails, fmt.Sprintf("%d %s", status, resp))
				}
				mu.Unlock()
			}
		}()
	}
	time.Sleep(500 * time.Millisecond)
	if err := p.cmd.Process.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	// The listener closes at once; the held request keeps the process up.
	deadline := time.Now().Add(5 * time.Second)
	for {
		c, err := net.DialTimeout("tcp", host, time.Second)
		if err != nil {
			break
		}
		c.Close()
		if time.Now().After(deadline) {
			t.Fatal("new connections are still accepted 5 s after SIGTERM")
		}
		time.Sleep(20 * time.Millisecond)
	}
	stop.Store(true)
	wg.Wait()

	if _, err := held.Write(body[half:]); err != nil {
		t.Fatalf("finish the held request: %v", err)
	}
	res, err := http.ReadResponse(bufio.NewReader(held), nil)
	if err != nil {
		t.Fatalf("the in-flight request got no answer: %v", err)
	}
	heldBody, _ := io.ReadAll(res.Body)
	res.Body.Close()
	if res.StatusCode != http.StatusCreated {
		t.Fatalf("the in-flight request: %d %s", res.StatusCode, heldBody)
	}
	acked = append(acked, createdID(t, heldBody))

	if err := p.wait(t, 30*time.Second); err != nil {
		t.Errorf("exit after SIGTERM: %v, want status 0\n%s", err, p.log.String())
	}
	if len(fails) > 0 {
		t.Errorf("%d writes answered with an error before the shutdown, e.g. %s", len(fails), fails[0])
	}
	if len(acked) < 10 {
		t.Fatalf("only %d writes were acknowledged; the load proved little", len(acked))
	}
	t.Logf("%d writes acknowledged, the last one held across the signal", len(acked))
	checkComponentsWhole(t, dbURL, acked, true)
}

// checkComponentsWhole compares the stored components with the
// acknowledged ones: each acknowledged id must be there with its audit
// entry, committed in the same transaction. With exact, nothing
// unacknowledged may be there either.
func checkComponentsWhole(t *testing.T, dbURL string, acked []int64, exact bool) {
	t.Helper()
	ctx := context.Background()
	conn, err := pgx.Connect(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	rows, err := conn.Query(ctx, `SELECT c.id, count(a.id) FROM components c
		LEFT JOIN audit a ON a.action = 'component.create' AND a.subject_id = c.id::text
		GROUP BY c.id`)
	if err != nil {
		t.Fatal(err)
	}
	stored := map[int64]int64{}
	for rows.Next() {
		var id, audits int64
		if err := rows.Scan(&id, &audits); err != nil {
			t.Fatal(err)
		}
		stored[id] = audits
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	for _, id := range acked {
		audits, ok := stored[id]
		if !ok {
			t.Errorf("acknowledged component %d is missing", id)
		} else if audits != 1 {
			t.Errorf("component %d has %d create audit entries, want 1", id, audits)
		}
	}
	for id, audits := range stored {
		if audits != 1 {
			t.Errorf("component %d is half-stored: %d create audit entries", id, audits)
		}
	}
	if exact && len(stored) != len(acked) {
		t.Errorf("%d components stored, %d acknowledged: a graceful stop stores exactly what it acknowledges", len(stored), len(acked))
	}
}

// TestSIGKILLMidWrites kills a real server process without warning while
// clients write components, designs, stored reviews and limits versions,
// then starts it again on the same database. Every acknowledged write is
// there, and nothing is half-stored: each record has its audit entry,
// which the same transaction writes.
func TestSIGKILLMidWrites(t *testing.T) {
	bin := buildBinary(t)
	dbURL := storetest.NewDatabaseURL(t)
	token := mintToken(t, dbURL, "sigkill-staff", "staff")
	p := startProcess(t, bin, dbURL)
	client := newAPIClient(p.url, token)
	ctx := context.Background()

	var (
		wg         sync.WaitGroup
		mu         sync.Mutex
		components []int64
		designs    = map[int64][]byte{}
		designIDs  []int64
		reviews    []string
		limits     = map[int]string{}
	)
	writer := func(write func(i int) bool) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := 0; write(i); i++ {
			}
		}()
	}
	for w := range 3 {
		writer(func(i int) bool {
			status, _, body, err := client.do(ctx, http.MethodPost, "/v1/components", componentBody(fmt.Sprintf("k%d", w), i))
			if err != nil || status != http.StatusCreated {
				return false
			}
			mu.Lock()
			components = append(components, createdID(t, body))
			mu.Unlock()
			return true
		})
	}
	for w := range 2 {
		writer(func(i int) bool {
			doc := faultDesign(fmt.Sprintf("kill test %d-%d", w, i))
			status, _, body, err := client.do(ctx, http.MethodPost, "/v1/designs", json.RawMessage(doc))
			if err != nil || status != http.StatusCreated {
				return false
			}
			mu.Lock()
			id := createdID(t, body)
			designs[id] = doc
			designIDs = append(designIDs, id)
			mu.Unlock()
			return true
		})
	}
	for range 2 {
		writer(func(i int) bool {
			mu.Lock()
			var design int64
			if len(designIDs) > 0 {
				design = designIDs[i%len(designIDs)]
			}
			mu.Unlock()
			if design == 0 {
				time.Sleep(10 * time.Millisecond)
				return true
			}
			status, _, body, err := client.do(ctx, http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", design), nil)
			if err != nil || status != http.StatusCreated {
				return false
			}
			var v struct {
				ShareID string `json:"share_id"`
			}
			if json.Unmarshal(body, &v) != nil || v.ShareID == "" {
				t.Errorf("stored review without share id: %s", body)
				return false
			}
			mu.Lock()
			reviews = append(reviews, v.ShareID)
			mu.Unlock()
			return true
		})
	}
	writer(func(i int) bool {
		status, _, body, err := client.do(ctx, http.MethodGet, "/v1/limits", nil)
		if err != nil || status != http.StatusOK {
			return false
		}
		var current struct {
			Limits json.RawMessage `json:"limits"`
		}
		if json.Unmarshal(body, &current) != nil {
			return false
		}
		note := fmt.Sprintf("kill test edit %d", i)
		status, _, body, err = client.do(ctx, http.MethodPut, "/v1/limits",
			map[string]any{"limits": current.Limits, "note": note}, "If-Match", "*")
		if err != nil || status != http.StatusCreated {
			return false
		}
		var v struct {
			Version int `json:"version"`
		}
		if json.Unmarshal(body, &v) != nil || v.Version == 0 {
			return false
		}
		mu.Lock()
		limits[v.Version] = note
		mu.Unlock()
		return true
	})

	time.Sleep(1500 * time.Millisecond)
	if err := p.cmd.Process.Kill(); err != nil {
		t.Fatal(err)
	}
	wg.Wait()
	_ = p.wait(t, 10*time.Second)
	t.Logf("acknowledged before the kill: %d components, %d designs, %d reviews, %d limits versions",
		len(components), len(designs), len(reviews), len(limits))
	if len(components) == 0 || len(designs) == 0 || len(reviews) == 0 || len(limits) == 0 {
		t.Fatal("some kind of write was never acknowledged; the test proved nothing about it")
	}

	// The service starts again on the same database and serves.
	again := startProcess(t, bin, dbURL)
	if status, _, body, err := newAPIClient(again.url, token).do(ctx, http.MethodGet, "/readyz", nil); err != nil || status != http.StatusOK {
		t.Fatalf("/readyz after restart: %d %v %s", status, err, body)
	}

	checkComponentsWhole(t, dbURL, components, false)
	conn, err := pgx.Connect(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	for id, doc := range designs {
		var stored string
		if err := conn.QueryRow(ctx, `SELECT document FROM designs WHERE id = $1`, id).Scan(&stored); err != nil {
			t.Errorf("acknowledged design %d: %v", id, err)
		} else if stored != string(doc) {
			t.Errorf("design %d is stored differently from what was acknowledged", id)
		}
	}
	for _, share := range reviews {
		var n int
		if err := conn.QueryRow(ctx, `SELECT count(*) FROM reviews WHERE share_id = $1`, share).Scan(&n); err != nil || n != 1 {
			t.Errorf("acknowledged review %s: %d rows, %v", share, n, err)
		}
	}
	for version, note := range limits {
		var stored string
		if err := conn.QueryRow(ctx, `SELECT note FROM limits WHERE version = $1`, version).Scan(&stored); err != nil || stored != note {
			t.Errorf("acknowledged limits version %d: note %q, %v; want %q", version, stored, err, note)
		}
	}
	// Nothing half-stored, acknowledged or not: every record has its audit
	// entry and every report is whole JSON agreeing with its row.
	for _, q := range []struct{ what, sql string }{
		{"designs without one create entry", `SELECT count(*) FROM designs d WHERE (SELECT count(*) FROM audit a
			WHERE a.action = 'design.create' AND a.subject_id = d.id::text) <> 1`},
		{"reviews without one create entry", `SELECT count(*) FROM reviews r WHERE (SELECT count(*) FROM audit a
			WHERE a.action = 'review.create' AND a.detail->>'review' = r.id::text) <> 1`},
		{"reviews whose report disagrees with the row", `SELECT count(*) FROM reviews
			WHERE report::json->>'status' IS DISTINCT FROM status OR (report::json->>'limits_version')::int IS DISTINCT FROM limits_version`},
		{"limits versions without one audit entry", `SELECT count(*) FROM limits l WHERE (SELECT count(*) FROM audit a
			WHERE a.action IN ('limits.put', 'limits.seed') AND a.subject_id = l.version::text) <> 1`},
		{"gaps in the limits versions", `SELECT max(version) - count(*) FROM limits`},
	} {
		var n int
		if err := conn.QueryRow(ctx, q.sql).Scan(&n); err != nil {
			t.Fatalf("%s: %v", q.what, err)
		}
		if n != 0 {
			t.Errorf("%d %s", n, q.what)
		}
	}
}

// TestTwoServersOneDatabase starts two server processes at the same
// moment on a database that does not exist yet: both must create,
// migrate and prepare it without tripping over each other. Staff then edit
// the limits through both at once: every acknowledged edit is its own
// version, none is lost, and a stale If-Match is refused, not merged.
func TestTwoServersOneDatabase(t *testing.T) {
	bin := buildBinary(t)
	var a, b *serverProcess
	var dbURL string
	for round := range 3 {
		dbURL = storetest.AbsentDatabaseURL(t)
		a, b = launchProcess(t, bin, dbURL), launchProcess(t, bin, dbURL)
		a.url, b.url = a.log.waitForAddr(t, 60*time.Second), b.log.waitForAddr(t, 60*time.Second)
		for _, p := range []*serverProcess{a, b} {
			status, _, body, err := newAPIClient(p.url, "").do(context.Background(), http.MethodGet, "/readyz", nil)
			if err != nil || status != http.StatusOK {
				t.Fatalf("round %d: /readyz %d %v %s\n%s", round, status, err, body, p.log.String())
			}
		}
		var version, limits int
		var dirty bool
		q := `SELECT (SELECT version FROM schema_migrations), (SELECT dirty FROM schema_migrations), (SELECT count(*) FROM limits)`
		if err := queryRow(t, dbURL, q, nil, &version, &dirty, &limits); err != nil {
			t.Fatal(err)
		}
		want, err := store.SchemaVersion()
		if err != nil {
			t.Fatal(err)
		}
		if version != int(want) || dirty || limits != 1 {
			t.Fatalf("round %d: schema version %d (dirty %t) with %d limits versions; want %d, clean, 1", round, version, dirty, limits, want)
		}
	}

	token := mintToken(t, dbURL, "limits-staff", "staff")
	ctx := context.Background()
	var (
		wg       sync.WaitGroup
		mu       sync.Mutex
		acked    = map[int]string{}
		stale    atomic.Int64
		failures []string
	)
	for s, p := range []*serverProcess{a, b} {
		client := newAPIClient(p.url, token)
		for c := range 3 {
			wg.Add(1)
			go func() {
				defer wg.Done()
				for e := range 6 {
					note := fmt.Sprintf("server %d client %d edit %d", s, c, e)
					// Read, change, write with If-Match; on 412 read again.
					for attempt := 0; attempt < 50; attempt++ {
						status, h, body, err := client.do(ctx, http.MethodGet, "/v1/limits", nil)
						if err != nil || status != http.StatusOK {
							mu.Lock()
							failures = append(failures, fmt.Sprintf("GET %d %v", status, err))
							mu.Unlock()
							return
						}
						var cur struct {
							Limits json.RawMessage `json:"limits"`
						}
						if err := json.Unmarshal(body, &cur); err != nil {
							t.Error(err)
							return
						}
						ifMatch := h.Get("ETag")
						if e%3 == 2 {
							ifMatch = "*" // some edits overwrite whatever is current
						}
						status, _, body, err = client.do(ctx, http.MethodPut, "/v1/limits",
							map[string]any{"limits": cur.Limits, "note": note}, "If-Match", ifMatch)
						if err == nil && status == http.StatusPreconditionFailed {
							stale.Add(1)
							continue
						}
						if err != nil || status != http.StatusCreated {
							mu.Lock()
							failures = append(failures, fmt.Sprintf("PUT %d %v %s", status, err, body))
							mu.Unlock()
							return
						}
						var v struct {
							Version int    `json:"version"`
							Note    string `json:"note"`
						}
						if err := json.Unmarshal(body, &v); err != nil || v.Note != note {
							t.Errorf("PUT answer %s", body)
							return
						}
						mu.Lock()
						if prev, dup := acked[v.Version]; dup {
							failures = append(failures, fmt.Sprintf("version %d acknowledged twice: %q and %q", v.Version, prev, note))
						}
						acked[v.Version] = note
						mu.Unlock()
						break
					}
				}
			}()
		}
	}
	wg.Wait()
	for _, f := range failures {
		t.Error(f)
	}
	if len(acked) != 2*3*6 {
		t.Errorf("%d edits acknowledged, want %d", len(acked), 2*3*6)
	}
	t.Logf("%d edits stored as distinct versions; %d stale If-Match refused with 412 and retried", len(acked), stale.Load())
	for version, note := range acked {
		var stored string
		if err := queryRow(t, dbURL, `SELECT note FROM limits WHERE version = $1`, []any{version}, &stored); err != nil || stored != note {
			t.Errorf("version %d holds %q (%v), acknowledged as %q", version, stored, err, note)
		}
	}
	var count, newest int
	if err := queryRow(t, dbURL, `SELECT count(*), max(version) FROM limits`, nil, &count, &newest); err != nil {
		t.Fatal(err)
	}
	if count != len(acked)+1 || newest != count {
		t.Errorf("%d versions up to %d; want the seeded one plus %d, without gaps", count, newest, len(acked))
	}
}

// queryRow runs one query with args on dbURL and scans its row.
func queryRow(t *testing.T, dbURL, sql string, args []any, targets ...any) error {
	t.Helper()
	ctx := context.Background()
	conn, err := pgx.Connect(ctx, dbURL)
	if err != nil {
		return err
	}
	defer conn.Close(ctx)
	return conn.QueryRow(ctx, sql, args...).Scan(targets...)
}
