package electric

import (
	"errors"
	"math"
	"testing"
)

func finite(xs ...float64) bool {
	for _, x := range xs {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}

// Seeds live in testdata/fuzz/<FuzzName>/.

// FuzzParseGauge: never panics; an accepted label yields a finite
// positive area, a canonical label that parses back to the same gauge, and
// an ampacity from the default table.
func FuzzParseGauge(f *testing.F) {
	tbl := DefaultConductorTable()
	f.Fuzz(func(t *testing.T, label string) {
		g, err := ParseGauge(label)
		if err != nil {
			if !errors.Is(err, ErrUnknownGauge) {
				t.Fatalf("%q: error %v does not wrap ErrUnknownGauge", label, err)
			}
			return
		}
		if !finite(g.AreaMM2) || !(g.AreaMM2 > 0) {
			t.Fatalf("%q: area %g", label, g.AreaMM2)
		}
		back, err := ParseGauge(g.Label)
		if err != nil || back != g {
			t.Fatalf("%q → %+v → %+v, %v", label, g, back, err)
		}
		amps, err := tbl.Ampacity(g, 105, 1)
		if err != nil || !finite(amps) || !(amps > 0) {
			t.Fatalf("%q: ampacity %g, %v", label, amps, err)
		}
		if r := LoopResistanceOhm(g, 1, 25); !finite(r) || !(r > 0) {
			t.Fatalf("%q: loop resistance %g", label, r)
		}
	})
}

// FuzzFitMotor: never panics; from finite readings it either refuses with
// one of its typed errors or returns finite, positive figures.
func FuzzFitMotor(f *testing.F) {
	f.Fuzz(func(t *testing.T, v, i1, s1, i2, s2, i3, s3 float64, n uint8) {
		if !finite(v, i1, s1, i2, s2, i3, s3) {
			return
		}
		all := []BenchPoint{{v, i1, s1}, {v, i2, s2}, {v, i3, s3}}
		fit, err := FitMotor(all[:int(n)%4])
		if err != nil {
			if !errors.Is(err, ErrTooFewCurrents) && !errors.Is(err, ErrSpeedNotFalling) &&
				!errors.Is(err, ErrMixedVoltages) && !errors.Is(err, ErrBadPoint) {
				t.Fatalf("untyped error %v", err)
			}
			return
		}
		if !finite(fit.VoltageV, fit.StallA, fit.ResistanceOhm, fit.KvRPMPerV, fit.IdealNoLoadRPM, fit.ResidualRPM) {
			t.Fatalf("non-finite fit %+v", fit)
		}
		if !(fit.StallA > 0 && fit.ResistanceOhm > 0 && fit.KvRPMPerV > 0 && fit.IdealNoLoadRPM > 0 && fit.ResidualRPM >= 0) || fit.Points < 2 {
			t.Fatalf("implausible fit %+v", fit)
		}
	})
}
