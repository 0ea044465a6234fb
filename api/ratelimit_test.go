package api

import (
	"net/http/httptest"
	"testing"
	"time"
)

func TestClientLimiter(t *testing.T) {
	start := time.Date(2026, 1, 1, 12, 0, 0, 0, time.UTC)
	l := newClientLimiter(60, 3) // one a second, bursts of three
	for i := range 3 {
		if ok, _ := l.allow("a", start); !ok {
			t.Fatalf("request %d of a burst of 3 refused", i+1)
		}
	}
	ok, wait := l.allow("a", start)
	if ok || wait != 1 {
		t.Fatalf("fourth request at once: allowed %t, retry after %d s; want refused, 1 s", ok, wait)
	}
	if ok, _ := l.allow("b", start); !ok {
		t.Fatal("another client was refused")
	}
	if ok, _ := l.allow("a", start.Add(time.Second)); !ok {
		t.Fatal("a second later the refilled token was refused")
	}
	// Idle long enough to have refilled, a client's bucket is dropped.
	if n := l.tracked(); n != 2 {
		t.Fatalf("tracking %d clients, want 2", n)
	}
	l.allow("c", start.Add(l.idle+2*time.Second))
	if n := l.tracked(); n != 1 {
		t.Fatalf("after the idle time %d clients are tracked, want only the new one", n)
	}
}

func TestClientKey(t *testing.T) {
	cases := map[string]string{
		"192.0.2.1:5000":         "192.0.2.1",
		"[2001:db8:1:2:3::9]:80": "2001:db8:1:2::/64",
		"[::ffff:192.0.2.1]:443": "192.0.2.1",
		"not an address":         "not an address",
	}
	for remote, want := range cases {
		r := httptest.NewRequest("POST", "/v1/reviews", nil)
		r.RemoteAddr = remote
		if got := clientKey(r); got != want {
			t.Errorf("clientKey(%q) = %q, want %q", remote, got, want)
		}
	}
}
