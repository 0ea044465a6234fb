package electric

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
)

// ErrNoAmpacity is wrapped when a conductor table cannot answer.
var ErrNoAmpacity = errors.New("no ampacity")

// ConductorTable is the ampacity data the review uses. It is stored as
// data in the limits, so staff can replace it; DefaultConductorTable gives
// the seeded content.
type ConductorTable struct {
	Source        string           `json:"source"`
	SmallSizeRule string           `json:"small_size_rule"`
	Rows          []ConductorRow   `json:"rows"`
	Bundling      []BundlingFactor `json:"bundling"`
}

// ConductorRow is one conductor size. Ampacity is keyed by the insulation
// temperature rating in °C written as a number ("60", "105" …).
type ConductorRow struct {
	Gauge    string             `json:"gauge"`
	AreaMM2  float64            `json:"area_mm2"`
	Ampacity map[string]float64 `json:"ampacity"`
	Source   string             `json:"source"`
}

// BundlingFactor derates the ampacity of conductors run together.
// MaxConductors 0 means no upper bound.
type BundlingFactor struct {
	MinConductors int     `json:"min_conductors"`
	MaxConductors int     `json:"max_conductors"`
	Factor        float64 `json:"factor"`
	Source        string  `json:"source"`
}

// Insulation ratings of the 33 CFR 183.425 Table 5 columns, °C.
func insulationColumnsC() []string {
	return []string{"60", "75", "80", "90", "105", "125", "200"}
}

// DefaultConductorTable is the seeded conductor table:
//   - 18 AWG to 4/0 AWG: 33 CFR 183.425 Table 5, 30 °C ambient. The issue
//     quotes the 105 °C and 60 °C values for
//     18–10 AWG; every other cell is from memory of the same table.
//   - metric sizes: the ampacity of the largest Table 5 size whose area is
//     not larger (never credits a metric wire with more than the AWG size
//     below it);
//   - 19 AWG to 30 AWG, and metric sizes below 18 AWG: the small-size rule.
func DefaultConductorTable() ConductorTable {
	const tableSource = "33 CFR 183.425 Table 5 (30 °C ambient); values from memory, except the 18-10 AWG cells at 60 °C and 105 °C, read from the table"
	cfr := []struct {
		awg  int
		amps [7]float64 // 60, 75, 80, 90, 105, 125, 200 °C
	}{
		{18, [7]float64{10, 10, 15, 20, 20, 25, 25}},
		{16, [7]float64{15, 15, 20, 25, 25, 30, 35}},
		{14, [7]float64{20, 20, 25, 30, 35, 40, 45}},
		{12, [7]float64{25, 25, 35, 40, 45, 50, 55}},
		{10, [7]float64{40, 40, 50, 55, 60, 70, 70}},
		{8, [7]float64{55, 65, 70, 70, 80, 90, 100}},
		{6, [7]float64{80, 95, 100, 100, 120, 125, 135}},
		{4, [7]float64{105, 125, 130, 135, 160, 170, 180}},
		{2, [7]float64{140, 170, 175, 180, 210, 225, 240}},
		{1, [7]float64{165, 195, 210, 210, 245, 265, 280}},
		{0, [7]float64{195, 230, 245, 245, 285, 305, 325}},
		{-1, [7]float64{225, 265, 285, 285, 330, 355, 370}},
		{-2, [7]float64{260, 310, 330, 330, 385, 410, 430}},
		{-3, [7]float64{300, 360, 385, 385, 445, 475, 510}},
	}
	cols := insulationColumnsC()
	t := ConductorTable{
		Source: tableSource,
		SmallSizeRule: "Below 18 AWG (0.823 mm2): the 18 AWG ampacity of the same insulation column scaled by area, " +
			"i.e. the same current density as 18 AWG, rounded down to 0.1 A. Conservative because a thinner wire " +
			"sheds heat through more surface per unit of copper. A wattshelf rule, not from a published table.",
	}
	var base []ConductorRow // Table 5 rows, smallest area first
	for _, r := range cfr {
		g := AWGGauge(r.awg)
		amp := make(map[string]float64, len(cols))
		for i, c := range cols {
			amp[c] = r.amps[i]
		}
		row := ConductorRow{Gauge: g.Label, AreaMM2: round4(g.AreaMM2), Ampacity: amp, Source: "33 CFR 183.425 Table 5"}
		base = append(base, row)
		t.Rows = append(t.Rows, row)
	}
	smallest := base[0]
	scaled := func(area float64) map[string]float64 {
		amp := make(map[string]float64, len(cols))
		for _, c := range cols {
			amp[c] = math.Floor(smallest.Ampacity[c]*area/smallest.AreaMM2*10) / 10
		}
		return amp
	}
	for n := 19; n <= smallestAWG; n++ {
		g := AWGGauge(n)
		t.Rows = append(t.Rows, ConductorRow{Gauge: g.Label, AreaMM2: round4(g.AreaMM2), Ampacity: scaled(round4(g.AreaMM2)), Source: "small-size rule (wattshelf)"})
	}
	for _, area := range metricSizesMM2() {
		g := MetricGauge(area)
		if area < smallest.AreaMM2 {
			t.Rows = append(t.Rows, ConductorRow{Gauge: g.Label, AreaMM2: area, Ampacity: scaled(area), Source: "small-size rule (wattshelf)"})
			continue
		}
		below := base[0]
		for _, b := range base {
			if b.AreaMM2 <= area {
				below = b
			}
		}
		t.Rows = append(t.Rows, ConductorRow{Gauge: g.Label, AreaMM2: area, Ampacity: copyAmps(below.Ampacity),
			Source: "33 CFR 183.425 Table 5 row " + below.Gauge + ", the largest size not larger in area"})
	}
	t.Bundling = []BundlingFactor{
		{MinConductors: 1, MaxConductors: 2, Factor: 1, Source: "33 CFR 183.425: no reduction below 3 conductors (from memory)"},
		{MinConductors: 3, MaxConductors: 3, Factor: 0.70, Source: "33 CFR 183.425 bundling factors (from memory)"},
		{MinConductors: 4, MaxConductors: 6, Factor: 0.60, Source: "33 CFR 183.425 bundling factors (from memory)"},
		{MinConductors: 7, MaxConductors: 24, Factor: 0.50, Source: "33 CFR 183.425 bundling factors (from memory)"},
		{MinConductors: 25, MaxConductors: 0, Factor: 0.40, Source: "33 CFR 183.425 bundling factors (from memory)"},
	}
	return t
}

func copyAmps(m map[string]float64) map[string]float64 {
	c := make(map[string]float64, len(m))
	for k, v := range m {
		c[k] = v
	}
	return c
}

func round4(x float64) float64 { return math.Round(x*1e4) / 1e4 }

// Ampacity is the current conductor g may carry continuously with
// insulation rated insulationC, bundled with bundled current-carrying
// conductors in all (0 counts as 1). It reads the highest insulation
// column not above insulationC. A gauge with no row of its own (an odd AWG
// size, or a size staff removed) gets the row of the largest listed size
// not larger in area, which errs on the safe side.
func (t ConductorTable) Ampacity(g Gauge, insulationC float64, bundled int) (float64, error) {
	if bundled < 0 {
		return 0, fmt.Errorf("%w: %d bundled conductors", ErrNoAmpacity, bundled)
	}
	bundled = max(bundled, 1)
	row, ok := t.rowFor(g)
	if !ok {
		return 0, fmt.Errorf("%w: %s is smaller than every size in the conductor table", ErrNoAmpacity, g.Label)
	}
	amps, col, found := 0.0, 0.0, false
	for k, v := range row.Ampacity {
		c, err := strconv.ParseFloat(k, 64)
		if err != nil || c > insulationC || (found && c <= col) {
			continue
		}
		amps, col, found = v, c, true
	}
	if !found {
		return 0, fmt.Errorf("%w: %s has no column for insulation rated %g °C", ErrNoAmpacity, row.Gauge, insulationC)
	}
	f, err := t.bundlingFactor(bundled)
	if err != nil {
		return 0, err
	}
	return amps * f, nil
}

func (t ConductorTable) rowFor(g Gauge) (ConductorRow, bool) {
	for _, r := range t.Rows {
		if r.Gauge == g.Label {
			return r, true
		}
	}
	best, found := ConductorRow{}, false
	for _, r := range t.Rows {
		if r.AreaMM2 <= g.AreaMM2 && (!found || r.AreaMM2 > best.AreaMM2) {
			best, found = r, true
		}
	}
	return best, found
}

func (t ConductorTable) bundlingFactor(n int) (float64, error) {
	for _, b := range t.Bundling {
		if n >= b.MinConductors && (b.MaxConductors == 0 || n <= b.MaxConductors) {
			return b.Factor, nil
		}
	}
	return 0, fmt.Errorf("%w: no bundling factor for %d conductors", ErrNoAmpacity, n)
}

// Validate reports every structural problem of the table at once.
func (t ConductorTable) Validate() error {
	var errs []error
	if t.Source == "" {
		errs = append(errs, errors.New("conductor table: source is empty"))
	}
	if len(t.Rows) == 0 {
		errs = append(errs, errors.New("conductor table: no rows"))
	}
	seen := make(map[string]bool, len(t.Rows))
	for i, r := range t.Rows {
		errs = append(errs, validateRow(i, r, seen)...)
	}
	errs = append(errs, validateBundling(t.Bundling)...)
	return errors.Join(errs...)
}

func validateRow(i int, r ConductorRow, seen map[string]bool) []error {
	var errs []error
	bad := func(format string, a ...any) {
		errs = append(errs, fmt.Errorf("conductor row %d (%s): "+format, append([]any{i, r.Gauge}, a...)...))
	}
	g, err := ParseGauge(r.Gauge)
	switch {
	case err != nil:
		bad("%v", err)
	case g.Label != r.Gauge:
		bad("write the gauge as %q", g.Label)
	case !(math.Abs(r.AreaMM2-g.AreaMM2) <= 0.01*g.AreaMM2):
		bad("area %g mm2 differs from the %g mm2 of the size", r.AreaMM2, round4(g.AreaMM2))
	}
	if seen[r.Gauge] {
		bad("listed twice")
	}
	seen[r.Gauge] = true
	if r.Source == "" {
		bad("source is empty")
	}
	if len(r.Ampacity) == 0 {
		bad("no ampacity columns")
	}
	type cell struct{ col, amps float64 }
	cells := make([]cell, 0, len(r.Ampacity))
	for k, v := range r.Ampacity {
		c, err := strconv.ParseFloat(k, 64)
		if err != nil || !(c >= 0 && c <= 300) {
			bad("column %q is not an insulation rating in °C", k)
			continue
		}
		if !(v > 0) || math.IsInf(v, 0) {
			bad("ampacity %g A at %s °C is not a positive number", v, k)
			continue
		}
		cells = append(cells, cell{c, v})
	}
	sort.Slice(cells, func(a, b int) bool { return cells[a].col < cells[b].col })
	for j := 1; j < len(cells); j++ {
		if cells[j].amps < cells[j-1].amps {
			bad("ampacity falls from %g A at %g °C to %g A at %g °C", cells[j-1].amps, cells[j-1].col, cells[j].amps, cells[j].col)
		}
	}
	return errs
}

func validateBundling(bs []BundlingFactor) []error {
	if len(bs) == 0 {
		return []error{errors.New("conductor table: no bundling factors (give at least 1 conductor and up: factor 1)")}
	}
	var errs []error
	next := 1
	for i, b := range bs {
		if b.MinConductors != next {
			errs = append(errs, fmt.Errorf("bundling factor %d: starts at %d conductors, want %d (ranges in order, no gaps)", i, b.MinConductors, next))
		}
		if !(b.Factor > 0 && b.Factor <= 1) {
			errs = append(errs, fmt.Errorf("bundling factor %d: factor %g is not in (0, 1]", i, b.Factor))
		}
		if i > 0 && b.Factor > bs[i-1].Factor {
			errs = append(errs, fmt.Errorf("bundling factor %d: factor %g is above the one for fewer conductors", i, b.Factor))
		}
		if b.Source == "" {
			errs = append(errs, fmt.Errorf("bundling factor %d: source is empty", i))
		}
		last := i == len(bs)-1
		switch {
		case b.MaxConductors == 0 && !last:
			errs = append(errs, fmt.Errorf("bundling factor %d: only the last range may be open-ended", i))
		case b.MaxConductors != 0 && last:
			errs = append(errs, fmt.Errorf("bundling factor %d: the last range must be open-ended (max_conductors 0)", i))
		case b.MaxConductors != 0 && b.MaxConductors < b.MinConductors:
			errs = append(errs, fmt.Errorf("bundling factor %d: max %d below min %d", i, b.MaxConductors, b.MinConductors))
		}
		next = b.MaxConductors + 1
	}
	return errs
}

// AmbientDerating is the share of its tabled ampacity a conductor keeps in
// air at ambientC when the table holds at tableAmbientC and its insulation
// is rated insulationC: √((T_ins − T_amb) / (T_ins − T_table)), the ambient
// temperature correction equation of NFPA 70 (NEC) 310.15(B) (from
// memory). The heat a conductor may make goes with the temperature rise its
// insulation allows, and its current with the square root of that heat. It
// is 0 at or above the insulation's rating, where no current is safe, and
// otherwise 1 at or below the table's ambient (cooler air earns no credit).
func AmbientDerating(insulationC, ambientC, tableAmbientC float64) float64 {
	switch {
	case ambientC >= insulationC:
		return 0
	case ambientC <= tableAmbientC:
		return 1
	}
	return math.Sqrt((insulationC - ambientC) / (insulationC - tableAmbientC))
}
