package electric

import (
	"encoding/json"
	"math"
	"testing"
)

func TestFuseRulesAgainst33CFR183455(t *testing.T) {
	r := DefaultFuseRules()
	// 33 CFR 183.455: no more than 150 % of the protected conductor's ampacity.
	within(t, "largest fuse on 18AWG/105 °C (20 A)", MaxFuseRatingA(20, r.MaxAmpacityMultiple), 30, 1e-12)
	// 33 CFR 183.455: within 7 in of the source, 40 in when sheathed.
	// The seeded 178 mm is 7 in (177.8 mm) rounded to the millimetre.
	if d := r.MaxDistanceFor(false); math.Abs(d-7*0.0254) > 0.0005 {
		t.Errorf("distance %g m, want 7 in to the nearest millimetre", d)
	}
	within(t, "sheathed distance", r.MaxDistanceFor(true), 40*0.0254, 1e-9)
	// Common practice: the fuse carries the continuous load at 80 % of its rating.
	within(t, "smallest fuse for 6 A continuous", MinFuseRatingA(6, r.ContinuousLoadFactor), 7.5, 1e-12)
	for _, s := range []string{r.ContinuousLoadFactorSource, r.MaxAmpacityMultipleSource, r.MaxDistanceSource} {
		if s == "" {
			t.Error("a fuse rule has no source")
		}
	}
	raw, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	var back FuseRules
	if err := json.Unmarshal(raw, &back); err != nil || back != r {
		t.Errorf("fuse rules do not survive JSON: %v", err)
	}
}

func TestFuseFamilies(t *testing.T) {
	fams := DefaultFuseFamilies()
	byName := map[string]FuseFamily{}
	for _, f := range fams {
		byName[f.Name] = f
		if f.Standard == "" || f.Source == "" || !(f.MaxVoltageV > 0) || len(f.RatingsA) == 0 {
			t.Errorf("%s: incomplete family %+v", f.Name, f)
		}
		for i := 1; i < len(f.RatingsA); i++ {
			if !(f.RatingsA[i] > f.RatingsA[i-1]) {
				t.Errorf("%s: ratings not rising at %g", f.Name, f.RatingsA[i])
			}
		}
	}
	// IEC 60127-2 5x20 mm ratings follow the R10 series of preferred
	// numbers (ISO 3): 10^(k/10), rounded to 1, 1.25, 1.6, 2, 2.5, 3.15,
	// 4, 5, 6.3, 8.
	glass := byName["glass-5x20"]
	for _, r := range glass.RatingsA {
		k := math.Round(10 * math.Log10(r))
		within(t, "R10 rating", r, math.Pow(10, k/10), 0.015)
	}
	// Blade fuses (ISO 8820-3) include 7.5 A (the design document's example).
	if !IsStandardRating(byName["blade"].RatingsA, 7.5) {
		t.Error("blade family lacks 7.5 A")
	}
}

func TestNextStandardRating(t *testing.T) {
	blade := []float64{1, 2, 3, 4, 5, 7.5, 10, 15, 20, 25, 30, 35, 40} // ISO 8820-3 (from memory)
	cases := []struct {
		current, want float64
		ok            bool
	}{
		{0.2, 1, true}, {5, 5, true}, {5.01, 7.5, true}, {7.5, 7.5, true}, {12.5, 15, true}, {40, 40, true}, {40.1, 0, false},
	}
	for _, c := range cases {
		got, ok := NextStandardRating(blade, c.current)
		if got != c.want || ok != c.ok {
			t.Errorf("next blade rating for %g A = %g, %v; want %g, %v", c.current, got, ok, c.want, c.ok)
		}
	}
	// Order of the list does not matter.
	if got, _ := NextStandardRating([]float64{10, 2, 5}, 3); got != 5 {
		t.Errorf("unsorted list: got %g, want 5", got)
	}
	glass := DefaultFuseFamilies()[2].RatingsA
	if !IsStandardRating(glass, 3.15) || IsStandardRating(glass, 3) || IsStandardRating(blade, 6) {
		t.Error("IsStandardRating misjudged 3.15 A / 3 A glass or 6 A blade")
	}
	if !IsStandardRating(glass, 3.1500000001) {
		t.Error("a stored 3.15 A with rounding noise is not recognised")
	}
}
