package web

import "testing"

func TestLoopbackURL(t *testing.T) {
	cases := map[string]bool{
		"http://127.0.0.1:8080":         true,
		"http://127.8.9.10":             true, // all of 127.0.0.0/8 (RFC 1122 section 3.2.1.3)
		"http://[::1]:8080/":            true,
		"http://localhost:8080":         true,
		"http://LOCALHOST.":             true,
		"http://shelf.localhost":        true, // RFC 6761 section 6.3
		"http://0.0.0.0:8080":           true,
		"http://[::]:8080":              true,
		"http://192.168.1.20:8080":      false,
		"http://shelf.local:8080":       false,
		"https://makerspace.example/ws": false,
		"http://localhost.example.org":  false,
		"not a url":                     false,
		"":                              false,
	}
	for address, want := range cases {
		if got := LoopbackURL(address); got != want {
			t.Errorf("LoopbackURL(%q) = %t, want %t", address, got, want)
		}
	}
}
