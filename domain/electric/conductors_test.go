package electric

import (
	"encoding/json"
	"errors"
	"strings"
	"testing"
)

func mustGauge(t testing.TB, label string) Gauge {
	t.Helper()
	g, err := ParseGauge(label)
	if err != nil {
		t.Fatal(err)
	}
	return g
}

// Cells quoted in issue 3 from 33 CFR 183.425 Table 5 (30 °C ambient).
func TestAmpacityQuotedCells(t *testing.T) {
	cases := []struct {
		label       string
		insulationC float64
		want        float64
	}{
		{"18AWG", 105, 20}, {"16AWG", 105, 25}, {"14AWG", 105, 35}, {"12AWG", 105, 45}, {"10AWG", 105, 60},
		{"18AWG", 60, 10}, {"14AWG", 60, 20}, {"10AWG", 60, 40},
	}
	tbl := DefaultConductorTable()
	for _, c := range cases {
		got, err := tbl.Ampacity(mustGauge(t, c.label), c.insulationC, 1)
		if err != nil || got != c.want {
			t.Errorf("%s at %g °C = %g, %v; want %g A (33 CFR 183.425 Table 5)", c.label, c.insulationC, got, err, c.want)
		}
	}
}

// The rest of the seeded Table 5 rows, independently typed here from
// memory of 33 CFR 183.425 Table 5 (60, 75, 80, 90, 105, 125, 200 °C).
func TestAmpacityTable5Rows(t *testing.T) {
	rows := map[string][7]float64{
		"18AWG":  {10, 10, 15, 20, 20, 25, 25},
		"16AWG":  {15, 15, 20, 25, 25, 30, 35},
		"14AWG":  {20, 20, 25, 30, 35, 40, 45},
		"12AWG":  {25, 25, 35, 40, 45, 50, 55},
		"10AWG":  {40, 40, 50, 55, 60, 70, 70},
		"8AWG":   {55, 65, 70, 70, 80, 90, 100},
		"6AWG":   {80, 95, 100, 100, 120, 125, 135},
		"4AWG":   {105, 125, 130, 135, 160, 170, 180},
		"2AWG":   {140, 170, 175, 180, 210, 225, 240},
		"1AWG":   {165, 195, 210, 210, 245, 265, 280},
		"1/0AWG": {195, 230, 245, 245, 285, 305, 325},
		"2/0AWG": {225, 265, 285, 285, 330, 355, 370},
		"3/0AWG": {260, 310, 330, 330, 385, 410, 430},
		"4/0AWG": {300, 360, 385, 385, 445, 475, 510},
	}
	cols := []float64{60, 75, 80, 90, 105, 125, 200}
	tbl := DefaultConductorTable()
	for label, want := range rows {
		for i, c := range cols {
			got, err := tbl.Ampacity(mustGauge(t, label), c, 1)
			if err != nil || got != want[i] {
				t.Errorf("%s at %g °C = %g, %v; want %g A (33 CFR 183.425 Table 5, from memory)", label, c, got, err, want[i])
			}
		}
	}
}

func TestAmpacityBundlingAndColumns(t *testing.T) {
	tbl := DefaultConductorTable()
	g := mustGauge(t, "14AWG")
	cases := []struct {
		insulationC float64
		bundled     int
		want        float64
		basis       string
	}{
		{105, 0, 35, "0 counts as a single conductor"},
		{105, 2, 35, "33 CFR 183.425: no reduction for 2 (from memory)"},
		{105, 3, 35 * 0.70, "33 CFR 183.425 bundling 3: 0.70 (from memory)"},
		{105, 6, 35 * 0.60, "33 CFR 183.425 bundling 4-6: 0.60 (from memory)"},
		{105, 7, 35 * 0.50, "33 CFR 183.425 bundling 7-24: 0.50 (from memory)"},
		{105, 24, 35 * 0.50, "33 CFR 183.425 bundling 7-24: 0.50 (from memory)"},
		{105, 25, 35 * 0.40, "33 CFR 183.425 bundling 25+: 0.40 (from memory)"},
		{100, 1, 30, "100 °C insulation reads the 90 °C column"},
		{150, 1, 40, "150 °C insulation reads the 125 °C column"},
		{250, 1, 45, "above 200 °C reads the 200 °C column"},
		{60, 1, 20, "exactly 60 °C"},
	}
	for _, c := range cases {
		got, err := tbl.Ampacity(g, c.insulationC, c.bundled)
		if err != nil || !(abs(got-c.want) < 1e-9) {
			t.Errorf("14AWG at %g °C, %d bundled = %g, %v; want %g (%s)", c.insulationC, c.bundled, got, err, c.want, c.basis)
		}
	}
	if _, err := tbl.Ampacity(g, 50, 1); !errors.Is(err, ErrNoAmpacity) {
		t.Errorf("50 °C insulation: err %v, want ErrNoAmpacity (no column that low)", err)
	}
	if _, err := tbl.Ampacity(g, 105, -1); !errors.Is(err, ErrNoAmpacity) {
		t.Errorf("negative bundle: err %v, want ErrNoAmpacity", err)
	}
}

func abs(x float64) float64 { return max(x, -x) }

func TestSmallSizesNeverDenserThan18AWG(t *testing.T) {
	tbl := DefaultConductorTable()
	var ref ConductorRow
	for _, r := range tbl.Rows {
		if r.Gauge == "18AWG" {
			ref = r
		}
	}
	checked := 0
	for _, r := range tbl.Rows {
		if r.AreaMM2 >= ref.AreaMM2 {
			continue
		}
		checked++
		for col, amps := range r.Ampacity {
			limit := ref.Ampacity[col] * r.AreaMM2 / ref.AreaMM2
			if amps > limit+1e-9 || amps < limit-0.1-1e-9 {
				t.Errorf("%s at %s °C: %g A, want the 18AWG density rounded down: %g A", r.Gauge, col, amps, limit)
			}
		}
	}
	if checked != 12+5 { // 19..30 AWG and 0.13..0.75 mm2
		t.Errorf("checked %d small rows, want 17", checked)
	}
	if !strings.Contains(tbl.SmallSizeRule, "18 AWG") {
		t.Errorf("small-size rule does not state its basis: %q", tbl.SmallSizeRule)
	}
}

func TestEveryParsableGaugeHasAnAmpacity(t *testing.T) {
	tbl := DefaultConductorTable()
	var labels []string
	for n := smallestAWG; n >= largestAWG; n-- {
		labels = append(labels, AWGLabel(n))
	}
	for _, a := range metricSizesMM2() {
		labels = append(labels, MetricGauge(a).Label)
	}
	prevAWG := 0.0
	for _, l := range labels {
		amps, err := tbl.Ampacity(mustGauge(t, l), 105, 1)
		if err != nil || !(amps > 0) {
			t.Errorf("%s: %g, %v", l, amps, err)
		}
		if strings.HasSuffix(l, "AWG") {
			if amps < prevAWG {
				t.Errorf("%s carries %g A, less than the thinner size before it (%g A)", l, amps, prevAWG)
			}
			prevAWG = amps
		}
	}
	// Metric sizes take the Table 5 row not larger in area: 1.5 mm² (below
	// 14 AWG's 2.08 mm²) gets 16 AWG's 25 A (33 CFR 183.425 Table 5).
	if amps, _ := tbl.Ampacity(mustGauge(t, "1.5mm2"), 105, 1); amps != 25 {
		t.Errorf("1.5mm2 at 105 °C = %g, want 25 (16AWG row)", amps)
	}
	// Odd AWG sizes have no row of their own and fall back to the next
	// thinner Table 5 size: 17 AWG gets 18 AWG's 20 A.
	if amps, _ := tbl.Ampacity(mustGauge(t, "17AWG"), 105, 1); amps != 20 {
		t.Errorf("17AWG at 105 °C = %g, want 20 (18AWG row)", amps)
	}
}

func TestConductorTableValidate(t *testing.T) {
	if err := DefaultConductorTable().Validate(); err != nil {
		t.Fatalf("default table: %v", err)
	}
	// The table survives a JSON round trip, as it does through the limits.
	var back ConductorTable
	raw, err := json.Marshal(DefaultConductorTable())
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(raw, &back); err != nil {
		t.Fatal(err)
	}
	if err := back.Validate(); err != nil {
		t.Fatalf("after JSON: %v", err)
	}
	if !strings.Contains(string(raw), `"small_size_rule"`) || !strings.Contains(string(raw), `"min_conductors"`) {
		t.Errorf("JSON names are not snake_case: %.200s", raw)
	}
	breakers := map[string]func(*ConductorTable){
		"no source":          func(t *ConductorTable) { t.Source = "" },
		"unknown gauge":      func(t *ConductorTable) { t.Rows[0].Gauge = "19mm2" },
		"non-canonical":      func(t *ConductorTable) { t.Rows[0].Gauge = "18awg" },
		"wrong area":         func(t *ConductorTable) { t.Rows[0].AreaMM2 = 2 },
		"duplicate row":      func(t *ConductorTable) { t.Rows = append(t.Rows, t.Rows[0]) },
		"negative amps":      func(t *ConductorTable) { t.Rows[1].Ampacity = map[string]float64{"60": -1} },
		"bad column":         func(t *ConductorTable) { t.Rows[1].Ampacity = map[string]float64{"hot": 10} },
		"falling amps":       func(t *ConductorTable) { t.Rows[1].Ampacity = map[string]float64{"60": 20, "105": 10} },
		"row without source": func(t *ConductorTable) { t.Rows[2].Source = "" },
		"bundling gap":       func(t *ConductorTable) { t.Bundling = append(t.Bundling[:1], t.Bundling[2:]...) },
		"bundling closed":    func(t *ConductorTable) { t.Bundling = t.Bundling[:4] },
		"factor above 1":     func(t *ConductorTable) { t.Bundling[0].Factor = 1.2 },
		"factor rising":      func(t *ConductorTable) { t.Bundling[4].Factor = 0.9 },
		"no bundling":        func(t *ConductorTable) { t.Bundling = nil },
		"no rows":            func(t *ConductorTable) { t.Rows = nil },
	}
	for name, breakIt := range breakers {
		tbl := DefaultConductorTable()
		breakIt(&tbl)
		if err := tbl.Validate(); err == nil {
			t.Errorf("%s: Validate passed a broken table", name)
		}
	}
}

func TestAmpacityFromTrimmedTable(t *testing.T) {
	full := DefaultConductorTable()
	trimmed := full
	trimmed.Rows = full.Rows[:14] // the Table 5 rows only: 18 AWG and up
	if _, err := trimmed.Ampacity(mustGauge(t, "22AWG"), 105, 1); !errors.Is(err, ErrNoAmpacity) {
		t.Errorf("22AWG against a table starting at 18AWG: err %v, want ErrNoAmpacity", err)
	}
	// 2.5 mm² has no row here and takes 14 AWG's (2.08 mm²) 35 A.
	if amps, err := trimmed.Ampacity(mustGauge(t, "2.5mm2"), 105, 1); err != nil || amps != 35 {
		t.Errorf("2.5mm2 against Table 5 rows: %g, %v; want 35 A", amps, err)
	}
	trimmed.Bundling = trimmed.Bundling[1:] // starts at 3 conductors
	if _, err := trimmed.Ampacity(mustGauge(t, "14AWG"), 105, 1); !errors.Is(err, ErrNoAmpacity) {
		t.Errorf("no bundling factor for 1 conductor: err %v, want ErrNoAmpacity", err)
	}
}
