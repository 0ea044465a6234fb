package api

import (
	"fmt"
	"math"
	"net"
	"net/http"
	"net/netip"
	"strings"
	"sync"
	"time"

	"golang.org/x/time/rate"
)

// Defaults for the anonymous review endpoint: a script reviewing a folder
// of designs gets its burst at once and then one a second.
const (
	defaultReviewsPerMinute = 60
	defaultReviewBurst      = 20
	// maxTrackedClients bounds the limiter's memory when many addresses
	// arrive at once; clients past it share one bucket.
	maxTrackedClients = 50000
)

// clientLimiter gives each client address its own token bucket. An entry
// idle long enough to have refilled completely is indistinguishable from
// a fresh one, so dropping it loses nothing; entries are swept on use,
// which needs no goroutine to stop at shutdown.
type clientLimiter struct {
	every rate.Limit
	burst int
	idle  time.Duration // a bucket is full again after this long unused

	mu        sync.Mutex
	clients   map[string]*clientBucket
	overflow  *rate.Limiter
	lastSweep time.Time
}

type clientBucket struct {
	limiter  *rate.Limiter
	lastSeen time.Time
}

func newClientLimiter(perMinute float64, burst int) *clientLimiter {
	if perMinute <= 0 {
		perMinute = defaultReviewsPerMinute
	}
	if burst <= 0 {
		burst = defaultReviewBurst
	}
	every := rate.Limit(perMinute / 60)
	refill := time.Duration(float64(burst) / float64(every) * float64(time.Second))
	return &clientLimiter{
		every:    every,
		burst:    burst,
		idle:     refill + time.Second,
		clients:  map[string]*clientBucket{},
		overflow: rate.NewLimiter(every, burst),
	}
}

// allow takes one token for client at now. When the bucket is empty it
// returns how long until a token is free, rounded up to whole seconds
// for Retry-After.
func (l *clientLimiter) allow(client string, now time.Time) (bool, int) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if now.Sub(l.lastSweep) > l.idle {
		for k, b := range l.clients {
			if now.Sub(b.lastSeen) > l.idle {
				delete(l.clients, k)
			}
		}
		l.lastSweep = now
	}
	var lim *rate.Limiter
	if b, ok := l.clients[client]; ok {
		b.lastSeen = now
		lim = b.limiter
	} else if len(l.clients) < maxTrackedClients {
		lim = rate.NewLimiter(l.every, l.burst)
		l.clients[client] = &clientBucket{limiter: lim, lastSeen: now}
	} else {
		lim = l.overflow
	}
	r := lim.ReserveN(now, 1)
	delay := r.DelayFrom(now)
	if delay == 0 {
		return true, 0
	}
	r.CancelAt(now)
	return false, max(1, int(math.Ceil(delay.Seconds())))
}

// tracked is how many clients hold a bucket, for tests of the sweep.
func (l *clientLimiter) tracked() int {
	l.mu.Lock()
	defer l.mu.Unlock()
	return len(l.clients)
}

// clientKey names the client behind a request for the rate limit: its
// address (clientAddr), and for IPv6 clients their /64, the block one
// site gets.
func clientKey(r *http.Request, trusted []netip.Prefix) string {
	addr, ok := clientAddr(r, trusted)
	if !ok {
		return r.RemoteAddr
	}
	if addr.Is6() {
		prefix, _ := addr.Prefix(64)
		return prefix.String()
	}
	return addr.String()
}

// clientAddr is the address of the client behind a request: the address
// the connection came from. X-Forwarded-For counts only when the
// connection comes from a trusted proxy: anyone can write the header, and
// honouring it from anyone would let a client pick a fresh rate-limit
// bucket per request, or an address for the access log. Behind trusted
// proxies, the client is the rightmost address in the header that is not
// itself a trusted proxy. X-Real-IP is never read.
func clientAddr(r *http.Request, trusted []netip.Prefix) (netip.Addr, bool) {
	host, _, err := net.SplitHostPort(r.RemoteAddr)
	if err != nil {
		host = r.RemoteAddr
	}
	addr, err := netip.ParseAddr(host)
	if err != nil {
		return netip.Addr{}, false
	}
	addr = addr.Unmap()
	if isTrusted(addr, trusted) {
		addr = forwardedClient(r.Header.Values("X-Forwarded-For"), addr, trusted)
	}
	return addr, true
}

// forwardedClient walks the X-Forwarded-For chain from the nearest hop
// outwards and returns the first address no trusted proxy owns; a chain
// that is malformed there, or all trusted, leaves the nearest known hop.
func forwardedClient(headers []string, peer netip.Addr, trusted []netip.Prefix) netip.Addr {
	client := peer
	for i := len(headers) - 1; i >= 0; i-- {
		hops := strings.Split(headers[i], ",")
		for j := len(hops) - 1; j >= 0; j-- {
			hop, err := netip.ParseAddr(strings.TrimSpace(hops[j]))
			if err != nil {
				return client
			}
			client = hop.Unmap()
			if !isTrusted(client, trusted) {
				return client
			}
		}
	}
	return client
}

func isTrusted(addr netip.Addr, trusted []netip.Prefix) bool {
	for _, p := range trusted {
		if p.Contains(addr) {
			return true
		}
	}
	return false
}

// ParseTrustedProxies reads a comma-separated list of addresses and CIDR
// blocks, e.g. "127.0.0.1, 10.0.0.0/8".
func ParseTrustedProxies(list string) ([]netip.Prefix, error) {
	var out []netip.Prefix
	for _, item := range strings.Split(list, ",") {
		item = strings.TrimSpace(item)
		if item == "" {
			continue
		}
		if p, err := netip.ParsePrefix(item); err == nil {
			out = append(out, p.Masked())
			continue
		}
		a, err := netip.ParseAddr(item)
		if err != nil {
			return nil, fmt.Errorf("trusted proxy %q is neither an address nor a CIDR block", item)
		}
		a = a.Unmap()
		out = append(out, netip.PrefixFrom(a, a.BitLen()))
	}
	return out, nil
}
