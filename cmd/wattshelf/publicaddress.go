package main

import (
	"net"
	"strings"

	"wattshelf/api/web"
)

// publicAddressWarning says why the QR codes and links the pages print
// would open nothing on a phone, or "" when they can: the configured
// public address is a loopback one, or none is configured and serve
// listens on loopback only, so every page is opened (and every code made)
// at a loopback address.
func publicAddressWarning(publicURL, listening string) string {
	if publicURL != "" {
		if web.LoopbackURL(publicURL) {
			return "WATTSHELF_PUBLIC_URL is a loopback address, so the kiosk's QR codes and links open nothing on a phone: " +
				"set it to the address phones reach this server by"
		}
		return ""
	}
	host, _, err := net.SplitHostPort(listening)
	if err != nil {
		return ""
	}
	if ip := net.ParseIP(host); strings.EqualFold(host, "localhost") || ip != nil && ip.IsLoopback() {
		return "serving on loopback only and WATTSHELF_PUBLIC_URL is not set, so the kiosk's QR codes carry a loopback address " +
			"no phone can open: listen beyond loopback (--addr 0.0.0.0:8080) and set WATTSHELF_PUBLIC_URL to the address phones use"
	}
	return ""
}
