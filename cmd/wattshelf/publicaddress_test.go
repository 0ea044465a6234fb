package main

import "testing"

func TestPublicAddressWarning(t *testing.T) {
	cases := []struct {
		publicURL, listening string
		warn                 bool
	}{
		{"", "127.0.0.1:8080", true},
		{"", "[::1]:8080", true},
		{"", "localhost:8080", true},
		{"", "0.0.0.0:8080", false}, // codes carry whatever address the screen opened
		{"", "192.168.1.20:8080", false},
		{"http://127.0.0.1:8080", "0.0.0.0:8080", true},
		{"http://localhost:8080", "0.0.0.0:8080", true},
		{"http://shelf.local:8080", "127.0.0.1:8080", false}, // behind a proxy that phones reach
		{"http://192.168.1.20:8080", "0.0.0.0:8080", false},
	}
	for _, tc := range cases {
		if got := publicAddressWarning(tc.publicURL, tc.listening); (got != "") != tc.warn {
			t.Errorf("public %q, listening on %s: warning %q, want one %t", tc.publicURL, tc.listening, got, tc.warn)
		}
	}
}
