package main

import (
	"context"
	"net/http"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"wattshelf/api"
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
