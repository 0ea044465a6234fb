package review

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"wattshelf/domain"
)

// The edge tests below work every number by hand. Conventions:
//   - ambient 20 °C, so copper needs no temperature correction;
//   - a 1 mm² feed 0.29 m long has a loop resistance of
//     2 × 0.29 m × (1/58) Ω·mm²/m ÷ 1 mm² = 0.01 Ω (IEC 60028);
//     2.9 m of it is 0.1 Ω; 0.5 mm² × 0.29 m is 0.02 Ω;
//   - a 1 mm² conductor is rated like 18 AWG, the largest Table 5 size not
//     larger than it: 20 A with 105 °C insulation, 10 A with 60 °C, and
//     × 0.7 when three are bundled (33 CFR 183.425 Table 5 and its bundling
//     factors); 0.5 mm² gets the small-size rule, 20 A × 0.5/0.8231 rounded
//     down = 12.1 A; 25 mm² is rated like 4 AWG, 160 A;
//   - NiMH defaults (electric.DefaultChemistries, from memory and IEC
//     61951-2): cells 1.0 V cutoff, 1.2 V nominal, 1.4 V full, 0.03 Ω.
//   - seeded limits: utilisation 80 % and thermal margin
//     25 °C (common practice), drop 3 % / 10 % (marine DC wiring practice),
//     fuse ≤ 1.5 × ampacity and within 178 mm / 1,016 mm sheathed
//     (33 CFR 183.455), fuse ≥ 1.25 × continuous current (common practice).

const bench = `{"id": "bench", "type": "supply", "output_v": 12, "max_a": 100}`

func supplyOf(v, maxA float64) string {
	return fmt.Sprintf(`{"id": "bench", "type": "supply", "output_v": %g, "max_a": %g}`, v, maxA)
}

// nimh is a battery of s NiMH cells of 2000 mAh.
func nimh(s int, extra string) string {
	return fmt.Sprintf(`{"id": "pack", "type": "battery", "chemistry": "nimh", "series": %d, "parallel": 1, "cell_capacity_mah": 2000%s}`, s, extra)
}

// feedJS is a feed from `from` over length m of gauge g, with extra feed members.
func feedJS(from, g string, length float64, extra string) string {
	return fmt.Sprintf(`"feed": {"from": %q, "wire": {"gauge": %q, "length_m": %g}%s}`, from, g, length, extra)
}

func doc(extraTop string, nodes ...string) string {
	return fmt.Sprintf(`{"format": 1, "name": "edge", "ambient_c": 20%s, "nodes": [%s]}`, extraTop, strings.Join(nodes, ",\n"))
}

func reviewDoc(t *testing.T, js string) Report {
	t.Helper()
	return reviewWith(t, js, DefaultLimits(), nil)
}

func reviewWith(t *testing.T, js string, l Limits, comps map[int64]domain.Component) Report {
	t.Helper()
	d, err := domain.DecodeDesign([]byte(js))
	if err != nil {
		t.Fatalf("decode: %v\n%s", err, js)
	}
	rep, err := Review(d, l, 1, comps)
	if err != nil {
		t.Fatalf("review: %v\n%s", err, js)
	}
	return rep
}

func findCheck(rep Report, check, node string) (Check, bool) {
	for _, c := range rep.Checks {
		if c.Check == check && c.Node == node {
			return c, true
		}
	}
	return Check{}, false
}

func near(a, b float64) bool { return math.Abs(a-b) <= 1e-6*max(1, math.Abs(b)) }

func nearPtr(a *float64, b float64) bool { return a != nil && near(*a, b) }

// show prints a number that may be missing.
func show(x *float64) string {
	if x == nil {
		return "null"
	}
	return fmt.Sprint(*x)
}

type edge struct {
	name         string
	doc          string
	check, node  string
	status       Status
	value, limit float64
	msg          string // a part of the message, when the test cares
}

func runEdges(t *testing.T, edges []edge) {
	t.Helper()
	for _, e := range edges {
		t.Run(e.name, func(t *testing.T) {
			rep := reviewDoc(t, e.doc)
			c, ok := findCheck(rep, e.check, e.node)
			if !ok {
				t.Fatalf("no %s check on %s; checks: %+v", e.check, e.node, rep.Checks)
			}
			// The threshold the test names is the check's hard limit or
			// its warning threshold, whichever the condition shown is.
			if c.Status != e.status || !nearPtr(c.Value, e.value) || !(nearPtr(c.Limit, e.limit) || nearPtr(c.WarnAt, e.limit)) {
				t.Errorf("%s on %s: got %s value %v limit %v warn_at %v; want %s value %g threshold %g\n%s",
					e.check, e.node, c.Status, show(c.Value), show(c.Limit), show(c.WarnAt), e.status, e.value, e.limit, c.Message)
			}
			if !strings.Contains(c.Message, e.msg) {
				t.Errorf("message %q lacks %q", c.Message, e.msg)
			}
			if rep.Rules[c.Check].Basis == "" || c.Unit == "" || c.Message == "" {
				t.Errorf("check without rule, unit or message: %+v", c)
			}
		})
	}
}

func TestVoltageRangeEdges(t *testing.T) {
	// A 1 A load on 0.01 Ω from a 12 V supply: low = nominal = 12 − 1 × 0.01
	// = 11.99 V, high = 12 V (no load).
	load := func(minMax string) string {
		return doc("", bench, `{"id": "lamp", "type": "load", "current_a": 1`+minMax+`, `+feedJS("bench", "1mm2", 0.29, "")+`}`)
	}
	// NiMH 10S: cutoff 10 V, nominal 12 V, full 14 V; the load's low end is
	// 10 − 0.01 = 9.99 V. With min_v 10.5 it browns out when the pack falls
	// to 10.5 + 0.01 = 10.51 V, 1.051 V a cell: on the NiMH curve between
	// (0, 1.00 V) and (0.05, 1.08 V) that is SOC 0.05 × 0.051/0.08 =
	// 0.0319, so 1 − 0.0319 = 96.8 % of the charge has been used.
	onPack := func(minV float64) string {
		return doc("", nimh(10, ""), fmt.Sprintf(`{"id": "lamp", "type": "load", "current_a": 1, "min_v": %g, `, minV)+feedJS("pack", "1mm2", 0.29, "")+`}`)
	}
	runEdges(t, []edge{
		{"high end at max_v", load(`, "max_v": 12`), "voltage.range", "lamp", Pass, 12, 12, "within its limit of 12.0 V"},
		{"high end over max_v", load(`, "max_v": 11.995`), "voltage.range", "lamp", Fail, 12, 11.995, "above its max_v"},
		{"nominal just above min_v", load(`, "min_v": 11.98`), "voltage.range", "lamp", Pass, 11.99, 11.98, ""},
		{"nominal below min_v", load(`, "min_v": 11.995`), "voltage.range", "lamp", Fail, 11.99, 11.995, "at the source's nominal"},
		{"low end above min_v", onPack(9.98), "voltage.range", "lamp", Pass, 9.99, 9.98, ""},
		{"brownout before cutoff", onPack(10.5), "voltage.range", "lamp", Warn, 9.99, 10.5, "falls to 10.5 V, after about 97 % of its charge"},
	})
}

func TestRegulatorEdges(t *testing.T) {
	// Linear 5 V regulator, dropout 2 V (a 78xx-style part, from memory): it
	// needs output_v + dropout_v = 7 V at its input (common practice). It feeds
	// a 0.5 A load; its input current is 0.5 A, its feed drop 0.005 V.
	linear := func(src, extra string) string {
		from := "bench"
		if strings.Contains(src, "pack") {
			from = "pack"
		}
		return doc("", src,
			`{"id": "reg", "type": "regulator", "topology": "linear", "output_v": 5, "max_output_a": 1, "dropout_v": 2, "theta_ja_c_per_w": 20`+extra+`, `+feedJS(from, "1mm2", 0.29, "")+`}`,
			`{"id": "led", "type": "load", "current_a": 0.5, "min_v": 4, "max_v": 6, `+feedJS("reg", "1mm2", 0.29, "")+`}`)
	}
	// NiMH 6S: cutoff 6.0 V, full 8.4 V. The input low end is
	// 6.0 − 0.005 = 5.995 V < 7 V: it drops out when the pack falls to
	// 7.005 V, 1.1675 V a cell, SOC 0.2 + 0.1 × 0.0075/0.02 = 0.2375 on the
	// NiMH curve: after about 76 % of the charge.
	runEdges(t, []edge{
		{"linear in range", linear(bench, ""), "regulator.headroom", "reg", Pass, 11.995, 7, "holds 5.00 V"},
		{"linear never reaches", linear(supplyOf(6.9, 10), ""), "regulator.headroom", "reg", Fail, 6.9, 7, "can never deliver"},
		{"linear drops out", linear(nimh(6, ""), ""), "regulator.headroom", "reg", Warn, 5.995, 7, "falls to 7.00 V, after about 76 %"},
		{"linear over max_input_v", linear(bench, `, "max_input_v": 11.9`), "regulator.headroom", "reg", Fail, 12, 11.9, "max_input_v"},
	})

	// Buck 5 V at η 0.8 with a 1 A load draws P/η = 5/0.8 = 6.25 W (input
	// power over efficiency, common practice). Over a
	// feed of R from 12 V its input is V = (12 + √(144 − 4·R·6.25))/2; the
	// feed collapses when 4·R·6.25 > 144, i.e. R > 5.76 Ω. 0.13 mm² has a
	// loop resistance of 2/(58 × 0.13) = 0.26525 Ω/m: 20 m is 5.305 Ω
	// (V = (12 + √11.374)/2 = 7.686 V), 23 m is 6.101 Ω (collapse). The
	// check shows the supply voltage against 2·√(R·P/η): 2·√(5.305 × 6.25) =
	// 11.516 V and 2·√(6.101 × 6.25) = 12.350 V.
	buck := func(src string, length float64, extra string) string {
		from := "bench"
		if strings.Contains(src, "pack") {
			from = "pack"
		}
		return doc("", src,
			`{"id": "buck", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 2, "efficiency": 0.8`+extra+`, `+feedJS(from, "0.13mm2", length, "")+`}`,
			`{"id": "cam", "type": "load", "current_a": 1, "min_v": 4.5, "max_v": 5.5, `+feedJS("buck", "1mm2", 0.29, "")+`}`)
	}
	r20 := 20 * 2 / (58 * 0.13)
	r23 := 23 * 2 / (58 * 0.13)
	// NiMH 6S with min_input_v 6.5: the input low end is about 6.0 − 0.8 A ×
	// 0.265 Ω ≈ 5.8 V, below 6.5 V, so it drops out before the cutoff.
	runEdges(t, []edge{
		{"buck carries its power", buck(bench, 20, ""), "regulator.headroom", "buck", Pass, 12, 2 * math.Sqrt(r20*6.25), "holds 5.00 V"},
		{"buck feed collapses", buck(bench, 23, ""), "regulator.headroom", "buck", Fail, 12, 2 * math.Sqrt(r23*6.25), "collapse"},
		{"buck below its output", buck(supplyOf(4.9, 10), 1, ""), "regulator.headroom", "buck", Fail, 4.9, 5, "can never regulate"},
		{"buck over max_input_v", buck(bench, 1, `, "max_input_v": 11`), "regulator.headroom", "buck", Fail, 12, 11, "max_input_v"},
	})
	rep := reviewDoc(t, buck(nimh(6, ""), 1, `, "min_input_v": 6.5`))
	if c, _ := findCheck(rep, "regulator.headroom", "buck"); c.Status != Warn || !nearPtr(c.WarnAt, 6.5) || (c.Value == nil || *c.Value >= 6) {
		t.Errorf("buck with min_input_v 6.5 on NiMH 6S: %+v", c)
	}
	// The operating point of the 20 m buck, solved by hand above.
	rep = reviewDoc(t, buck(bench, 20, ""))
	vin := (12 + math.Sqrt(144-4*r20*6.25)) / 2
	n := nodeResult(t, rep, "buck")
	if !near(n.VLow, vin) || !near(n.RunA, 6.25/vin) {
		t.Errorf("buck input %g V at %g A; want %g V at %g A", n.VLow, n.RunA, vin, 6.25/vin)
	}
	// A boost set to 5 V fed 12 V can never step down.
	boost := doc("", bench,
		`{"id": "boost", "type": "regulator", "topology": "boost", "output_v": 5, "max_output_a": 1, `+feedJS("bench", "1mm2", 0.29, "")+`}`,
		`{"id": "led", "type": "load", "current_a": 0.1, `+feedJS("boost", "1mm2", 0.29, "")+`}`)
	if c, _ := findCheck(reviewDoc(t, boost), "regulator.headroom", "boost"); c.Status != Fail || !strings.Contains(c.Message, "step down") {
		t.Errorf("boost above its output: %+v", c)
	}

	// regulator.current: max_output_a 1.25 A; warn above 80 % (utilisation,
	// common practice) = 1.0 A (run),
	// fail when the peak exceeds 1.25 A.
	current := func(run, peak float64) string {
		return doc("", bench,
			`{"id": "reg", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 1.25, `+feedJS("bench", "1mm2", 0.29, "")+`}`,
			fmt.Sprintf(`{"id": "led", "type": "load", "current_a": %g, "peak_a": %g, `, run, peak)+feedJS("reg", "1mm2", 0.29, "")+`}`)
	}
	runEdges(t, []edge{
		{"run under 80 %", current(0.99, 1.2), "regulator.current", "reg", Pass, 0.99, 1, ""},
		{"run over 80 %", current(1.01, 1.2), "regulator.current", "reg", Warn, 1.01, 1, "over 80 %"},
		{"peak over rating", current(0.5, 1.26), "regulator.current", "reg", Fail, 1.26, 1.25, "surges"},
	})
}

func TestRegulatorThermalEdges(t *testing.T) {
	// A linear 5 V regulator on a 12 V supply (input high end 12 V), 0.1 A
	// out, 5 mA quiescent: P = (12 − 5) × 0.1 + 12 × 0.005 = 0.76 W
	// (the datasheet dissipation formula, common practice). T_j = 20 °C +
	// 0.76 W × θ_JA. With tj_max 125 °C and the 25 °C margin it warns from
	// 100 °C: θ 105 → 99.8 °C pass, θ 106 → 100.56 °C warn, θ 138 →
	// 124.88 °C warn, θ 139 → 125.64 °C fail.
	reg := func(theta float64) string {
		return doc("", bench,
			fmt.Sprintf(`{"id": "ldo", "type": "regulator", "topology": "linear", "output_v": 5, "max_output_a": 1, "dropout_v": 1, "quiescent_a": 0.005, "theta_ja_c_per_w": %g, "tj_max_c": 125, `, theta)+feedJS("bench", "1mm2", 0.29, "")+`}`,
			`{"id": "mcu", "type": "load", "current_a": 0.1, `+feedJS("ldo", "1mm2", 0.29, "")+`}`)
	}
	runEdges(t, []edge{
		{"cool", reg(105), "regulator.thermal", "ldo", Pass, 99.8, 100, "0.76 W"},
		{"within the margin", reg(106), "regulator.thermal", "ldo", Warn, 100.56, 100, "within 25.0 °C"},
		{"just under the limit", reg(138), "regulator.thermal", "ldo", Warn, 124.88, 100, ""},
		{"over the limit", reg(139), "regulator.thermal", "ldo", Fail, 125.64, 125, "at or over"},
	})
	// tj_max_c left out takes the stored default, 125 °C (common practice).
	js := strings.Replace(reg(139), `, "tj_max_c": 125`, "", 1)
	if c, _ := findCheck(reviewDoc(t, js), "regulator.thermal", "ldo"); c.Status != Fail || !nearPtr(c.Limit, 125) {
		t.Errorf("default tj_max_c: %+v", c)
	}
	if n := nodeResult(t, reviewDoc(t, reg(105)), "ldo"); n.JunctionC == nil || !near(*n.JunctionC, 99.8) || !near(*n.DissipationW, 0.76) {
		t.Errorf("node result without junction temperature: %+v", n)
	}
}

func TestDriverEdges(t *testing.T) {
	// A motor with running_a 2 A and stall 5 A at 12 V, on a driver fed from
	// the 12 V supply: the driver's input high end is 12 V, it carries 2 A
	// and surges of 5 × 12/12 = 5 A (stall current scales with voltage: the
	// winding resistance V/I_stall, common practice). Each rating warns
	// above 80 % of it (utilisation, common practice).
	drv := func(maxIn, cont, peak float64) string {
		return doc("", bench,
			fmt.Sprintf(`{"id": "drv", "type": "driver", "max_input_v": %g, "continuous_a": %g, "peak_a": %g, `, maxIn, cont, peak)+feedJS("bench", "1mm2", 0.29, "")+`}`,
			`{"id": "m", "type": "motor", "rated_v": 12, "stall_a": 5, "running_a": 2, "min_v": 6, "max_v": 13, `+feedJS("drv", "1mm2", 0.29, "")+`}`)
	}
	runEdges(t, []edge{
		// max_input_v: 80 % of 15.1 = 12.08 V ≥ 12 pass; 80 % of 14.9 = 11.92 V warn; 11.9 V fail.
		{"voltage headroom", drv(15.1, 3, 10), "driver.voltage", "drv", Pass, 12, 12.08, ""},
		{"voltage within 80 %", drv(14.9, 3, 10), "driver.voltage", "drv", Warn, 12, 11.92, "over 80 %"},
		{"voltage over rating", drv(11.9, 3, 10), "driver.voltage", "drv", Fail, 12, 11.9, "above its max_input_v"},
		// continuous_a: 80 % of 2.6 = 2.08 A pass; 80 % of 2.4 = 1.92 A warn; 1.9 A fail.
		{"current headroom", drv(24, 2.6, 10), "driver.current", "drv", Pass, 2, 2.08, ""},
		{"current over 80 %", drv(24, 2.4, 10), "driver.current", "drv", Warn, 2, 1.92, "over 80 %"},
		{"current over rating", drv(24, 1.9, 10), "driver.current", "drv", Fail, 2, 1.9, "continuously"},
		// peak_a: 80 % of 6.3 = 5.04 A pass; 80 % of 6.2 = 4.96 A warn; 4.9 A fail.
		{"peak headroom", drv(24, 3, 6.3), "driver.current", "drv", Pass, 5, 5.04, ""},
		{"peak over 80 %", drv(24, 3, 6.2), "driver.current", "drv", Warn, 5, 4.96, "surges"},
		{"peak over rating", drv(24, 3, 4.9), "driver.current", "drv", Fail, 5, 4.9, "motor stall"},
	})
}

func TestSourceCurrentEdges(t *testing.T) {
	// A load of 1 A running, 2 A peak on a supply: fail when the running
	// current exceeds max_a, warn when the surge does.
	sup := func(maxA float64) string {
		return doc("", supplyOf(12, maxA), `{"id": "heater", "type": "load", "current_a": 1, "peak_a": 2, `+feedJS("bench", "1mm2", 0.29, "")+`}`)
	}
	// NiMH 10S, R_int = 10 × 0.03 = 0.3 Ω, nominal 12 V. A critical load of
	// 0.1 A with 10 A surges: the surge sags the pack to 12 − 10 × 0.3 =
	// 9.0 V. With min_v 9.5 it needs 9.5 + 0.1 × 0.01 = 9.501 V (warn); with
	// min_v 8.9, 8.901 V (pass).
	sag := func(minV float64) string {
		return doc("", nimh(10, `, "max_discharge_a": 20`),
			fmt.Sprintf(`{"id": "radio", "type": "load", "current_a": 0.1, "peak_a": 10, "critical": true, "min_v": %g, `, minV)+feedJS("pack", "1mm2", 0.29, `, "fuse": {"rating_a": 15, "distance_from_source_m": 0.1}`)+`}`)
	}
	runEdges(t, []edge{
		{"within rating", sup(2.1), "source.current", "bench", Pass, 2, 2.1, ""},
		{"surge over rating", sup(1.9), "source.current", "bench", Warn, 2, 1.9, "surges"},
		{"run over rating", sup(0.9), "source.current", "bench", Fail, 1, 0.9, "continuously"},
		{"sag keeps critical load up", sag(8.9), "source.current", "pack", Pass, 9, 8.901, ""},
		{"sag drops critical load", sag(9.5), "source.current", "pack", Warn, 9, 9.501, "critical load radio"},
	})
	// The default discharge limit is the chemistry's C rate times the
	// capacity: NiMH 2 C × 2 Ah = 4 A.
	if c, _ := findCheck(reviewDoc(t, doc("", nimh(10, ""), `{"id": "x", "type": "load", "current_a": 4.1, `+feedJS("pack", "1mm2", 0.29, "")+`}`)), "source.current", "pack"); c.Status != Fail || !nearPtr(c.Limit, 4) {
		t.Errorf("default max_discharge_a: %+v", c)
	}
}

func TestSourceRuntimeEdges(t *testing.T) {
	// NiMH 10S of 2 Ah with a 0.5 A load: no brownout, so all of the
	// capacity is usable: 2 Ah / 0.5 A = 4 h.
	rt := func(target float64) string {
		return doc(fmt.Sprintf(`, "target_runtime_h": %g`, target), nimh(10, ""),
			`{"id": "fan", "type": "load", "current_a": 0.5, `+feedJS("pack", "1mm2", 0.29, `, "fuse": {"rating_a": 1, "distance_from_source_m": 0.1}`)+`}`)
	}
	runEdges(t, []edge{
		{"meets target", rt(3.9), "source.runtime", "pack", Pass, 4, 3.9, "meeting"},
		{"short of target", rt(4.1), "source.runtime", "pack", Warn, 4, 4.1, "short of"},
	})
	// Without a target the runtime is still stated, as a pass against 0 h.
	noTarget := doc("", nimh(10, ""),
		`{"id": "fan", "type": "load", "current_a": 0.5, `+feedJS("pack", "1mm2", 0.29, `, "fuse": {"rating_a": 1, "distance_from_source_m": 0.1}`)+`}`)
	runEdges(t, []edge{
		{"no target", noTarget, "source.runtime", "pack", Pass, 4, 0, "sets no target_runtime_h"},
	})

	// Peukert's law (Peukert 1897, as in battery handbooks; common practice):
	// t = H × (C/(I·H))^k. A 12 V, 7 Ah lead-acid block rated at 20 h with
	// k = 1.2 (the stored exponent) lasts exactly 20 h at C/20 = 0.35 A, and
	// at 1.4 A: 20 × (7/28)^1.2 = 20 × 0.25^1.2 = 3.789 h, not the 5 h that
	// capacity over current would say.
	lead := func(amps float64) Report {
		return reviewDoc(t, doc("",
			`{"id": "block", "type": "battery", "chemistry": "leadacid", "series": 6, "parallel": 1, "cell_capacity_mah": 7000}`,
			fmt.Sprintf(`{"id": "pump", "type": "load", "current_a": %g, `, amps)+feedJS("block", "1mm2", 0.29, `, "fuse": {"rating_a": 2, "distance_from_source_m": 0.1}`)+`}`))
	}
	for _, c := range []struct{ amps, hours float64 }{{0.35, 20}, {1.4, 20 * math.Pow(0.25, 1.2)}} {
		rep := lead(c.amps)
		if len(rep.Runtime) != 1 || rep.Runtime[0].Hours == nil || math.Abs(*rep.Runtime[0].Hours-c.hours) > 1e-4 {
			t.Errorf("lead-acid at %g A: runtime %+v, want %.4f h", c.amps, rep.Runtime, c.hours)
		}
	}
	if h := 20 * math.Pow(0.25, 1.2); math.Abs(h-3.789) > 0.001 {
		t.Errorf("worked Peukert example: %g h", h)
	}
}

func TestWireEdges(t *testing.T) {
	// 1 mm² at 105 °C: 20 A; warn above 80 % = 16 A.
	amp := func(current float64, wire string) string {
		return doc("", bench, fmt.Sprintf(`{"id": "heater", "type": "load", "current_a": %g, "feed": {"from": "bench", "wire": %s}}`, current, wire))
	}
	w1 := `{"gauge": "1mm2", "length_m": 0.29}`
	runEdges(t, []edge{
		{"under 80 %", amp(15.9, w1), "wire.ampacity", "heater", Pass, 15.9, 16, ""},
		{"over 80 %", amp(16.1, w1), "wire.ampacity", "heater", Warn, 16.1, 16, "over 80 %"},
		{"over ampacity", amp(20.1, w1), "wire.ampacity", "heater", Fail, 20.1, 20, "overheat"},
		// 60 °C insulation reads the 10 A column: 8.1 A is over 80 % of it.
		{"60 °C column", amp(8.1, `{"gauge": "1mm2", "length_m": 0.29, "insulation_c": 60}`), "wire.ampacity", "heater", Warn, 8.1, 8, ""},
		// Three bundled: 20 A × 0.7 = 14 A.
		{"bundled", amp(14.1, `{"gauge": "1mm2", "length_m": 0.29, "bundled": 3}`), "wire.ampacity", "heater", Fail, 14.1, 14, ""},
	})

	// 2.9 m of 1 mm² is 0.1 Ω. From 12 V, 10 % is 1.2 V (12 A) and 3 % is
	// 0.36 V (3.6 A). 11.9 A drops 1.19 V = 9.917 %; 12.1 A drops 1.21 V =
	// 10.083 %; 3.5 A drops 2.917 %; 3.7 A drops 3.083 %.
	drop := func(current float64, critical bool) string {
		return doc("", bench, fmt.Sprintf(`{"id": "heater", "type": "load", "current_a": %g, "critical": %t, `, current, critical)+feedJS("bench", "1mm2", 2.9, "")+`}`)
	}
	runEdges(t, []edge{
		{"under 10 %", drop(11.9, false), "wire.drop", "heater", Pass, 1.19 / 12 * 100, 10, ""},
		{"over 10 %", drop(12.1, false), "wire.drop", "heater", Fail, 1.21 / 12 * 100, 10, "over the 10.0 % limit"},
		{"critical under 3 %", drop(3.5, true), "wire.drop", "heater", Pass, 0.35 / 12 * 100, 3, "within the 3.00 % limit"},
		{"critical over 3 %", drop(3.7, true), "wire.drop", "heater", Warn, 0.37 / 12 * 100, 3, "critical"},
		{"non-critical over 3 %", drop(3.7, false), "wire.drop", "heater", Pass, 0.37 / 12 * 100, 10, ""},
	})

	// A buck with min_input_v 6 fed 5.5 V puts out nothing; its headroom
	// check fails. The 0.01 Ω feed below it carries 1 A, a 0.01 V drop, and
	// is judged against the 5 V the regulator is meant to hold: 0.2 %, a
	// pass, not a share of zero volts.
	dead := doc("", supplyOf(5.5, 10),
		`{"id": "buck", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 2, "min_input_v": 6, `+feedJS("bench", "1mm2", 0.29, "")+`}`,
		`{"id": "cam", "type": "load", "current_a": 1, "min_v": 4.5, "max_v": 5.5, `+feedJS("buck", "1mm2", 0.29, "")+`}`)
	runEdges(t, []edge{
		{"drop below a dead regulator", dead, "wire.drop", "cam", Pass, 0.01 / 5 * 100, 10, ""},
		{"the dead regulator itself", dead, "regulator.headroom", "buck", Fail, 5.5, 6, ""},
	})
}

func TestFuseEdges(t *testing.T) {
	// fuse.missing. NiMH 10S: full 14 V over 0.3 Ω = 46.67 A into a short.
	short := 14 / 0.3
	miss := func(src, g, fuse string) string {
		from := "bench"
		if strings.Contains(src, "pack") {
			from = "pack"
		}
		return doc("", src, `{"id": "lamp", "type": "load", "current_a": 1, `+feedJS(from, g, 0.29, fuse)+`}`)
	}
	fused := `, "fuse": {"rating_a": 3, "distance_from_source_m": 0.05}`
	runEdges(t, []edge{
		{"battery can burn the wire", miss(nimh(10, ""), "1mm2", ""), "fuse.missing", "lamp", Fail, short, 20, "set the wire alight"},
		{"battery within a thick wire", miss(nimh(10, ""), "25mm2", ""), "fuse.missing", "lamp", Warn, short, 160, "still advised"},
		{"battery fused", miss(nimh(10, ""), "1mm2", fused), "fuse.missing", "lamp", Pass, short, 20, "fused at 3.00 A"},
		{"supply within the wire", miss(supplyOf(12, 10), "1mm2", ""), "fuse.missing", "lamp", Warn, 10, 20, ""},
		{"supply beyond the wire", miss(supplyOf(12, 25), "1mm2", ""), "fuse.missing", "lamp", Fail, 25, 20, ""},
	})

	// fuse.rating on a 4 A load over 1 mm² (20 A): at most 1.5 × 20 = 30 A,
	// at least 1.25 × 4 = 5 A.
	rating := func(fuse string) string {
		return doc("", bench, `{"id": "lamp", "type": "load", "current_a": 4, `+feedJS("bench", "1mm2", 0.29, `, "fuse": `+fuse)+`}`)
	}
	runEdges(t, []edge{
		{"largest allowed", rating(`{"rating_a": 30, "distance_from_source_m": 0.1}`), "fuse.rating", "lamp", Pass, 30, 30, "between 5.00 A"},
		{"too big for the wire", rating(`{"rating_a": 35, "distance_from_source_m": 0.1}`), "fuse.rating", "lamp", Fail, 35, 30, "too big"},
		{"smallest allowed", rating(`{"rating_a": 5, "distance_from_source_m": 0.1}`), "fuse.rating", "lamp", Pass, 5, 5, ""},
		{"too small to run", rating(`{"rating_a": 4, "distance_from_source_m": 0.1}`), "fuse.rating", "lamp", Warn, 4, 5, "blow in normal use"},
		// The voltage rating is fuse.interrupt's (faults_test.go) under
		// limits that hold its values.
		{"voltage left to fuse.interrupt", rating(`{"rating_a": 10, "voltage_rating_v": 11, "distance_from_source_m": 0.1}`), "fuse.rating", "lamp", Pass, 10, 30, "× 1.50)."},
		// 6 A is in no stored series; the next rating up anywhere is 6.3 A (IEC 60127-2 R10).
		{"not standard anywhere", rating(`{"rating_a": 6, "distance_from_source_m": 0.1}`), "fuse.rating", "lamp", Warn, 6, 6.3, "not a standard rating of any stored fuse series"},
		// Within the blade series (ISO 8820-3) the next one up is 7.5 A.
		{"not standard in its family", rating(`{"rating_a": 6, "family": "blade", "distance_from_source_m": 0.1}`), "fuse.rating", "lamp", Warn, 6, 7.5, "blade series"},
	})
	// The zone a fuse protects runs down to the next fuse or regulator: a
	// 20 A fuse on 1 mm² feeding a driver whose motor hangs on 0.5 mm²
	// (12.1 A) may be at most 1.5 × 12.1 = 18.15 A.
	zone := func(motorFeedFuse, mid string) string {
		midNode := `{"id": "mid", "type": "driver", "max_input_v": 24, "continuous_a": 10, `
		if mid == "regulator" {
			midNode = `{"id": "mid", "type": "regulator", "topology": "buck", "output_v": 12, "max_output_a": 10, "min_input_v": 5, `
		}
		return doc("", supplyOf(12, 10),
			midNode+feedJS("bench", "1mm2", 0.29, `, "fuse": {"rating_a": 20, "distance_from_source_m": 0.1}`)+`}`,
			`{"id": "m", "type": "motor", "rated_v": 12, "stall_a": 3, "running_a": 1, `+feedJS("mid", "0.5mm2", 0.29, motorFeedFuse)+`}`)
	}
	runEdges(t, []edge{
		{"protects the wire below", zone("", "driver"), "fuse.rating", "mid", Fail, 20, 1.5 * 12.1, "wire to m"},
		{"a fuse below ends the zone", zone(`, "fuse": {"rating_a": 5}`, "driver"), "fuse.rating", "mid", Pass, 20, 30, ""},
		{"a regulator ends the zone", zone("", "regulator"), "fuse.rating", "mid", Pass, 20, 30, ""},
	})
	// A fast fuse below the motor surge: stall 12 A at 12 V rated, so the
	// surge is 12 A; a fast 10 A fuse warns, a slow one or a fast 15 A does not.
	surge := func(fuse string) string {
		return doc("", supplyOf(12, 20), `{"id": "m", "type": "motor", "rated_v": 12, "stall_a": 12, "running_a": 2, `+
			feedJS("bench", "1mm2", 0.29, `, "fuse": `+fuse)+`}`)
	}
	runEdges(t, []edge{
		{"fast fuse under the surge", surge(`{"rating_a": 10, "speed": "fast", "distance_from_source_m": 0.1}`), "fuse.rating", "m", Warn, 10, 12, "slow fuse"},
		{"slow fuse under the surge", surge(`{"rating_a": 10, "speed": "slow", "distance_from_source_m": 0.1}`), "fuse.rating", "m", Pass, 10, 30, ""},
		{"fast fuse over the surge", surge(`{"rating_a": 15, "speed": "fast", "distance_from_source_m": 0.1}`), "fuse.rating", "m", Pass, 15, 12, ""},
	})

	// fuse.placement: within 0.178 m, or 1.016 m sheathed (33 CFR 183.455).
	place := func(fuse string) string {
		return doc("", bench, `{"id": "lamp", "type": "load", "current_a": 1, `+feedJS("bench", "1mm2", 2, `, "fuse": `+fuse)+`}`)
	}
	runEdges(t, []edge{
		{"close", place(`{"rating_a": 2, "distance_from_source_m": 0.17}`), "fuse.placement", "lamp", Pass, 0.17, 0.178, ""},
		{"too far", place(`{"rating_a": 2, "distance_from_source_m": 0.18}`), "fuse.placement", "lamp", Warn, 0.18, 0.178, "within 0.178 m"},
		{"sheathed", place(`{"rating_a": 2, "distance_from_source_m": 1.0, "sheathed": true}`), "fuse.placement", "lamp", Pass, 1.0, 1.016, ""},
		{"sheathed too far", place(`{"rating_a": 2, "distance_from_source_m": 1.1, "sheathed": true}`), "fuse.placement", "lamp", Warn, 1.1, 1.016, ""},
	})
}

func TestConnectorEdges(t *testing.T) {
	// rating_a 5 A: warn above 4 A (80 %, common practice), fail above 5 A;
	// rating_v against the 12 V high end: warn above 80 % (14 V → 11.2 V),
	// fail above it.
	conn := func(current float64, c string) string {
		return doc("", bench, fmt.Sprintf(`{"id": "lamp", "type": "load", "current_a": %g, `, current)+feedJS("bench", "1mm2", 0.29, `, "connectors": [`+c+`]`)+`}`)
	}
	runEdges(t, []edge{
		{"under 80 %", conn(3.9, `{"rating_a": 5}`), "connector.rating", "lamp", Pass, 3.9, 4, ""},
		{"over 80 %", conn(4.1, `{"rating_a": 5}`), "connector.rating", "lamp", Warn, 4.1, 4, "over 80 %"},
		{"over rating", conn(5.1, `{"rating_a": 5}`), "connector.rating", "lamp", Fail, 5.1, 5, "above its 5.00 A"},
		{"voltage near rating", conn(1, `{"rating_a": 5, "rating_v": 14}`), "connector.rating", "lamp", Warn, 12, 11.2, "12.0 V"},
		{"voltage over rating", conn(1, `{"rating_a": 5, "rating_v": 11}`), "connector.rating", "lamp", Fail, 12, 11, ""},
		// xt30 is stored at 15 A (from memory): 12.1 A is over 80 %.
		{"family rating", conn(12.1, `{"family": "xt30"}`), "connector.rating", "lamp", Warn, 12.1, 12, "xt30"},
	})
}

func TestScopeAndOverallStatus(t *testing.T) {
	// A blade fuse (32 V DC, breaking 1,000 A: ISO 8820-3, from memory)
	// on a 12 V supply of 100 A with no stated current limit: a short
	// draws 10 × 100 = 1,000 A, just within what the blade breaks.
	fine := doc("", bench, `{"id": "lamp", "type": "load", "current_a": 1, "min_v": 11, "max_v": 13, `+
		feedJS("bench", "1mm2", 0.29, `, "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.1}`)+`}`)
	rep := reviewDoc(t, fine)
	if rep.Status != Pass || rep.Counts.Warn+rep.Counts.Fail+rep.Counts.OutOfScope != 0 {
		t.Fatalf("clean design: %s %+v", rep.Status, rep.Counts)
	}
	if c, _ := findCheck(rep, "scope.mains", ""); c.Status != Pass || !nearPtr(c.Value, 12) || !nearPtr(c.Limit, 50) {
		t.Errorf("scope check: %+v", c)
	}

	// Mains anywhere: out of scope, never pass, findings still listed.
	mains := strings.Replace(fine, `"max_a": 100}`, `"max_a": 100, "mains": true}`, 1)
	mains = strings.Replace(mains, `"max_v": 13`, `"max_v": 11.5`, 1) // and a failing load
	rep = reviewDoc(t, mains)
	if rep.Status != OutOfScope || rep.Counts.OutOfScope != 1 || rep.Counts.Fail != 1 {
		t.Errorf("mains design: %s %+v", rep.Status, rep.Counts)
	}
	if c, _ := findCheck(rep, "voltage.range", "lamp"); c.Status != Fail {
		t.Errorf("mains design lost its other findings: %+v", c)
	}

	// A source above the 50 V in-scope ceiling: out of scope; at 50 V not.
	for _, c := range []struct {
		v    float64
		want Status
	}{{50, Pass}, {50.1, OutOfScope}} {
		js := doc("", supplyOf(c.v, 10), `{"id": "lamp", "type": "load", "current_a": 0.1, "max_v": 60, `+
			feedJS("bench", "1mm2", 0.29, `, "fuse": {"rating_a": 1, "voltage_rating_v": 58, "breaking_capacity_a": 1000, "distance_from_source_m": 0.1}`)+`}`)
		if rep := reviewDoc(t, js); rep.Status != c.want {
			t.Errorf("%g V supply: status %s, want %s", c.v, rep.Status, c.want)
		}
	}

	// Overall status is the worst check.
	warnOnly := strings.Replace(fine, `"distance_from_source_m": 0.1`, `"distance_from_source_m": 0.5`, 1)
	if rep := reviewDoc(t, warnOnly); rep.Status != Warn || rep.Counts.Warn != 1 || rep.Counts.Fail != 0 {
		t.Errorf("one warning: %s %+v", rep.Status, rep.Counts)
	}
	both := strings.Replace(warnOnly, `"max_v": 13`, `"max_v": 11.5`, 1)
	if rep := reviewDoc(t, both); rep.Status != Fail {
		t.Errorf("warn and fail: %s", rep.Status)
	}
	// Counts add up to the checks, and every report carries the cautions.
	rep = reviewDoc(t, both)
	if n := rep.Counts.Pass + rep.Counts.Warn + rep.Counts.Fail + rep.Counts.OutOfScope; n != len(rep.Checks) {
		t.Errorf("counts %+v for %d checks", rep.Counts, len(rep.Checks))
	}
	if len(rep.Cautions) != 3 || !strings.Contains(rep.Cautions[0], "Mains") || !strings.Contains(rep.Cautions[1], "Lithium") ||
		!strings.Contains(rep.Cautions[2], "qualified person") {
		t.Errorf("cautions: %q", rep.Cautions)
	}
}

// Thresholds come from the limits passed in, not from the code.
func TestLimitsDriveTheChecks(t *testing.T) {
	js := doc("", bench, `{"id": "heater", "type": "load", "current_a": 17, `+feedJS("bench", "1mm2", 2.9, `, "connectors": [{"rating_a": 20}]`)+`}`)
	// 17 A on 1 mm² (20 A): 85 %, over the seeded 80 %; 17 A × 0.1 Ω = 1.7 V
	// = 14.2 % of 12 V, over the seeded 10 %.
	rep := reviewDoc(t, js)
	if c, _ := findCheck(rep, "wire.ampacity", "heater"); c.Status != Warn {
		t.Errorf("seeded limits: %+v", c)
	}
	if c, _ := findCheck(rep, "wire.drop", "heater"); c.Status != Fail {
		t.Errorf("seeded limits: %+v", c)
	}
	l := DefaultLimits()
	l.Policy.UtilisationPct.Value = 90
	l.VoltageDrop.NonCriticalPct.Value = 15
	rep = reviewWith(t, js, l, nil)
	// The hard limit stays the rating; the warning threshold moves.
	if c, _ := findCheck(rep, "wire.ampacity", "heater"); c.Status != Pass || !nearPtr(c.WarnAt, 18) || !nearPtr(c.Limit, 20) {
		t.Errorf("utilisation 90 %%: %+v", c)
	}
	if c, _ := findCheck(rep, "connector.rating", "heater"); c.Status != Pass || !nearPtr(c.WarnAt, 18) || !nearPtr(c.Limit, 20) {
		t.Errorf("utilisation 90 %%: %+v", c)
	}
	if c, _ := findCheck(rep, "wire.drop", "heater"); c.Status != Pass || !nearPtr(c.Limit, 15) {
		t.Errorf("drop limit 15 %%: %+v", c)
	}
	l.Policy.DefaultAmbientC.Value = 70
	rep = reviewWith(t, strings.Replace(js, `, "ambient_c": 20`, "", 1), l, nil)
	// At 70 °C copper is 1 + 0.00393 × 50 = 1.1965 times its 20 °C resistance.
	if f := feedResult(t, rep, "heater"); !near(f.ResistanceOhm, 0.1*1.1965) {
		t.Errorf("default ambient 70 °C: R = %g Ω", f.ResistanceOhm)
	}
}

func nodeResult(t *testing.T, rep Report, id string) NodeResult {
	t.Helper()
	for _, n := range rep.Nodes {
		if n.ID == id {
			return n
		}
	}
	t.Fatalf("no node %s in the report", id)
	return NodeResult{}
}

func feedResult(t *testing.T, rep Report, id string) FeedResult {
	t.Helper()
	for _, f := range rep.Feeds {
		if f.Node == id {
			return f
		}
	}
	t.Fatalf("no feed to %s in the report", id)
	return FeedResult{}
}

// A check whose input the design left out shows no number for it, and
// says what is missing; a check with a warning threshold shows it beside
// the hard limit, which stays the rating.
func TestMissingInputsAndThresholds(t *testing.T) {
	lamp := `{"id": "lamp", "type": "load", "current_a": 1, ` + feedJS("bench", "18AWG", 0.1, `, "fuse": {"rating_a": 2}`) + `}`
	rep := reviewDoc(t, doc("", bench, lamp))
	if c, _ := findCheck(rep, "voltage.range", "lamp"); c.Status != Warn || !nearPtr(c.Value, 12) || c.Limit != nil ||
		c.WarnAt != nil || !strings.Contains(c.Message, "could not be checked") {
		t.Errorf("voltage.range without min_v or max_v: %+v %s", c, c.Message)
	}
	if c, _ := findCheck(rep, "fuse.placement", "lamp"); c.Status != Warn || c.Value != nil || c.Limit != nil ||
		!nearPtr(c.WarnAt, 0.178) || !strings.Contains(c.Message, "distance_from_source_m") {
		t.Errorf("fuse.placement without a distance: %+v %s", c, c.Message)
	}
	// 18 AWG at 105 °C: 20 A (33 CFR 183.425 Table 5, as seeded); the
	// warning at 80 % of it (common practice) is 16 A.
	if c, _ := findCheck(rep, "wire.ampacity", "lamp"); c.Status != Pass || !nearPtr(c.Value, 1) || !nearPtr(c.Limit, 20) ||
		!nearPtr(c.WarnAt, 16) {
		t.Errorf("wire.ampacity of a lightly loaded 18 AWG feed: %+v", c)
	}
}

// A list of node ids reads as English does: commas, and "and" before the
// last (common practice).
func TestJoinIDs(t *testing.T) {
	for _, c := range []struct {
		ids  []string
		want string
	}{
		{nil, ""},
		{[]string{"led"}, "led"},
		{[]string{"led", "fan"}, "led and fan"},
		{[]string{"led", "fan", "pump"}, "led, fan and pump"},
		{[]string{"a", "b", "c", "d"}, "a, b, c and d"},
	} {
		if got := joinIDs(c.ids); got != c.want {
			t.Errorf("joinIDs(%q) = %q, want %q", c.ids, got, c.want)
		}
	}
}
