package domain

import "testing"

func TestCountOf(t *testing.T) {
	for n, want := range map[int]string{0: "0 reviews", 1: "1 review", 2: "2 reviews", -1: "-1 reviews"} {
		if got := CountOf(n, "review", "reviews"); got != want {
			t.Errorf("CountOf(%d) = %q, want %q", n, got, want)
		}
	}
}
