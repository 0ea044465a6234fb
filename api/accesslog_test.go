package api

import (
	"bytes"
	"encoding/json"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"net/netip"
	"strings"
	"testing"

	"github.com/labstack/echo/v4"
)

// TestAccessLogBelievesOnlyTrustedProxies sends X-Forwarded-For and
// X-Real-IP from a client and from a trusted proxy: the logged address is
// the connection's peer unless that peer is a trusted proxy, and then the
// client the proxy names, as the rate limiter reads it. The documentation
// addresses are RFC 5737 and RFC 3849 ones.
func TestAccessLogBelievesOnlyTrustedProxies(t *testing.T) {
	trusted := []netip.Prefix{netip.MustParsePrefix("10.0.0.0/8")}
	tests := []struct {
		name, peer, forwarded, realIP, want string
	}{
		{"client alone", "192.0.2.10:5000", "", "", "192.0.2.10"},
		{"client forging X-Forwarded-For", "192.0.2.10:5000", "198.51.100.7", "", "192.0.2.10"},
		{"client forging X-Real-IP", "192.0.2.10:5000", "", "198.51.100.7", "192.0.2.10"},
		{"client forging both", "192.0.2.10:5000", "198.51.100.7", "203.0.113.9", "192.0.2.10"},
		{"IPv6 client forging", "[2001:db8::1]:5000", "198.51.100.7", "198.51.100.8", "2001:db8::1"},
		{"trusted proxy naming its client", "10.1.2.3:5000", "198.51.100.7", "", "198.51.100.7"},
		{"trusted proxy, client forged a hop before it", "10.1.2.3:5000", "203.0.113.9, 198.51.100.7", "", "198.51.100.7"},
		{"trusted proxy ignoring X-Real-IP", "10.1.2.3:5000", "", "198.51.100.7", "10.1.2.3"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			var logs bytes.Buffer
			e := echo.New()
			e.Use(accessLog(slog.New(slog.NewJSONHandler(&logs, nil)), trusted))
			e.GET("/", func(c echo.Context) error { return c.NoContent(http.StatusNoContent) })
			req := httptest.NewRequest(http.MethodGet, "/", nil)
			req.RemoteAddr = tt.peer
			if tt.forwarded != "" {
				req.Header.Set("X-Forwarded-For", tt.forwarded)
			}
			if tt.realIP != "" {
				req.Header.Set("X-Real-IP", tt.realIP)
			}
			e.ServeHTTP(httptest.NewRecorder(), req)
			var line struct {
				Remote string `json:"remote"`
			}
			if err := json.Unmarshal([]byte(strings.TrimSpace(logs.String())), &line); err != nil {
				t.Fatalf("log %q: %v", logs.String(), err)
			}
			if line.Remote != tt.want {
				t.Errorf("logged remote %q, want %q", line.Remote, tt.want)
			}
		})
	}
}
