package domain

import (
	"math"
	"testing"
)

func TestSupplyWindow(t *testing.T) {
	v := func(x float64) *float64 { return &x }
	cases := []struct {
		name     string
		e        Electrical
		lo, hi   float64
		hasRange bool
	}{
		{"own window", Electrical{Ratings: Ratings{MinV: v(3), MaxV: v(8.4), RatedV: v(7.2)}}, 3, 8.4, true},
		{"input window", Electrical{Ratings: Ratings{MinInputV: v(6.5), MaxInputV: v(28)}}, 6.5, 28, true},
		{"own window before the input window", Electrical{Ratings: Ratings{MinV: v(4), MaxV: v(5), MinInputV: v(1), MaxInputV: v(30)}}, 4, 5, true},
		// 14.4 V ±10 %: 12.96–15.84 V.
		{"rated only", Electrical{Ratings: Ratings{RatedV: v(14.4)}}, 12.96, 15.84, true},
		{"nominal only", Electrical{NominalV: v(12)}, 10.8, 13.2, true},
		{"rated before nominal", Electrical{NominalV: v(12), Ratings: Ratings{RatedV: v(6)}}, 5.4, 6.6, true},
		{"a maximum only", Electrical{Ratings: Ratings{MaxInputV: v(10.8)}}, 0, 10.8, true},
		{"a minimum and a rated voltage", Electrical{Ratings: Ratings{MinV: v(3), RatedV: v(5)}}, 3, 5.5, true},
		{"a minimum only", Electrical{Ratings: Ratings{MinV: v(3)}}, 0, 0, false},
		{"a connector's rating", Electrical{RatingV: v(250), RatingA: v(3)}, 0, 0, false},
		{"nothing known", Electrical{}, 0, 0, false},
	}
	for _, tc := range cases {
		lo, hi, ok := tc.e.SupplyWindow()
		if ok != tc.hasRange || math.Abs(lo-tc.lo) > 1e-9 || math.Abs(hi-tc.hi) > 1e-9 {
			t.Errorf("%s: %v–%v (%t), want %v–%v (%t)", tc.name, lo, hi, ok, tc.lo, tc.hi, tc.hasRange)
		}
	}
}
