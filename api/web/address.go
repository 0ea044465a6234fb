package web

import (
	"net"
	"net/url"
	"strings"
)

// LoopbackURL reports whether address (a URL such as
// "http://127.0.0.1:8080") names this machine only, or no machine at all,
// so that a QR code or link carrying it opens nothing on a phone.
func LoopbackURL(address string) bool {
	u, err := url.Parse(address)
	if err != nil || u.Host == "" {
		return false
	}
	host := strings.TrimSuffix(strings.ToLower(u.Hostname()), ".")
	if host == "localhost" || strings.HasSuffix(host, ".localhost") {
		return true // RFC 6761 section 6.3
	}
	ip := net.ParseIP(host)
	return ip != nil && (ip.IsLoopback() || ip.IsUnspecified())
}

// publicBase is the address QR codes and links start with.
func (p *pages) publicBase(scheme, host string) string {
	if base := strings.TrimRight(p.deps.PublicBaseURL, "/"); base != "" {
		return base
	}
	return scheme + "://" + host
}
