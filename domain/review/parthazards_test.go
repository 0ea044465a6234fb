package review

import (
	"fmt"
	"slices"
	"strings"
	"testing"

	"github.com/go-json-experiment/json"

	"wattshelf/domain"
)

// The conventions of checks_test.go hold here: ambient 20 °C, a 1 mm²
// feed 0.29 m long is 0.01 Ω out and back (IEC 60028), 1 mm² carries 20 A
// and 0.5 mm² 12.1 A (33 CFR 183.425 Table 5 and the small-size rule),
// utilisation 80 % and thermal margin 25 °C (common practice).

// nonPass lists the checks of rep that do not pass, as "check node".
func nonPass(rep Report) []string {
	var out []string
	for _, c := range rep.Checks {
		if c.Status != Pass {
			out = append(out, c.Check+" "+c.Node)
		}
	}
	slices.Sort(out)
	return out
}

// buckOn is a 5 V buck at η 0.8 from the 12 V bench, feeding one load of
// current i; extra goes into the buck.
func buckOn(i float64, extra string) string {
	return doc("", bench,
		`{"id": "buck", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 3, "efficiency": 0.8`+extra+`, `+
			feedJS("bench", "1mm2", 0.29, "")+`}`,
		fmt.Sprintf(`{"id": "cam", "type": "load", "current_a": %g, "min_v": 4.5, "max_v": 5.5, `, i)+feedJS("buck", "1mm2", 0.29, "")+`}`)
}

func TestRegulatorHeatEdges(t *testing.T) {
	// Heat = P_out·(1/η − 1) + V_in·I_q (energy conservation: what goes in
	// and does not come out is heat). At η 0.8, 1/η − 1 = 0.25; the buck
	// holds 5 V, so 1.1 A out loses 5 × 1.1 × 0.25 = 1.375 W, and the
	// quiescent draw at the 12 V high end adds 12 × I_q: 0.12 W at 10 mA
	// (1.495 W in all), 0.132 W at 11 mA (1.507 W). The stored limit for a
	// board with no heat sink is 1.5 W (common practice, from memory).
	runEdges(t, []edge{
		{"just within", buckOn(1.1, `, "quiescent_a": 0.01`), "regulator.heat", "buck", Pass, 1.495, 1.5, "sheds 1.50 W, within"},
		{"just over", buckOn(1.1, `, "quiescent_a": 0.011`), "regulator.heat", "buck", Warn, 1.507, 1.5, "nothing says where the heat goes"},
	})
	// With a thermal resistance of 40 °C/W the junction is checked
	// instead: T_j = 20 °C + 40 × 1.25 × I (I_q 0). 1.59 A: 1.9875 W, 99.5 °C,
	// below the 100 °C warning (125 °C limit − 25 °C margin); 1.61 A:
	// 2.0125 W, 100.5 °C; 2.09 A: 2.6125 W, 124.5 °C; 2.11 A: 2.6375 W,
	// 125.5 °C, over the 125 °C limit (tj_max_c default, common practice).
	runEdges(t, []edge{
		{"cool junction", buckOn(1.59, `, "theta_ja_c_per_w": 40`), "regulator.thermal", "buck", Pass, 99.5, 100, "1.99 W"},
		{"within the margin", buckOn(1.61, `, "theta_ja_c_per_w": 40`), "regulator.thermal", "buck", Warn, 100.5, 100, "within 25.0 °C"},
		{"just under the limit", buckOn(2.09, `, "theta_ja_c_per_w": 40`), "regulator.thermal", "buck", Warn, 124.5, 100, ""},
		{"over the limit", buckOn(2.11, `, "theta_ja_c_per_w": 40`), "regulator.thermal", "buck", Fail, 125.5, 125, "Add a heatsink"},
	})
	rep := reviewDoc(t, buckOn(2.11, `, "theta_ja_c_per_w": 40`))
	if _, ok := findCheck(rep, "regulator.heat", "buck"); ok {
		t.Error("a buck with a thermal resistance is judged by its junction, not by the board limit too")
	}
	for _, n := range rep.Nodes {
		if n.ID == "buck" && !(nearPtr(n.DissipationW, 2.6375) && nearPtr(n.JunctionC, 125.5)) {
			t.Errorf("buck's operating point: dissipation %s W, junction %s °C", show(n.DissipationW), show(n.JunctionC))
		}
	}
}

// converter is a 24 V bench feeding a 12 V buck that drives a 5 A LED
// panel: 60 W out at the default η 0.85 (common practice) loses
// 60 × (1/0.85 − 1) = 10.6 W. extra goes into the buck.
func converter(extra string) string {
	return fmt.Sprintf(`{"format": 1, "name": "Bench light", "ambient_c": 25, "nodes": [
	{"id": "bench", "type": "supply", "output_v": 24, "max_a": 10},
	{"id": "buck12", "type": "regulator", "topology": "buck", "output_v": 12, "max_output_a": 8%s,
	 "feed": {"from": "bench", "wire": {"gauge": "18AWG", "length_m": 0.5},
	          "fuse": {"rating_a": 5, "family": "blade", "distance_from_source_m": 0.05}}},
	{"id": "panel", "type": "load", "current_a": 5, "min_v": 11, "max_v": 13,
	 "feed": {"from": "buck12", "wire": {"gauge": "14AWG", "length_m": 0.3}}}]}`, extra)
}

func TestConverterSheddingTenWatts(t *testing.T) {
	rep := reviewDoc(t, converter(""))
	if got := nonPass(rep); rep.Status != Warn || !slices.Equal(got, []string{"regulator.heat buck12"}) {
		t.Fatalf("status %s, findings %v; want warn with regulator.heat on buck12 alone", rep.Status, got)
	}
	if c, _ := findCheck(rep, "regulator.heat", "buck12"); !nearPtr(c.Value, 60*(1/0.85-1)) {
		t.Errorf("heat %s W, want 60 × (1/0.85 − 1) = 10.59 W", show(c.Value))
	}
	// The same converter on a heat sink of 4 °C/W: T_j = 25 + 10.59 × 4 =
	// 67.4 °C, well below 100 °C.
	safe := reviewDoc(t, converter(`, "theta_ja_c_per_w": 4`))
	if safe.Status != Pass {
		t.Errorf("with a heat sink: status %s, findings %v", safe.Status, nonPass(safe))
	}
}

// liion3S is a Li-ion pack of three cells of 2000 mAh (12.6 V full) with
// extra members, feeding a 1 A lamp on 1 mm² (20 A).
func liion3S(extra, feedExtra string) string {
	return doc("", `{"id": "pack", "type": "battery", "chemistry": "liion", "series": 3, "parallel": 1, "cell_capacity_mah": 2000`+extra+`}`,
		`{"id": "lamp", "type": "load", "current_a": 1, `+feedJS("pack", "1mm2", 0.29, feedExtra)+`}`)
}

const protectedCells = `, "protection_cell_over_v": 4.25, "protection_cell_under_v": 2.8`

func TestBatteryProtectionEdges(t *testing.T) {
	// The lamp's feed is the only conductor between the pack and a fuse
	// (there is none): its 20 A is what the trip must not pass.
	runEdges(t, []edge{
		{"trip at the wire's ampacity", liion3S(protectedCells+`, "protection_trip_a": 20`, ""), "battery.protection", "pack", Pass, 20, 20, "within the 20.0 A"},
		{"trip above it", liion3S(protectedCells+`, "protection_trip_a": 20.5`, ""), "battery.protection", "pack", Fail, 20.5, 20, "no fuse protects that wire"},
	})
	fused := `, "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.05}`
	if c, _ := findCheck(reviewDoc(t, liion3S(protectedCells+`, "protection_trip_a": 100`, fused)), "battery.protection", "pack"); c.Status != Pass ||
		!strings.Contains(c.Message, "every feed from it is fused") {
		t.Errorf("a 100 A trip behind fused feeds: %+v", c)
	}
	c, _ := findCheck(reviewDoc(t, liion3S("", "")), "battery.protection", "pack")
	if c.Status != Warn || c.Value != nil || !strings.Contains(c.Message, "protection_cell_over_v, protection_cell_under_v, protection_trip_a") {
		t.Errorf("no protection stated: %+v", c)
	}
	c, _ = findCheck(reviewDoc(t, liion3S(`, "protection_trip_a": 10`, "")), "battery.protection", "pack")
	if c.Status != Warn || !strings.Contains(c.Message, "protection_cell_over_v, protection_cell_under_v not given") {
		t.Errorf("a trip with no cut-offs: %+v", c)
	}

	// Through a driver the motor's 0.5 mm² feed (12.1 A) is on the unfused
	// path too; below a regulator it is not, since the regulator limits
	// what its output draws.
	chain := func(trip float64, middle string) string {
		return doc("", fmt.Sprintf(`{"id": "pack", "type": "battery", "chemistry": "lifepo4", "series": 4, "parallel": 1, "cell_capacity_mah": 3000%s, "protection_trip_a": %g}`, protectedCells, trip),
			middle, `{"id": "end", "type": "load", "current_a": 0.5, `+feedJS("mid", "0.5mm2", 0.3, "")+`}`)
	}
	driver := `{"id": "mid", "type": "driver", "max_input_v": 30, "continuous_a": 3, ` + feedJS("pack", "1mm2", 0.29, "") + `}`
	buck := `{"id": "mid", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 2, ` + feedJS("pack", "1mm2", 0.29, "") + `}`
	runEdges(t, []edge{
		{"trip within the wire past a driver", chain(12, driver), "battery.protection", "pack", Pass, 12, 12.1, "unfused wire to end"},
		{"trip over the wire past a driver", chain(12.2, driver), "battery.protection", "pack", Fail, 12.2, 12.1, "the wire to end carries"},
		{"a regulator ends the path", chain(15, buck), "battery.protection", "pack", Pass, 15, 20, "unfused wire to mid"},
	})

	if _, ok := findCheck(reviewDoc(t, doc("", nimh(10, ""), `{"id": "lamp", "type": "load", "current_a": 1, `+feedJS("pack", "1mm2", 0.29, "")+`}`)),
		"battery.protection", "pack"); ok {
		t.Error("a NiMH pack got a lithium protection check")
	}
}

func TestParallelStringsCaution(t *testing.T) {
	pack := func(extra string) string {
		return doc("", `{"id": "pack", "type": "battery", "chemistry": "lifepo4", "series": 4, "parallel": 2, "cell_capacity_mah": 3000`+extra+`}`,
			`{"id": "lamp", "type": "load", "current_a": 1, `+feedJS("pack", "1mm2", 0.29, "")+`}`)
	}
	cautions := func(rep Report) []string { return rep.Cautions[len(Cautions()):] }
	if got := cautions(reviewDoc(t, pack(""))); len(got) != 1 || !strings.Contains(got[0], "pack has 2 strings of lithium cells") {
		t.Errorf("4S2P LiFePO4 with no per-string protection: cautions %q", got)
	}
	if got := cautions(reviewDoc(t, pack(`, "protection_per_string": true`))); len(got) != 0 {
		t.Errorf("with per-string protection: cautions %q", got)
	}
	nimh2P := doc("", `{"id": "pack", "type": "battery", "chemistry": "nimh", "series": 10, "parallel": 2, "cell_capacity_mah": 2000}`,
		`{"id": "lamp", "type": "load", "current_a": 1, `+feedJS("pack", "1mm2", 0.29, "")+`}`)
	if got := cautions(reviewDoc(t, nimh2P)); len(got) != 0 {
		t.Errorf("NiMH in parallel: cautions %q", got)
	}
}

// lampCart is a LiFePO4 pack of four 3000 mAh cells (10–14.4 V, IEC
// 61960 voltages from memory) lighting a 12 V LED bar through a 1 A blade
// fuse next to the pack.
func lampCart(packExtra string) string {
	return `{"format": 1, "name": "Lamp cart", "ambient_c": 25, "nodes": [
	{"id": "pack", "type": "battery", "chemistry": "lifepo4", "series": 4, "parallel": 1, "cell_capacity_mah": 3000` + packExtra + `},
	{"id": "bar", "type": "load", "current_a": 0.5, "min_v": 9, "max_v": 15,
	 "feed": {"from": "pack", "wire": {"gauge": "20AWG", "length_m": 0.5},
	          "fuse": {"rating_a": 1, "family": "blade", "distance_from_source_m": 0.05}}}]}`
}

func TestLithiumPackWithoutProtection(t *testing.T) {
	rep := reviewDoc(t, lampCart(""))
	if got := nonPass(rep); rep.Status != Warn || !slices.Equal(got, []string{"battery.protection pack"}) {
		t.Errorf("status %s, findings %v; want warn with battery.protection on pack alone", rep.Status, got)
	}
	// A protection board: 3.65 V and 2.5 V a cell (the LiFePO4 full and
	// cutoff voltages, IEC 61960 from memory), tripping at 10 A.
	safe := reviewDoc(t, lampCart(`, "protection_cell_over_v": 3.65, "protection_cell_under_v": 2.5, "protection_trip_a": 10`))
	if safe.Status != Pass {
		t.Errorf("with a protection board: status %s, findings %v", safe.Status, nonPass(safe))
	}
}

func TestConnectorPolarityEdges(t *testing.T) {
	node := func(body, connector string) string {
		return doc("", bench, `{"id": "drv", "type": "driver", "max_input_v": 30, "continuous_a": 3, `+feedJS("bench", "1mm2", 0.29, "")+`}`,
			body+`, `+feedJS("drv", "1mm2", 0.29, `, "connectors": [`+connector+`]`)+`}`)
	}
	motor := `{"id": "x", "type": "motor", "rated_v": 12, "stall_a": 2, "running_a": 0.5, "min_v": 6, "max_v": 13`
	load := `{"id": "x", "type": "load", "current_a": 0.5, "min_v": 10, "max_v": 13`
	driver := `{"id": "x", "type": "driver", "max_input_v": 30, "continuous_a": 3`
	runEdges(t, []edge{
		{"load on a barrel plug", node(load, `{"family": "barrel-5.5x2.1mm"}`), "connector.polarity", "x", Warn, 12, 0, "12.0 V the wrong way"},
		{"driver on a screw terminal", node(driver, `{"family": "screw-terminal-5mm"}`), "connector.polarity", "x", Warn, 12, 0, "does not fix polarity"},
		{"load on a connector of no family", node(load, `{"rating_a": 5}`), "connector.polarity", "x", Warn, 12, 0, "connector 1"},
	})
	for _, c := range []struct{ name, doc, msg string }{
		{"motor on spade terminals", node(motor, `{"family": "spade-6.3mm"}`), "runs backwards"},
		{"load that works either way on clip leads", node(load+`, "polarity_free": true`, `{"family": "clip-leads"}`), "either way"},
		{"protected load on a ring terminal", node(load+`, "reverse_protection_drop_v": 0.3`, `{"family": "ring-terminal"}`), "losing 0.3 V"},
	} {
		if got, ok := findCheck(reviewDoc(t, c.doc), "connector.polarity", "x"); !ok || got.Status != Pass || got.Limit != nil ||
			!strings.Contains(got.Message, c.msg) {
			t.Errorf("%s: %+v", c.name, got)
		}
	}
	for _, c := range []struct{ name, doc string }{
		{"xt30", node(load, `{"family": "xt30"}`)},
		{"keyed connector of no family", node(load, `{"rating_a": 5, "fixes_polarity": true}`)},
	} {
		if got, ok := findCheck(reviewDoc(t, c.doc), "connector.polarity", "x"); ok {
			t.Errorf("%s fixes polarity, yet: %+v", c.name, got)
		}
	}
	// One unkeyed connector among keyed ones is enough.
	if got, _ := findCheck(reviewDoc(t, node(load, `{"family": "xt30"}, {"family": "spade-6.3mm"}`)), "connector.polarity", "x"); got.Status != Warn ||
		!strings.Contains(got.Message, "spade-6.3mm") {
		t.Errorf("xt30 then spade: %+v", got)
	}
}

func TestReverseProtectionDropCountsInTheWindow(t *testing.T) {
	// 1 A from the 12 V bench over 0.01 Ω and a 0.4 V diode: nominal
	// 12 − 0.01 − 0.4 = 11.59 V; the no-load high end stays 12 V.
	load := func(minV float64) string {
		return doc("", bench, fmt.Sprintf(`{"id": "x", "type": "load", "current_a": 1, "min_v": %g, "max_v": 12.5, "reverse_protection_drop_v": 0.4, `, minV)+
			feedJS("bench", "1mm2", 0.29, `, "connectors": [{"family": "barrel-5.5x2.1mm", "rating_a": 5}]`)+`}`)
	}
	// A linear regulator needs output_v + dropout_v = 5 + 2 = 7 V (a
	// 78xx-style part, from memory). From 7.5 V with 0.5 A over 0.01 Ω its
	// input low end is 7.5 − 0.005 − drop: 7.005 V behind 0.49 V, 6.995 V
	// behind 0.5 V. The check shows its closest condition, the low end.
	linear := func(drop float64) string {
		return doc("", supplyOf(7.5, 10),
			fmt.Sprintf(`{"id": "reg", "type": "regulator", "topology": "linear", "output_v": 5, "max_output_a": 1, "dropout_v": 2, "theta_ja_c_per_w": 20, "reverse_protection_drop_v": %g, `, drop)+
				feedJS("bench", "1mm2", 0.29, "")+`}`,
			`{"id": "led", "type": "load", "current_a": 0.5, "min_v": 4, "max_v": 6, `+feedJS("reg", "1mm2", 0.29, "")+`}`)
	}
	runEdges(t, []edge{
		{"nominal above min_v after the diode", load(11.58), "voltage.range", "x", Pass, 11.59, 11.58, ""},
		{"nominal below min_v after the diode", load(11.6), "voltage.range", "x", Fail, 11.59, 11.6, "at the source's nominal"},
		{"headroom after a 0.49 V diode", linear(0.49), "regulator.headroom", "reg", Pass, 7.005, 7, "stays within 7.00–7.50 V"},
		{"dropout after a 0.5 V diode", linear(0.5), "regulator.headroom", "reg", Warn, 6.995, 7, "drops out"},
	})
}

// adapterLamp is a 12 V wall adapter (its low-voltage side) on a barrel
// plug to a lamp controller that takes 10.8–13.2 V (12 V ± 10 %).
func adapterLamp(loadExtra string) string {
	return `{"format": 1, "name": "Desk lamp", "ambient_c": 25, "nodes": [
	{"id": "adapter", "type": "supply", "output_v": 12, "max_a": 2},
	{"id": "lamp_ctl", "type": "load", "current_a": 1, "min_v": 10.8, "max_v": 13.2` + loadExtra + `,
	 "feed": {"from": "adapter", "wire": {"gauge": "1mm2", "length_m": 0.29},
	          "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.05},
	          "connectors": [{"family": "barrel-5.5x2.1mm"}]}}]}`
}

func TestAdapterOnABarrelPlug(t *testing.T) {
	rep := reviewDoc(t, adapterLamp(""))
	if got := nonPass(rep); rep.Status != Warn || !slices.Equal(got, []string{"connector.polarity lamp_ctl"}) {
		t.Errorf("status %s, findings %v; want warn with connector.polarity on lamp_ctl alone", rep.Status, got)
	}
	// A series Schottky diode, about 0.45 V (from memory): the controller
	// still gets 12 − 0.01 − 0.45 = 11.54 V, inside its window.
	safe := reviewDoc(t, adapterLamp(`, "reverse_protection_drop_v": 0.45`))
	if safe.Status != Pass {
		t.Errorf("with reverse-polarity protection: status %s, findings %v", safe.Status, nonPass(safe))
	}
}

// motorCart is a 12 V adapter feeding a driver with a gear motor and,
// beside it, a 12 V LED strip rated to 13.2 V; driverExtra goes into the
// driver, supplyExtra into the adapter.
func motorCart(supplyExtra, driverExtra string) string {
	return `{"format": 1, "name": "Turntable", "ambient_c": 25, "nodes": [
	{"id": "adapter", "type": "supply", "output_v": 12, "max_a": 3` + supplyExtra + `},
	{"id": "drv", "type": "driver", "max_input_v": 24, "continuous_a": 2, "peak_a": 4` + driverExtra + `,
	 "feed": {"from": "adapter", "wire": {"gauge": "1mm2", "length_m": 0.29},
	          "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.05}}},
	{"id": "gearmotor", "type": "motor", "rated_v": 12, "no_load_a": 0.1, "stall_a": 1.5, "min_v": 6, "max_v": 13.2,
	 "feed": {"from": "drv", "wire": {"gauge": "1mm2", "length_m": 0.29}}},
	{"id": "strip", "type": "load", "current_a": 0.5, "min_v": 10.8, "max_v": 13.2,
	 "feed": {"from": "adapter", "wire": {"gauge": "1mm2", "length_m": 0.29},
	          "fuse": {"rating_a": 1, "family": "blade", "distance_from_source_m": 0.05}}}]}`
}

func TestMotorOnAnAdapterRail(t *testing.T) {
	rep := reviewDoc(t, motorCart("", ""))
	if got := nonPass(rep); rep.Status != Warn || !slices.Equal(got, []string{"rail.backfeed adapter"}) {
		t.Fatalf("status %s, findings %v; want warn with rail.backfeed on adapter alone", rep.Status, got)
	}
	c, _ := findCheck(rep, "rail.backfeed", "adapter")
	// The parts on the rail and their maxima, the lowest (13.2 V) the
	// threshold.
	if !nearPtr(c.Value, 12) || !nearPtr(c.WarnAt, 13.2) || !strings.Contains(c.Message, "drv (24.0 V) and strip (13.2 V)") {
		t.Errorf("rail.backfeed: value %s, warn_at %s, %q", show(c.Value), show(c.WarnAt), c.Message)
	}
	// A 13 V clamp on the driver's supply side (a TVS diode) takes the
	// energy below every part's maximum.
	for _, safe := range []string{motorCart("", `, "clamp_v": 13`), motorCart(`, "sinks_current": true`, "")} {
		if rep := reviewDoc(t, safe); rep.Status != Pass {
			t.Errorf("status %s, findings %v", rep.Status, nonPass(rep))
		}
	}
}

func TestRailBackfeedEdges(t *testing.T) {
	// The clamp against the lowest maximum on the rail, the strip's 13.2 V
	// (12 V ± 10 %, a common LED strip rating); the check shows the clamp.
	runEdges(t, []edge{
		{"clamp at the lowest maximum", motorCart("", `, "clamp_v": 13.2`), "rail.backfeed", "adapter", Pass, 13.2, 13.2, "clamp at 13.2 V"},
		{"clamp above it", motorCart(`, "clamp_v": 13.25`, ""), "rail.backfeed", "adapter", Warn, 13.25, 13.2, "above what strip (13.2 V)"},
	})
	motorOn := func(from string) string {
		return `{"id": "m", "type": "motor", "rated_v": 5, "stall_a": 1, "running_a": 0.2, "min_v": 3, "max_v": 6, ` + feedJS(from, "1mm2", 0.29, "") + `}`
	}
	ldo := `{"id": "reg", "type": "regulator", "topology": "linear", "output_v": 5, "max_output_a": 1, "dropout_v": 1, "theta_ja_c_per_w": 20, ` +
		feedJS("bench", "1mm2", 0.29, "") + `}`
	buck := func(extra string) string {
		return `{"id": "reg", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 2` + extra + `, ` +
			feedJS("bench", "1mm2", 0.29, "") + `}`
	}
	drv := `{"id": "drv", "type": "driver", "max_input_v": 30, "continuous_a": 3, ` + feedJS("pack", "1mm2", 0.29, "") + `}`
	for _, c := range []struct {
		name, doc, node string
		status          Status
		msg             string
	}{
		{"a linear regulator", doc("", bench, ldo, motorOn("reg")), "reg", Warn, "a linear regulator, which cannot take current back"},
		{"a buck that cannot sink", doc("", bench, buck(""), motorOn("reg")), "reg", Warn, "a switching regulator that does not state it sinks"},
		{"a buck that sinks", doc("", bench, buck(`, "sinks_current": true`), motorOn("reg")), "reg", Pass, "states it sinks current"},
		{"a battery", doc("", nimh(10, ""), drv, `{"id": "m", "type": "motor", "rated_v": 12, "stall_a": 1, "running_a": 0.2, `+feedJS("drv", "1mm2", 0.29, "")+`}`),
			"pack", Pass, "takes back the current m pushes"},
	} {
		got, ok := findCheck(reviewDoc(t, c.doc), "rail.backfeed", c.node)
		if !ok || got.Status != c.status || !strings.Contains(got.Message, c.msg) {
			t.Errorf("%s: %+v", c.name, got)
		}
	}
	// A regulator makes a rail of its own: the bench above the buck is not
	// asked.
	if got, ok := findCheck(reviewDoc(t, doc("", bench, buck(""), motorOn("reg"))), "rail.backfeed", "bench"); ok {
		t.Errorf("the bench behind a buck: %+v", got)
	}
}

// olderLimits is the seeded set as a version stored before the part
// hazard checks: without the board heat limit and the connector families'
// polarity, and with a family staff added.
func olderLimits(t *testing.T) Limits {
	t.Helper()
	data, err := json.Marshal(DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	var tree map[string]any
	if err := json.Unmarshal(data, &tree); err != nil {
		t.Fatal(err)
	}
	delete(tree["regulators"].(map[string]any), "no_heatsink_max_w")
	var kept []any
	for _, c := range tree["connectors"].([]any) {
		c := c.(map[string]any)
		delete(c, "fixes_polarity")
		if c["family"] != "ring-terminal" && c["family"] != "clip-leads" {
			kept = append(kept, c)
		}
	}
	tree["connectors"] = append(kept, map[string]any{"family": "anderson-sb50", "rating_a": 50, "source": "the space's own entry"})
	if data, err = json.Marshal(tree); err != nil {
		t.Fatal(err)
	}
	var l Limits
	if err := json.Unmarshal(data, &l); err != nil {
		t.Fatal(err)
	}
	return l
}

func TestOlderLimitsLackThePartHazardValues(t *testing.T) {
	l := olderLimits(t)
	var want []string
	for i := range l.Connectors {
		want = append(want, fmt.Sprintf("/connectors/%d/fixes_polarity", i))
	}
	want = append(want, "/regulators/no_heatsink_max_w")
	var got []string
	for _, p := range problems(t, l.Validate()) {
		got = append(got, p.Pointer)
	}
	slices.Sort(got)
	slices.Sort(want)
	if !slices.Equal(got, want) {
		t.Errorf("Validate names %v, want %v", got, want)
	}

	ru, err := Prepare(l, 4)
	if err != nil {
		t.Fatal(err)
	}
	if nr := ru.NotRun(); !slices.Contains(nr, CheckRegulatorHeat) || !slices.Contains(nr, CheckConnectorPolarity) {
		t.Errorf("not run: %v", nr)
	}
	// Under them, the 10 W converter and the barrel plug are not judged,
	// and the report says so; the checks that need no stored value run.
	for _, js := range []string{converter(""), adapterLamp(""), liion3S("", "")} {
		rep := reviewWith(t, js, l, nil)
		for _, c := range rep.Checks {
			if c.Check == CheckRegulatorHeat || c.Check == CheckConnectorPolarity {
				t.Errorf("%s ran under limits that predate it: %+v", c.Check, c)
			}
		}
		if !slices.Contains(rep.NotRun, CheckRegulatorHeat) || !slices.Contains(rep.NotRun, CheckConnectorPolarity) ||
			!strings.Contains(rep.Cautions[len(rep.Cautions)-1], "regulator.heat") {
			t.Errorf("not_run %v, cautions %q", rep.NotRun, rep.Cautions)
		}
	}
	if _, ok := findCheck(reviewWith(t, liion3S("", ""), l, nil), "battery.protection", "pack"); !ok {
		t.Error("battery.protection needs no stored value, yet did not run")
	}

	// The new version serve stores: the defaults' answers, the staff
	// family taken as not fixing polarity, the new families added.
	filled, added := l.WithNewDefaults()
	if err := filled.Validate(); err != nil {
		t.Fatalf("filled limits: %v", err)
	}
	if !slices.Contains(added, CheckRegulatorHeat) || !slices.Contains(added, CheckConnectorPolarity) {
		t.Errorf("added %v", added)
	}
	for _, c := range []struct {
		family string
		fixes  bool
		source string
	}{
		{"barrel-5.5x2.1mm", false, "centre-positive or centre-negative"},
		{"xt60", true, "mates one way only"},
		{"anderson-sb50", false, "the cautious answer"},
		{"ring-terminal", false, "either lead"},
		{"clip-leads", false, "either clip"},
	} {
		f, ok := filled.connectorFamily(c.family)
		if !ok || f.FixesPolarity == nil || *f.FixesPolarity != c.fixes || !strings.Contains(f.Source, c.source) {
			t.Errorf("%s after filling: %+v", c.family, f)
		}
	}
	if f, _ := filled.connectorFamily("anderson-sb50"); !strings.HasPrefix(f.Source, "the space's own entry") {
		t.Errorf("the staff's source was not kept: %q", f.Source)
	}
	if filled.Regulators.NoHeatsinkMaxW != DefaultLimits().Regulators.NoHeatsinkMaxW {
		t.Errorf("board heat limit after filling: %+v", filled.Regulators.NoHeatsinkMaxW)
	}
}

func TestPartHazardLimitsValidate(t *testing.T) {
	l := DefaultLimits()
	l.Regulators.NoHeatsinkMaxW.Value = 0
	if ps := problems(t, l.Validate()); !hasPointer(ps, "/regulators/no_heatsink_max_w/value") {
		t.Errorf("a board limit of 0 W: %v", ps)
	}
}

func hasPointer(ps []domain.FieldProblem, ptr string) bool {
	return slices.ContainsFunc(ps, func(p domain.FieldProblem) bool { return p.Pointer == ptr })
}
