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

// The fits_v query and domain.Electrical.SupplyWindow say the same of
// every part of the demo shelf at every voltage tried, and at 5 V the
// demo shelf answers as issue 16 asks: no 14.4 V drill motor, no wire,
// no fuse.
func TestFitsVoltageAgreesWithTheDomain(t *testing.T) {
	ctx := context.Background()
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
	fits := func(v float64) []string {
		t.Helper()
		list, more, err := st.ListComponents(ctx, store.ComponentFilter{FitsV: &v, Limit: 200})
		if err != nil || more {
			t.Fatalf("fits_v %v: more %t, %v", v, more, err)
		}
		var names []string
		for _, c := range list {
			names = append(names, c.Name)
		}
		return names
	}
	for _, v := range []float64{0, 1.2, 3, 3.3, 5, 6.4, 7.2, 8.4, 9, 12, 12.9, 13, 13.3, 14.4, 15.8, 15.9, 24, 48, 230} {
		var want []string
		for _, in := range demo {
			if lo, hi, ok := in.SupplyWindow(); ok && lo <= v && v <= hi {
				want = append(want, in.Name)
			}
		}
		if got := fits(v); !slices.Equal(got, want) {
			t.Errorf("fits_v=%v: the store lists %q, the domain's window %q", v, got, want)
		}
	}
	at5 := fits(5)
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
