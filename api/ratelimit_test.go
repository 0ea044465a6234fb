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
		if got := clientKey(r, nil); got != want {
			t.Errorf("clientKey(%q) = %q, want %q", remote, got, want)
		}
	}
}

func TestClientKeyBehindTrustedProxies(t *testing.T) {
	trusted, err := ParseTrustedProxies("127.0.0.1, 10.0.0.0/8 ,::1")
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		remote    string
		forwarded []string
		want      string
	}{
		// From a trusted proxy: the nearest untrusted hop is the client.
		{"127.0.0.1:4000", []string{"198.51.100.7"}, "198.51.100.7"},
		{"127.0.0.1:4000", []string{"203.0.113.9, 198.51.100.7, 10.1.2.3"}, "198.51.100.7"},
		{"127.0.0.1:4000", []string{"203.0.113.9", "198.51.100.7"}, "198.51.100.7"},
		{"[::1]:4000", []string{"2001:db8:5:6::1"}, "2001:db8:5:6::/64"},
		// A client's own header is not believed past the first untrusted hop.
		{"127.0.0.1:4000", []string{"1.2.3.4, 198.51.100.7"}, "198.51.100.7"},
		// No header, a chain of only proxies, or garbage: the last known hop.
		{"127.0.0.1:4000", nil, "127.0.0.1"},
		{"127.0.0.1:4000", []string{"10.0.0.5"}, "10.0.0.5"},
		{"127.0.0.1:4000", []string{"bogus"}, "127.0.0.1"},
		// From anyone else the header is ignored.
		{"192.0.2.1:5000", []string{"198.51.100.7"}, "192.0.2.1"},
	} {
		r := httptest.NewRequest("POST", "/v1/reviews", nil)
		r.RemoteAddr = c.remote
		for _, f := range c.forwarded {
			r.Header.Add("X-Forwarded-For", f)
		}
		if got := clientKey(r, trusted); got != c.want {
			t.Errorf("clientKey(%s, X-Forwarded-For %q) = %q, want %q", c.remote, c.forwarded, got, c.want)
		}
	}
}

func TestParseTrustedProxies(t *testing.T) {
	got, err := ParseTrustedProxies(" 192.168.1.10 , 172.16.0.0/12,,::ffff:10.0.0.1, fd00::/8")
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"192.168.1.10/32", "172.16.0.0/12", "10.0.0.1/32", "fd00::/8"}
	if len(got) != len(want) {
		t.Fatalf("got %v, want %v", got, want)
	}
	for i := range want {
		if got[i].String() != want[i] {
			t.Errorf("entry %d: %v, want %s", i, got[i], want[i])
		}
	}
	for _, bad := range []string{"proxy.lan", "10.0.0.0/33", "1.2.3"} {
		if _, err := ParseTrustedProxies(bad); err == nil {
			t.Errorf("ParseTrustedProxies(%q) accepted it", bad)
		}
	}
}
