package store_test

import (
	"context"
	"encoding/json"
	"io/fs"
	"slices"
	"testing"

	"wattshelf"
	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// fitting lists the names of the parts whose supply window holds v.
func fitting(t *testing.T, st *store.Store, v float64) []string {
	t.Helper()
	list, more, err := st.ListComponents(context.Background(), store.ComponentFilter{FitsV: &v, Limit: 200})
	if err != nil || more {
		t.Fatalf("fits_v %v: more %t, %v", v, more, err)
	}
	var names []string
	for _, c := range list {
		names = append(names, c.Name)
	}
	return names
}

// fits_v lists a part whose supply window holds the voltage: its own
// min_v/max_v, else its input window; an end left out is its rated (else
// nominal) voltage ±10 % (domain.RatedVoltageTolerance, common practice
// for small DC motors and devices), a low end still unknown 0 V. A part
// whose high end stays unknown is never listed. Each window is tried just
// inside and just outside both ends.
func TestFitsVoltageWindow(t *testing.T) {
	st, _ := storetest.NewStore(t)
	v := func(x float64) *float64 { return &x }
	cases := []struct {
		name   string
		e      domain.Electrical
		lo, hi float64 // the window; hi 0: none
	}{
		{"own window", domain.Electrical{Ratings: domain.Ratings{MinV: v(3), MaxV: v(8.4), RatedV: v(7.2)}}, 3, 8.4},
		{"input window", domain.Electrical{Ratings: domain.Ratings{MinInputV: v(6.5), MaxInputV: v(28)}}, 6.5, 28},
		{"own window before the input window", domain.Electrical{Ratings: domain.Ratings{MinV: v(4), MaxV: v(5), MinInputV: v(1), MaxInputV: v(30)}}, 4, 5},
		// 14.4 V ±10 %: 14.4 × 0.9 = 12.96 V to 14.4 × 1.1 = 15.84 V.
		{"rated only", domain.Electrical{Ratings: domain.Ratings{RatedV: v(14.4)}}, 12.96, 15.84},
		// 12 V ±10 %: 10.8–13.2 V.
		{"nominal only", domain.Electrical{NominalV: v(12)}, 10.8, 13.2},
		// 6 V ±10 %: 5.4–6.6 V; the nominal 12 V is not read.
		{"rated before nominal", domain.Electrical{NominalV: v(12), Ratings: domain.Ratings{RatedV: v(6)}}, 5.4, 6.6},
		{"a maximum only", domain.Electrical{Ratings: domain.Ratings{MaxInputV: v(10.8)}}, 0, 10.8},
		// The low end given, the high end 5 × 1.1 = 5.5 V.
		{"a minimum and a rated voltage", domain.Electrical{Ratings: domain.Ratings{MinV: v(3), RatedV: v(5)}}, 3, 5.5},
		{"a minimum only", domain.Electrical{Ratings: domain.Ratings{MinV: v(3)}}, 0, 0},
		{"a connector's rating", domain.Electrical{RatingV: v(250), RatingA: v(3)}, 0, 0},
		{"nothing known", domain.Electrical{}, 0, 0},
	}
	for _, tc := range cases {
		in := part("other", tc.name)
		in.Electrical = tc.e
		mustCreate(t, st, memberAda, in)
	}
	const step = 0.01 // well above rounding, well below any window
	for _, tc := range cases {
		var inside, outside []float64
		switch {
		case tc.hi == 0:
			outside = []float64{0, 3, 5, 12, 250}
		case tc.lo == 0:
			inside, outside = []float64{0, tc.hi - step}, []float64{tc.hi + step}
		default:
			inside, outside = []float64{tc.lo + step, tc.hi - step}, []float64{tc.lo - step, tc.hi + step}
		}
		for _, x := range inside {
			if !slices.Contains(fitting(t, st, x), tc.name) {
				t.Errorf("%s: fits_v=%v does not list it; its window is %v–%v V", tc.name, x, tc.lo, tc.hi)
			}
		}
		for _, x := range outside {
			if slices.Contains(fitting(t, st, x), tc.name) {
				t.Errorf("%s: fits_v=%v lists it; its window is %v–%v V (none when the high end is 0)", tc.name, x, tc.lo, tc.hi)
			}
		}
	}
}

// At 5 V the demo shelf lists what a 5 V rail can feed, and no 14.4 V
// drill motor, wire or fuse.
func TestFitsFiveVoltsOnTheDemoShelf(t *testing.T) {
	st, _ := storetest.NewStore(t)
	raw, err := fs.ReadFile(wattshelf.DemoFiles, "testdata/demo/components.json")
	if err != nil {
		t.Fatal(err)
	}
	var demo []domain.ComponentInput
	if err := json.Unmarshal(raw, &demo); err != nil {
		t.Fatal(err)
	}
	for _, in := range demo {
		in.Defaults()
		mustCreate(t, st, memberAda, in)
	}
	at5 := fitting(t, st, 5)
	if len(at5) == 0 {
		t.Fatal("nothing on the demo shelf runs on 5 V")
	}
	for _, in := range demo {
		if in.Kind == "wire" || in.Kind == "fuse" || in.Name == "Drill motor with worn brushes" {
			if slices.Contains(at5, in.Name) {
				t.Errorf("fits_v=5 lists %q (%s)", in.Name, in.Kind)
			}
		}
	}
	t.Logf("fits_v=5 lists %d of %d demo parts: %q", len(at5), len(demo), at5)
}
