package electric

import (
	"encoding/json"
	"math"
	"testing"
)

func chem(t testing.TB, name string) Chemistry {
	t.Helper()
	c, ok := DefaultChemistries()[name]
	if !ok {
		t.Fatalf("no chemistry %q", name)
	}
	return c
}

func TestNominalCellVoltages(t *testing.T) {
	cases := []struct {
		name     string
		lo, hi   float64
		standard string
	}{
		{"alkaline", 1.5, 1.5, "IEC 60086"},
		{"nimh", 1.2, 1.2, "IEC 61951-2"},
		{"liion", 3.6, 3.7, "IEC 61960"},
		{"lifepo4", 3.2, 3.3, "common practice"},
		{"leadacid", 2.0, 2.0, "common practice (IEC 60896 / IEC 61056 blocks are 2 V per cell)"},
	}
	for _, c := range cases {
		v := chem(t, c.name).NominalV
		if v < c.lo || v > c.hi {
			t.Errorf("%s nominal %g V, want %g-%g V (%s)", c.name, v, c.lo, c.hi, c.standard)
		}
	}
	if n := len(DefaultChemistries()); n != 5 {
		t.Errorf("%d chemistries, want the 5 of DESIGN section 5", n)
	}
}

func TestDefaultChemistriesValidate(t *testing.T) {
	for name, c := range DefaultChemistries() {
		if c.Name != name {
			t.Errorf("key %q holds chemistry named %q", name, c.Name)
		}
		if err := c.Validate(); err != nil {
			t.Errorf("%s: %v", name, err)
		}
		// Full charge must read full on its own curve, the cutoff empty.
		if s := c.SOCAtCellV(c.FullV); s != 1 {
			t.Errorf("%s: state of charge at full voltage %g, want 1", name, s)
		}
		if s := c.SOCAtCellV(c.CutoffV); s != 0 {
			t.Errorf("%s: state of charge at cutoff %g, want 0", name, s)
		}
		raw, err := json.Marshal(c)
		if err != nil {
			t.Fatal(err)
		}
		var back Chemistry
		if err := json.Unmarshal(raw, &back); err != nil || back.Validate() != nil || back.Curve[1] != c.Curve[1] {
			t.Errorf("%s does not survive JSON: %v", name, err)
		}
	}
	broken := map[string]func(*Chemistry){
		"cutoff above nominal": func(c *Chemistry) { c.CutoffV = 1.3 },
		"no resistance":        func(c *Chemistry) { c.InternalOhm = 0 },
		"curve falls":          func(c *Chemistry) { c.Curve[3].CellV = 1.0 },
		"curve not to 1":       func(c *Chemistry) { c.Curve = c.Curve[:len(c.Curve)-1] },
		"one point":            func(c *Chemistry) { c.Curve = c.Curve[:1] },
		"peukert no hours":     func(c *Chemistry) { c.PeukertExponent = 1.3 },
		"peukert below 1":      func(c *Chemistry) { c.PeukertExponent = 0.9 },
		"no max discharge":     func(c *Chemistry) { c.MaxDischargeC = 0 },
		"no source":            func(c *Chemistry) { c.Source = "" },
		"NaN full":             func(c *Chemistry) { c.FullV = math.NaN() },
	}
	for what, breakIt := range broken {
		c := chem(t, "nimh")
		c.Curve = append([]CurvePoint(nil), c.Curve...)
		breakIt(&c)
		if c.Validate() == nil {
			t.Errorf("%s: Validate passed a broken chemistry", what)
		}
	}
}

func TestEightFreshAlkalineCellsReadOver12V(t *testing.T) {
	// About 1.6 V per fresh cell on open circuit (common practice).
	p := Pack{Chem: chem(t, "alkaline"), Series: 8, Parallel: 1, CellCapacityAh: 2.5}
	if v := p.FullV(); !(v > 12) {
		t.Errorf("8 fresh alkaline cells: %g V, want over 12 V", v)
	}
	if v := p.NominalV(); v != 12 {
		t.Errorf("8 alkaline cells nominal: %g V, want 12 V (8 × 1.5 V, IEC 60086)", v)
	}
}

func TestPackArithmetic(t *testing.T) {
	// The design document's example pack: 10 NiMH cells of 2000 mAh,
	// 1.4/1.2/1.0 V per cell, 30 mΩ each (DESIGN section 5).
	c := chem(t, "nimh")
	c.FullV, c.NominalV, c.CutoffV, c.InternalOhm = 1.4, 1.2, 1.0, 0.03
	p := Pack{Chem: c, Series: 10, Parallel: 1, CellCapacityAh: 2}
	if err := p.Validate(); err != nil {
		t.Fatal(err)
	}
	within(t, "full", p.FullV(), 14, 1e-12)
	within(t, "nominal", p.NominalV(), 12, 1e-12)
	within(t, "cutoff", p.CutoffV(), 10, 1e-12)
	within(t, "internal", p.InternalOhm(), 0.3, 1e-12)
	within(t, "short circuit", p.ShortCircuitA(), 14/0.3, 1e-12)
	within(t, "capacity", p.CapacityAh(), 2, 1e-12)
	within(t, "max discharge", p.MaxDischargeA(), 4, 1e-12)

	// Two strings in parallel: half the resistance, twice the capacity.
	p.Parallel = 2
	within(t, "internal 10S2P", p.InternalOhm(), 0.15, 1e-12)
	within(t, "capacity 10S2P", p.CapacityAh(), 4, 1e-12)
	within(t, "full 10S2P", p.FullV(), 14, 1e-12)

	bad := p
	bad.Series = 0
	if bad.Validate() == nil {
		t.Error("a pack of 0 cells in series passed Validate")
	}
	bad = p
	bad.CellCapacityAh = 0
	if bad.Validate() == nil {
		t.Error("a pack of 0 Ah cells passed Validate")
	}
}

func TestSOCAndUsableShare(t *testing.T) {
	p := Pack{Chem: chem(t, "liion"), Series: 3, Parallel: 1, CellCapacityAh: 2.5}
	cases := []struct {
		packV, want float64
	}{
		{12.6, 1}, {13, 1}, {9, 0}, {8, 0},
		{3 * 3.75, 0.5},                   // a curve point
		{3 * (3.70 + 3.75) / 2, 0.45},     // halfway between two points
		{3 * (3.00 + 3.30) / 2, 0.05 / 2}, // halfway along the steep end
	}
	for _, c := range cases {
		within(t, "SOC at "+formatSizes([]float64{c.packV})+" V", p.SOCAtPackV(c.packV), c.want, 1e-9)
	}
	within(t, "usable to cutoff", p.UsableShare(0), 1, 1e-12)
	within(t, "usable to a brownout below cutoff", p.UsableShare(8), 1, 1e-12)
	within(t, "usable to 3.75 V per cell", p.UsableShare(3*3.75), 0.5, 1e-9)
	if s := p.UsableShare(20); s != 0 {
		t.Errorf("brownout above full: usable %g, want 0", s)
	}
	// A pack charged below the top of the curve has less to give.
	low := p
	low.Chem.FullV = 3.97
	within(t, "usable from 3.97 V per cell", low.UsableShare(0), 0.8, 1e-9)
	// Share falls as the brownout voltage rises.
	prev := 2.0
	for v := 9.0; v <= 12.6; v += 0.05 {
		s := p.UsableShare(v)
		if s > prev {
			t.Fatalf("usable share rose from %g to %g at %g V", prev, s, v)
		}
		prev = s
	}
}

func TestRuntime(t *testing.T) {
	// Plain capacity over current: 2 Ah at 0.5 A lasts 4 h, 90 % usable 3.6 h.
	nimh := Pack{Chem: chem(t, "nimh"), Series: 10, Parallel: 1, CellCapacityAh: 2}
	within(t, "NiMH runtime", nimh.RuntimeH(0.5, 1), 4, 1e-12)
	within(t, "NiMH runtime 90 %", nimh.RuntimeH(0.5, 0.9), 3.6, 1e-12)
	if h := nimh.RuntimeH(0, 1); !math.IsInf(h, 1) {
		t.Errorf("runtime with no load = %g, want +Inf", h)
	}

	// Peukert worked example (from memory; the usual illustration of
	// t = H·(C/(I·H))^k): a 100 Ah battery rated at 20 h with k = 1.2
	// discharged at 10 A lasts 20 × (100/200)^1.2 = 8.71 h, not 10 h.
	la := chem(t, "leadacid")
	la.PeukertExponent, la.RatedHours = 1.2, 20
	big := Pack{Chem: la, Series: 6, Parallel: 1, CellCapacityAh: 100}
	within(t, "Peukert 100 Ah at 10 A", big.RuntimeH(10, 1), 8.706, 0.001)
	// At its rated current C/H the battery lasts exactly its rated hours
	// (definition of the rating).
	within(t, "Peukert at the 20 h rate", big.RuntimeH(5, 1), 20, 1e-12)
	// Peukert's law: I^k · t is constant across currents (Peukert 1897).
	for _, i := range []float64{1, 3, 25, 60} {
		within(t, "I^k·t", math.Pow(i, 1.2)*big.RuntimeH(i, 1), math.Pow(5, 1.2)*20, 1e-9)
	}
}
