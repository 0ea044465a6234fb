package electric

import (
	"math"
	"strings"
	"testing"
)

// The fault figures of the seeded fuse families, each against the
// standard its source names.
func TestFuseFamilyFaultFigures(t *testing.T) {
	byName := map[string]FuseFamily{}
	for _, f := range DefaultFuseFamilies() {
		byName[f.Name] = f
		if f.FaultSource == "" || !(f.BreakingCapacityA > 0) || len(f.Clearing) != 2 {
			t.Errorf("%s: incomplete fault figures %+v", f.Name, f)
		}
		for _, g := range f.Clearing {
			if g.Source == "" || !(g.Multiple > 1) || !(g.WithinS > 0) {
				t.Errorf("%s: gate %+v", f.Name, g)
			}
		}
	}
	for _, c := range []struct {
		family        string
		ratingA       float64
		breakingA, dc float64
		acOnly        bool
	}{
		// ISO 8820-3 blades: 32 V DC, 1,000 A (from memory), whatever the rating.
		{"blade", 1, 1000, 32, false},
		{"blade", 40, 1000, 32, false},
		{"mini-blade", 10, 1000, 32, false},
		// IEC 60127-2 low breaking: 35 A or 10 × rating, whichever is
		// greater, AC only: 35 A up to 3.5 A, then 10 × (4 A → 40 A, 10 A → 100 A).
		{"glass-5x20", 0.5, 35, 0, true},
		{"glass-5x20", 3.15, 35, 0, true},
		{"glass-5x20", 4, 40, 0, true},
		{"glass-5x20", 10, 100, 0, true},
		// IEC 60127-2 high breaking: 1,500 A, AC only.
		{"ceramic-5x20", 2, 1500, 0, true},
	} {
		f := byName[c.family]
		if got := f.BreakingCapacityFor(c.ratingA); got != c.breakingA || f.DCVoltageV != c.dc || f.BreakingCapacityAC != c.acOnly {
			t.Errorf("%s %g A: breaks %g A, %g V DC, AC only %v; want %g A, %g V DC, %v", c.family, c.ratingA, got,
				f.DCVoltageV, f.BreakingCapacityAC, c.breakingA, c.dc, c.acOnly)
		}
	}
	// The AC rating stays where it was, marked as such by the source.
	if g := byName["glass-5x20"]; g.MaxVoltageV != 250 || !strings.Contains(g.Source, "250 V AC") {
		t.Errorf("glass-5x20 AC rating %g V, source %q", g.MaxVoltageV, g.Source)
	}
	for _, c := range []struct {
		family, speed     string
		multiple, withinS float64
	}{
		{"blade", "fast", 2, 5},           // ISO 8820-3: 200 % opens within 5 s (from memory)
		{"blade", "slow", 3.5, 5},         // common practice (from memory)
		{"glass-5x20", "fast", 2.75, 2},   // IEC 60127-2 F sheets: 2.75 × within 2 s (from memory)
		{"glass-5x20", "slow", 4, 3},      // IEC 60127-2 T sheets: 4 × within 3 s (from memory)
		{"ceramic-5x20", "slow", 4, 3},    // the same time/current sheets
		{"mini-blade", "fast", 2, 5},      // ISO 8820-3 as for blades
		{"mini-blade", "slow", 3.5, 5},    // as for blades
		{"ceramic-5x20", "fast", 2.75, 2}, // as for glass
	} {
		g, ok := byName[c.family].Gate(c.speed)
		if !ok || g.Multiple != c.multiple || g.WithinS != c.withinS {
			t.Errorf("%s %s gate: %+v, %v; want %g × within %g s", c.family, c.speed, g, ok, c.multiple, c.withinS)
		}
	}
	if _, ok := (FuseFamily{}).Gate("fast"); ok {
		t.Error("a family without gates has one")
	}
}

func TestProspectiveShortA(t *testing.T) {
	// Ohm's law: an 11S Li-ion pack full at 11 × 4.2 = 46.2 V with cells of
	// 0.05 Ω in two strings, 11 × 0.05 / 2 = 0.275 Ω, through 0.025 Ω of
	// wire: 46.2 / 0.3 = 154 A.
	within(t, "46 V pack", ProspectiveShortA(46.2, 0.275, 0.025), 154, 1e-12)
	// A 12 V lead-acid block of 0.009 Ω straight across: 13.2 / 0.009 = 1,466.7 A.
	within(t, "starter block", ProspectiveShortA(13.2, 0.009, 0), 13.2/0.009, 1e-12)
	if got := ProspectiveShortA(12, 0, 0); !math.IsInf(got, 1) {
		t.Errorf("no resistance at all: %g A, want +Inf", got)
	}
}

func TestAmbientDerating(t *testing.T) {
	// NFPA 70 310.15(B) ambient correction (from memory):
	// √((T_ins − T_amb) / (T_ins − T_table)), the table at 30 °C.
	for _, c := range []struct {
		insulation, ambient, want float64
	}{
		{60, 55, math.Sqrt(5.0 / 30)},   // 0.408: a 60 °C wire in a 55 °C box keeps 41 %
		{105, 55, math.Sqrt(50.0 / 75)}, // 0.816
		{90, 40, math.Sqrt(50.0 / 60)},  // 0.913, the NEC's 0.91 for 90 °C at 36-40 °C (from memory)
		{75, 40, math.Sqrt(35.0 / 45)},  // 0.882, the NEC's 0.88 for 75 °C at 36-40 °C (from memory)
		{60, 30, 1},                     // at the table's ambient: as tabled
		{60, 10, 1},                     // cooler air earns no credit
		{60, 60, 0},                     // at the insulation's rating: nothing is safe
		{60, 70, 0},
	} {
		within(t, "derating", AmbientDerating(c.insulation, c.ambient, 30), c.want, 1e-12)
	}
	// Insulation rated below the table's ambient (a staff table may have
	// such a column): air at its rating is still too hot.
	if got := AmbientDerating(25, 25, 30); got != 0 {
		t.Errorf("25 °C insulation in 25 °C air: %g, want 0", got)
	}
	// The NEC table's figures are the equation's, rounded to two places.
	if got := math.Round(100*AmbientDerating(90, 40, 30)) / 100; got != 0.91 {
		t.Errorf("90 °C insulation at 40 °C: %g, want 0.91", got)
	}
}
