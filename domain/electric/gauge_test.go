package electric

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"
)

func within(t *testing.T, what string, got, want, share float64) {
	t.Helper()
	if !(math.Abs(got-want) <= share*math.Abs(want)) {
		t.Errorf("%s = %.6g, want %.6g within %.2g %%", what, got, want, share*100)
	}
}

func TestAWGDiameter(t *testing.T) {
	cases := []struct {
		awg    int
		wantMM float64
		source string
	}{
		{36, 0.127, "ASTM B258: 36 AWG is defined as 0.0050 in"},
		{-3, 11.684, "ASTM B258: 4/0 AWG is defined as 0.4600 in"},
		{22, 0.644, "ASTM B258 / standard wire table (issue 3)"},
		{18, 1.024, "ASTM B258 / standard wire table (issue 3)"},
		{10, 2.588, "ASTM B258 / standard wire table (issue 3)"},
		{30, 0.2546, "ASTM B258 / standard wire table (from memory)"},
		{24, 0.5106, "ASTM B258 / standard wire table (from memory)"},
		{20, 0.812, "ASTM B258 / standard wire table (from memory)"},
		{14, 1.628, "ASTM B258 / standard wire table (from memory)"},
		{12, 2.053, "ASTM B258 / standard wire table (from memory)"},
	}
	for _, c := range cases {
		within(t, AWGLabel(c.awg)+" diameter mm ("+c.source+")", AWGDiameterMM(c.awg), c.wantMM, 0.001)
	}
}

func TestAWGResistance(t *testing.T) {
	cases := []struct {
		label     string
		wantOhmKm float64
		source    string
	}{
		{"22AWG", 52.96, "standard wire table, annealed copper at 20 °C (issue 3)"},
		{"18AWG", 20.95, "standard wire table, annealed copper at 20 °C (issue 3)"},
		{"10AWG", 3.277, "standard wire table, annealed copper at 20 °C (issue 3)"},
		{"24AWG", 84.22, "standard wire table (from memory)"},
		{"20AWG", 33.31, "standard wire table (from memory)"},
		{"14AWG", 8.286, "standard wire table (from memory)"},
		{"12AWG", 5.211, "standard wire table (from memory)"},
		{"4/0AWG", 0.1608, "standard wire table (from memory)"},
	}
	for _, c := range cases {
		g, err := ParseGauge(c.label)
		if err != nil {
			t.Fatal(err)
		}
		within(t, c.label+" Ω/km ("+c.source+")", CopperOhmPerM(g.AreaMM2, 20)*1000, c.wantOhmKm, 0.003)
	}
}

// IEC 60228 class 5 (flexible) maxima for plain copper at 20 °C. Stranding
// and the standard's allowances put the maxima above solid annealed copper,
// so the computed value must lie below the maximum but not far below it.
func TestMetricResistanceAgainstIEC60228(t *testing.T) {
	cases := []struct {
		label  string
		maxOhm float64 // Ω/km
		source string
	}{
		{"0.5mm2", 39.0, "IEC 60228 class 5"},
		{"0.75mm2", 26.0, "IEC 60228 class 5"},
		{"1mm2", 19.5, "IEC 60228 class 5"},
		{"1.5mm2", 13.3, "IEC 60228 class 5"},
		{"2.5mm2", 7.98, "IEC 60228 class 5"},
		{"4mm2", 4.95, "IEC 60228 class 5 (from memory)"},
		{"6mm2", 3.30, "IEC 60228 class 5 (from memory)"},
	}
	for _, c := range cases {
		g, err := ParseGauge(c.label)
		if err != nil {
			t.Fatal(err)
		}
		got := CopperOhmPerM(g.AreaMM2, 20) * 1000
		if got > c.maxOhm || got < 0.85*c.maxOhm {
			t.Errorf("%s: %.4g Ω/km, want at most %.4g (%s) and within 15 %% of it", c.label, got, c.maxOhm, c.source)
		}
	}
}

// IEC 60228 Annex B factors k_t multiply a resistance measured at t to
// refer it to 20 °C.
func TestTemperatureCorrectionAgainstIEC60228(t *testing.T) {
	cases := []struct {
		tempC, kt float64
		source    string
	}{
		{40, 0.926, "IEC 60228 Annex B (issue 3)"},
		{30, 0.962, "IEC 60228 Annex B (from memory)"},
		{10, 1.042, "IEC 60228 Annex B (from memory)"},
		{20, 1.000, "IEC 60228 Annex B reference temperature"},
	}
	for _, c := range cases {
		kt := CopperOhmPerM(1, 20) / CopperOhmPerM(1, c.tempC)
		within(t, "k_t at "+formatC(c.tempC)+" ("+c.source+")", kt, c.kt, 0.003)
	}
}

func formatC(c float64) string { return formatSizes([]float64{c}) + " °C" }

// Marine DC wiring practice sizes a conductor by CM = 10.75 × I × L / E,
// L the round-trip length in feet and CM the area in circular mils. Solved
// for E it must agree with our loop resistance at the 30 °C of the tables.
func TestVoltageDropAgainstCircularMilFormula(t *testing.T) {
	cases := []struct {
		label string
		cmil  float64 // standard wire table (from memory)
	}{
		{"18AWG", 1620}, {"16AWG", 2580}, {"14AWG", 4110}, {"12AWG", 6530}, {"10AWG", 10380}, {"4AWG", 41740},
	}
	const oneWayM, currentA = 3.0, 10.0
	roundTripFt := 2 * oneWayM / 0.3048
	for _, c := range cases {
		g, err := ParseGauge(c.label)
		if err != nil {
			t.Fatal(err)
		}
		want := 10.75 * currentA * roundTripFt / c.cmil // marine circular-mil formula
		for _, tempC := range []float64{25, 30} {
			within(t, c.label+" drop at "+formatC(tempC), VoltageDropV(g, oneWayM, tempC, currentA), want, 0.02)
		}
	}
}

func TestLoopResistanceCountsBothConductors(t *testing.T) {
	g := MetricGauge(1)
	// 2 × 10 m of 1 mm² at 20 °C: 20/58 Ω (IEC 60028 resistivity).
	within(t, "loop resistance", LoopResistanceOhm(g, 10, 20), 20.0/58, 1e-12)
	// α = 0.00393 /K (IEC 60028): +30 K adds 11.79 %.
	within(t, "loop resistance at 50 °C", LoopResistanceOhm(g, 10, 50), 20.0/58*1.1179, 1e-12)
}

func TestParseGauge(t *testing.T) {
	good := []struct {
		in, label string
		awg       int
		metric    bool
	}{
		{"18AWG", "18AWG", 18, false},
		{"30awg", "30AWG", 30, false},
		{" 22 AWG ", "22AWG", 22, false},
		{"1AWG", "1AWG", 1, false},
		{"1/0AWG", "1/0AWG", 0, false},
		{"0AWG", "1/0AWG", 0, false},
		{"2/0AWG", "2/0AWG", -1, false},
		{"00AWG", "2/0AWG", -1, false},
		{"3/0AWG", "3/0AWG", -2, false},
		{"4/0AWG", "4/0AWG", -3, false},
		{"0000AWG", "4/0AWG", -3, false},
		{"17AWG", "17AWG", 17, false},
		{"0.5mm2", "0.5mm2", 0, true},
		{"1.0mm2", "1mm2", 0, true},
		{"1.5 mm²", "1.5mm2", 0, true},
		{"120MM2", "120mm2", 0, true},
	}
	for _, c := range good {
		g, err := ParseGauge(c.in)
		if err != nil {
			t.Errorf("ParseGauge(%q): %v", c.in, err)
			continue
		}
		if g.Label != c.label || g.AWG != c.awg || g.Metric != c.metric || !(g.AreaMM2 > 0) {
			t.Errorf("ParseGauge(%q) = %+v, want label %s awg %d metric %v", c.in, g, c.label, c.awg, c.metric)
		}
	}
	bad := []string{"", "AWG", "31AWG", "40AWG", "5/0AWG", "00000AWG", "0/0AWG", "018AWG", "-2AWG", "+4AWG",
		"18", "18 gauge", "1 8AWG", "1. 5mm2", "1.6mm2", "15mm2", "0mm2", "-1.5mm2", "NaNmm2", "infmm2", "mm2", "1,5mm2", "18AWG18AWG"}
	for _, in := range bad {
		if g, err := ParseGauge(in); !errors.Is(err, ErrUnknownGauge) {
			t.Errorf("ParseGauge(%q) = %+v, %v; want ErrUnknownGauge", in, g, err)
		}
	}
}

func TestAWGAreaFromDiameter(t *testing.T) {
	// 1/0 AWG is 53.5 mm² (standard wire table, from memory).
	within(t, "1/0AWG area", AWGGauge(0).AreaMM2, 53.49, 0.002)
	// Each step of three sizes roughly halves the area (common practice).
	within(t, "area ratio 15AWG/18AWG", AWGGauge(15).AreaMM2/AWGGauge(18).AreaMM2, 2, 0.01)
}

// parseGaugeByDefinition is ParseGauge as first written: the label
// lowered and trimmed, the unit cut off, labels built with fmt.
func parseGaugeByDefinition(label string) (Gauge, error) {
	s := strings.ToLower(strings.TrimSpace(label))
	number := func(unit string) string { return strings.TrimSpace(strings.TrimSuffix(s, unit)) }
	awg := func(num string) (Gauge, error) {
		n, ok := awgIndexByDefinition(num)
		if !ok {
			return Gauge{}, fmt.Errorf("%w: %q is not an AWG number; write 30AWG to 1AWG, or 1/0AWG to 4/0AWG", ErrUnknownGauge, label)
		}
		if n > smallestAWG || n < largestAWG {
			return Gauge{}, fmt.Errorf("%w: %q is outside 30AWG to 4/0AWG", ErrUnknownGauge, label)
		}
		d := AWGDiameterMM(n)
		return Gauge{Label: awgLabelByDefinition(n), AWG: n, AreaMM2: math.Pi / 4 * d * d}, nil
	}
	metric := func(num string) (Gauge, error) {
		area, err := strconv.ParseFloat(num, 64)
		if err != nil {
			return Gauge{}, fmt.Errorf("%w: %q is not a metric area; write e.g. \"0.75mm2\"", ErrUnknownGauge, label)
		}
		for _, size := range metricSizesMM2() {
			if area == size {
				return Gauge{Label: strconv.FormatFloat(size, 'f', -1, 64) + "mm2", Metric: true, AreaMM2: size}, nil
			}
		}
		return Gauge{}, fmt.Errorf("%w: %q is not a standard metric size (accepted: %s mm2)", ErrUnknownGauge, label, formatSizes(metricSizesMM2()))
	}
	switch {
	case s == "":
		return Gauge{}, fmt.Errorf("%w: empty label; write e.g. \"18AWG\" or \"1.5mm2\"", ErrUnknownGauge)
	case strings.HasSuffix(s, "awg"):
		return awg(number("awg"))
	case strings.HasSuffix(s, "mm2"):
		return metric(number("mm2"))
	case strings.HasSuffix(s, "mm²"):
		return metric(number("mm²"))
	}
	return Gauge{}, fmt.Errorf("%w: %q has no unit; write \"NNAWG\" (30AWG to 4/0AWG) or a metric size like \"1.5mm2\"", ErrUnknownGauge, label)
}

func awgIndexByDefinition(num string) (int, bool) {
	if top, ok := strings.CutSuffix(num, "/0"); ok {
		if len(top) != 1 || top[0] < '1' || top[0] > '4' {
			return 0, false
		}
		return 1 - int(top[0]-'0'), true
	}
	if num != "" && strings.Trim(num, "0") == "" && len(num) <= 4 {
		return 1 - len(num), true
	}
	if num == "" || len(num) > 2 || num[0] == '0' || strings.Trim(num, "0123456789") != "" {
		return 0, false
	}
	k, err := strconv.Atoi(num)
	return k, err == nil
}

func awgLabelByDefinition(n int) string {
	if n <= 0 {
		return fmt.Sprintf("%d/0AWG", 1-n)
	}
	return fmt.Sprintf("%dAWG", n)
}

// TestParseGaugeMatchesItsDefinition holds ParseGauge, which matches the
// unit without lowering a copy of the label and builds labels from
// constants, and CheckGauge, to the way ParseGauge was first written: the same gauge or the same
// error for every accepted size in every case, and for labels that are
// wrong in every way the first version told apart.
func TestParseGaugeMatchesItsDefinition(t *testing.T) {
	var labels []string
	for n := largestAWG - 2; n <= smallestAWG+2; n++ {
		l := awgLabelByDefinition(n)
		num := strings.TrimSuffix(l, "AWG")
		labels = append(labels, l, num+"awg", num+"Awg", num+"aWg", " "+num+" AWG ", "\t"+num+"AWG\n", num+"A WG", num+"AWG.")
	}
	for _, size := range append(metricSizesMM2(), 0.1, 3, 150) {
		num := strconv.FormatFloat(size, 'f', -1, 64)
		labels = append(labels, num+"mm2", num+"MM2", num+"mM2", num+" mm²", num+"MM²", num+"Mm²", num+"mm 2", num+"mm³",
			num+"e0mm2", num+"E0mm2", "0"+num+"mm2", num+"0mm2")
	}
	labels = append(labels, "", " ", "AWG", "awg", "mm2", "0AWG", "00AWG", "000awg", "0000AWG", "00000AWG", "09AWG", "1/0 AWG",
		"0/0AWG", "5/0AWG", "10/0AWG", "-1AWG", "+5AWG", "1e1AWG", "0x10AWG", "18ÅWG", "18AWG\x00", "\xffAWG", "18\xffAWG",
		"1,5mm2", "İ18AWG", "18İAWG", "ı18awg", "K18AWG", "18\u212aAWG", "\u212a", "0X1P0mm2", "0x1p0mm2", "INFmm2", "infmm2",
		"NaNmm2", "1.5mm\xb2", "1.5mm\xc2", "1.5 mm2 ", "\u00a018AWG\u00a0", "\u200918AWG", "18\u3000AWG", "mm²", "²")
	for _, l := range labels {
		got, gotErr := ParseGauge(l)
		want, wantErr := parseGaugeByDefinition(l)
		if got != want || fmt.Sprint(gotErr) != fmt.Sprint(wantErr) || (gotErr == nil) != (wantErr == nil) {
			t.Errorf("ParseGauge(%q) = %+v, %v; first version: %+v, %v", l, got, gotErr, want, wantErr)
		}
		if checkErr := CheckGauge(l); fmt.Sprint(checkErr) != fmt.Sprint(wantErr) {
			t.Errorf("CheckGauge(%q) = %v; ParseGauge's first version: %v", l, checkErr, wantErr)
		}
		if gotErr != nil && !errors.Is(gotErr, ErrUnknownGauge) {
			t.Errorf("ParseGauge(%q): %v does not wrap ErrUnknownGauge", l, gotErr)
		}
	}
	// Every number part of up to four characters made of digits, the
	// bytes either side of them ("/" and ":"), signs, a space and a letter.
	var parts func(prefix string, left int)
	parts = func(prefix string, left int) {
		gotN, gotOK := awgIndex(prefix)
		wantN, wantOK := awgIndexByDefinition(prefix)
		if gotN != wantN || gotOK != wantOK {
			t.Errorf("awgIndex(%q) = %d, %t; first version %d, %t", prefix, gotN, gotOK, wantN, wantOK)
		}
		if left > 0 {
			for _, c := range "0123456789/:x-+ " {
				parts(prefix+string(c), left-1)
			}
		}
	}
	parts("", 4)
	for n := largestAWG - 10; n <= smallestAWG+10; n++ {
		if got, want := AWGLabel(n), awgLabelByDefinition(n); got != want {
			t.Errorf("AWGLabel(%d) = %q, want %q", n, got, want)
		}
	}
	for _, a := range append(metricSizesMM2(), 0.1, 3, 150, 1e-7, 2.25) {
		if got, want := MetricGauge(a).Label, strconv.FormatFloat(a, 'f', -1, 64)+"mm2"; got != want {
			t.Errorf("MetricGauge(%g).Label = %q, want %q", a, got, want)
		}
	}
}

// TestParseGaugeAllocatesNothing: validation parses every feed's gauge.
func TestParseGaugeAllocatesNothing(t *testing.T) {
	for _, l := range []string{"18AWG", "4/0awg", " 0.75 mm2 ", "1.5mm²"} {
		if n := testing.AllocsPerRun(100, func() { _, _ = ParseGauge(l) }); n != 0 {
			t.Errorf("ParseGauge(%q) allocates %v times", l, n)
		}
		if n := testing.AllocsPerRun(100, func() { _ = CheckGauge(l) }); n != 0 {
			t.Errorf("CheckGauge(%q) allocates %v times", l, n)
		}
	}
}
