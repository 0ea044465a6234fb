package electric

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// Chemistry holds the per-cell parameters of a battery chemistry. Curve
// maps state of charge (0 empty … 1 full) to the cell voltage under a
// moderate load (about C/5), listed from empty to full.
//
// Peukert's law applies when PeukertExponent is above 1 and RatedHours is
// set (the seeded table does so for lead-acid only); otherwise runtime is
// capacity over current.
type Chemistry struct {
	Name            string       `json:"name"`
	FullV           float64      `json:"full_v"`
	NominalV        float64      `json:"nominal_v"`
	CutoffV         float64      `json:"cutoff_v"`
	InternalOhm     float64      `json:"internal_ohm"`
	Curve           []CurvePoint `json:"curve"`
	PeukertExponent float64      `json:"peukert_exponent"`
	RatedHours      float64      `json:"rated_hours"`
	MaxDischargeC   float64      `json:"max_discharge_c"`
	Source          string       `json:"source"`
}

// CurvePoint is one point of a discharge curve.
type CurvePoint struct {
	SOC   float64 `json:"soc"`
	CellV float64 `json:"cell_v"`
}

// DefaultChemistries is the seeded chemistry table, keyed alkaline, nimh,
// liion, lifepo4 and leadacid. Nominal voltages are the IEC ones; the rest
// are typical values for small cells (AA size, 18650, 7 Ah block) and are
// from memory or common practice as each Source says.
func DefaultChemistries() map[string]Chemistry {
	return map[string]Chemistry{
		"alkaline": {
			Name: "alkaline", FullV: 1.6, NominalV: 1.5, CutoffV: 0.9, InternalOhm: 0.15,
			Curve: []CurvePoint{
				{0, 0.90}, {0.1, 1.02}, {0.2, 1.08}, {0.3, 1.12}, {0.4, 1.15}, {0.5, 1.18},
				{0.6, 1.21}, {0.7, 1.25}, {0.8, 1.29}, {0.9, 1.35}, {1, 1.50},
			},
			PeukertExponent: 1, MaxDischargeC: 0.5,
			Source: "nominal 1.5 V: IEC 60086; fresh open-circuit 1.6 V and cutoff 0.9 V: common practice; " +
				"internal resistance (AA), curve at about 100 mA and 0.5 C limit: from memory",
		},
		"nimh": {
			Name: "nimh", FullV: 1.4, NominalV: 1.2, CutoffV: 1.0, InternalOhm: 0.03,
			Curve: []CurvePoint{
				{0, 1.00}, {0.05, 1.08}, {0.1, 1.12}, {0.2, 1.16}, {0.3, 1.18}, {0.4, 1.20},
				{0.5, 1.21}, {0.6, 1.22}, {0.7, 1.23}, {0.8, 1.25}, {0.9, 1.28}, {1, 1.40},
			},
			PeukertExponent: 1, MaxDischargeC: 2,
			Source: "nominal 1.2 V: IEC 61951-2; full 1.4 V and cutoff 1.0 V: common practice; " +
				"internal resistance (AA), curve at C/5 and 2 C limit: from memory",
		},
		"liion": {
			Name: "liion", FullV: 4.2, NominalV: 3.6, CutoffV: 3.0, InternalOhm: 0.05,
			Curve: []CurvePoint{
				{0, 3.00}, {0.05, 3.30}, {0.1, 3.45}, {0.2, 3.58}, {0.3, 3.65}, {0.4, 3.70},
				{0.5, 3.75}, {0.6, 3.82}, {0.7, 3.89}, {0.8, 3.97}, {0.9, 4.06}, {1, 4.20},
			},
			PeukertExponent: 1, MaxDischargeC: 1,
			Source: "nominal 3.6 V: IEC 61960 (3.6-3.7 V); full 4.2 V and cutoff 3.0 V: common practice; " +
				"internal resistance (18650), curve at C/5 and 1 C limit: from memory",
		},
		"lifepo4": {
			Name: "lifepo4", FullV: 3.6, NominalV: 3.2, CutoffV: 2.5, InternalOhm: 0.03,
			Curve: []CurvePoint{
				{0, 2.50}, {0.05, 3.00}, {0.1, 3.10}, {0.2, 3.20}, {0.3, 3.23}, {0.4, 3.25},
				{0.5, 3.26}, {0.6, 3.27}, {0.7, 3.28}, {0.8, 3.29}, {0.9, 3.30}, {0.95, 3.33}, {1, 3.40},
			},
			PeukertExponent: 1, MaxDischargeC: 1,
			Source: "nominal 3.2 V, full 3.6 V, cutoff 2.5 V: common practice; " +
				"internal resistance (18650), curve at C/5 and 1 C limit: from memory",
		},
		"leadacid": {
			Name: "leadacid", FullV: 2.2, NominalV: 2.0, CutoffV: 1.75, InternalOhm: 0.004,
			Curve: []CurvePoint{
				{0, 1.750}, {0.1, 1.885}, {0.2, 1.930}, {0.3, 1.958}, {0.4, 1.983}, {0.5, 2.010},
				{0.6, 2.033}, {0.7, 2.053}, {0.8, 2.070}, {0.9, 2.083}, {1, 2.117},
			},
			PeukertExponent: 1.2, RatedHours: 20, MaxDischargeC: 0.5,
			Source: "nominal 2.0 V per cell, cutoff 1.75 V (10.5 V per 12 V block) and 20 h rating: common practice; " +
				"full 2.2 V (13.2 V block just off charge), curve (resting 12.7 V full … 10.5 V empty), " +
				"Peukert exponent 1.2, internal resistance (7 Ah block) and 0.5 C limit: from memory",
		},
	}
}

// Validate reports every problem with the chemistry at once.
func (c Chemistry) Validate() error {
	var errs []error
	bad := func(format string, a ...any) {
		errs = append(errs, fmt.Errorf("chemistry %q: "+format, append([]any{c.Name}, a...)...))
	}
	if c.Name == "" {
		bad("name is empty")
	}
	if !(c.CutoffV > 0 && c.CutoffV < c.NominalV && c.NominalV <= c.FullV && c.FullV < 20) {
		bad("want 0 < cutoff_v < nominal_v <= full_v < 20 V, have %g, %g, %g", c.CutoffV, c.NominalV, c.FullV)
	}
	if !(c.InternalOhm > 0 && c.InternalOhm < 100) {
		bad("internal_ohm %g is not in (0, 100)", c.InternalOhm)
	}
	if !(c.PeukertExponent >= 1 && c.PeukertExponent <= 2) {
		bad("peukert_exponent %g is not in [1, 2]", c.PeukertExponent)
	}
	if !(c.RatedHours >= 0 && c.RatedHours < 1000) {
		bad("rated_hours %g is not in [0, 1000)", c.RatedHours)
	}
	if c.PeukertExponent > 1 && !(c.RatedHours > 0) {
		bad("a Peukert exponent needs rated_hours")
	}
	if !(c.MaxDischargeC > 0 && c.MaxDischargeC < 1000) {
		bad("max_discharge_c %g is not in (0, 1000)", c.MaxDischargeC)
	}
	if c.Source == "" {
		bad("source is empty")
	}
	if len(c.Curve) < 2 {
		bad("the curve needs at least two points")
		return errors.Join(errs...)
	}
	if c.Curve[0].SOC != 0 || c.Curve[len(c.Curve)-1].SOC != 1 {
		bad("the curve must run from soc 0 to soc 1")
	}
	for i := 1; i < len(c.Curve); i++ {
		p, q := c.Curve[i-1], c.Curve[i]
		if !(q.SOC > p.SOC && q.CellV > p.CellV) {
			bad("curve point %d (soc %g, %g V) does not rise above the one before", i, q.SOC, q.CellV)
		}
	}
	return errors.Join(errs...)
}

// SOCAtCellV reads the state of charge off the curve at a cell voltage,
// interpolating linearly; 0 below the curve and 1 above it.
func (c Chemistry) SOCAtCellV(v float64) float64 {
	pts := c.Curve
	if len(pts) == 0 || !(v > pts[0].CellV) {
		return 0
	}
	if v >= pts[len(pts)-1].CellV {
		return 1
	}
	i := sort.Search(len(pts), func(i int) bool { return pts[i].CellV >= v })
	lo, hi := pts[i-1], pts[i]
	return lo.SOC + (hi.SOC-lo.SOC)*(v-lo.CellV)/(hi.CellV-lo.CellV)
}

// Pack is Series × Parallel cells of one chemistry. Chem holds the cell
// values after the design's overrides; CellCapacityAh is one cell's
// capacity. Call Validate before the other methods.
type Pack struct {
	Chem           Chemistry
	Series         int
	Parallel       int
	CellCapacityAh float64
}

// Validate checks the chemistry and the pack's shape.
func (p Pack) Validate() error {
	var errs []error
	if err := p.Chem.Validate(); err != nil {
		errs = append(errs, err)
	}
	if p.Series < 1 || p.Parallel < 1 {
		errs = append(errs, fmt.Errorf("pack: series %d and parallel %d must both be at least 1", p.Series, p.Parallel))
	}
	if !(p.CellCapacityAh > 0 && p.CellCapacityAh < 10000) {
		errs = append(errs, fmt.Errorf("pack: cell capacity %g Ah is not in (0, 10000)", p.CellCapacityAh))
	}
	return errors.Join(errs...)
}

// FullV is the pack voltage when fully charged (the high end of its range).
func (p Pack) FullV() float64 { return float64(p.Series) * p.Chem.FullV }

// NominalV is the pack's nominal voltage.
func (p Pack) NominalV() float64 { return float64(p.Series) * p.Chem.NominalV }

// CutoffV is the pack voltage at which it counts as empty.
func (p Pack) CutoffV() float64 { return float64(p.Series) * p.Chem.CutoffV }

// InternalOhm is the pack's source resistance: series strings add, parallel
// strings divide.
func (p Pack) InternalOhm() float64 {
	return float64(p.Series) * p.Chem.InternalOhm / float64(p.Parallel)
}

// ShortCircuitA is what a dead short across a full pack would draw,
// limited only by the internal resistance (+Inf when that is zero).
func (p Pack) ShortCircuitA() float64 {
	r := p.InternalOhm()
	if r <= 0 {
		return math.Inf(1)
	}
	return p.FullV() / r
}

// CapacityAh is the pack capacity: parallel strings add.
func (p Pack) CapacityAh() float64 { return float64(p.Parallel) * p.CellCapacityAh }

// MaxDischargeA is the chemistry's default continuous discharge limit for
// this pack (its C rate times the capacity).
func (p Pack) MaxDischargeA() float64 { return p.Chem.MaxDischargeC * p.CapacityAh() }

// SOCAtPackV is the share of charge left when the pack reads v.
func (p Pack) SOCAtPackV(v float64) float64 {
	return p.Chem.SOCAtCellV(v / float64(p.Series))
}

// UsableShare is the share of capacity delivered between full charge and
// the higher of the cutoff and brownoutPackV (pass 0 for no brownout).
func (p Pack) UsableShare(brownoutPackV float64) float64 {
	limit := max(p.CutoffV(), brownoutPackV)
	share := p.SOCAtPackV(p.FullV()) - p.SOCAtPackV(limit)
	return min(max(share, 0), 1)
}

// RuntimeH is how long the pack lasts at an average current avgA when
// usableShare of its capacity can be used. With a Peukert exponent k and a
// rated discharge time H it is usableShare × H × (C / (I·H))^k, so at the
// rated current C/H it is exactly usableShare × H; otherwise it is
// usableShare × C / I. It is +Inf when avgA is not positive.
func (p Pack) RuntimeH(avgA float64, usableShare float64) float64 {
	if !(avgA > 0) {
		return math.Inf(1)
	}
	c := p.CapacityAh()
	k, h := p.Chem.PeukertExponent, p.Chem.RatedHours
	if k > 1 && h > 0 {
		return usableShare * h * math.Pow(c/(avgA*h), k)
	}
	return usableShare * c / avgA
}
