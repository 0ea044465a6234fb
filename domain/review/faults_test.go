package review

import (
	"errors"
	"fmt"
	"slices"
	"strings"
	"testing"

	"wattshelf/domain"
)

// The fault checks at their edges. Conventions as in checks_test.go
// (ambient 20 °C, 1 mm² × 0.29 m is a 0.01 Ω loop, NiMH 10S is 14 V full
// over 10 × 0.03 = 0.3 Ω), and the seeded fuse families' fault figures:
//   - blade: 32 V DC, breaks 1,000 A; fast opens at 2 × rating within 5 s
//     (ISO 8820-3, from memory), slow at 3.5 × within 5 s (common practice,
//     from memory);
//   - glass-5x20: no DC rating; breaks 35 A or 10 × rating, whichever is
//     greater, stated for AC only (IEC 60127-2 low breaking, from memory);
//   - a supply or regulator without current_limit_a drives 10 × its rated
//     current into a short (common practice, from memory).

// A short on a NiMH 10S pack: 14 V over 0.3 Ω and whatever wire lies
// between the pack and the fuse.
func TestFuseInterruptEdges(t *testing.T) {
	onPack := func(fuse string) string {
		return doc("", nimh(10, ""), `{"id": "lamp", "type": "load", "current_a": 1, `+
			feedJS("pack", "1mm2", 0.29, `, "fuse": `+fuse)+`}`)
	}
	// The fuse at the far end of its 0.29 m feed: the whole 0.01 Ω loop
	// lies before it, 14 / (0.3 + 0.01) = 45.16129 A.
	const atEnd = 14 / 0.31
	runEdges(t, []edge{
		{"breaks just enough", onPack(`{"rating_a": 3, "voltage_rating_v": 32, "breaking_capacity_a": 45.2, "distance_from_source_m": 0.29}`),
			"fuse.interrupt", "lamp", Pass, atEnd, 45.2, "can break the 45.2 A"},
		{"cannot break it", onPack(`{"rating_a": 3, "voltage_rating_v": 32, "breaking_capacity_a": 45.1, "distance_from_source_m": 0.29}`),
			"fuse.interrupt", "lamp", Fail, atEnd, 45.1, "pack's 14.0 V over its 0.3 Ω and 0.01 Ω of wire"},
		// Halfway along, only 0.005 Ω lies before it: 14 / 0.305 = 45.90 A;
		// the wire past the fuse does not limit a short just past it.
		{"wire past the fuse not counted", onPack(`{"rating_a": 3, "voltage_rating_v": 32, "breaking_capacity_a": 45.2, "distance_from_source_m": 0.145}`),
			"fuse.interrupt", "lamp", Fail, 14 / 0.305, 45.2, "more than the 45.2 A it can break"},
		// No distance given: no wire counted, 14 / 0.3 = 46.67 A.
		{"no distance, no wire", onPack(`{"rating_a": 3, "voltage_rating_v": 32, "breaking_capacity_a": 46.7}`),
			"fuse.interrupt", "lamp", Pass, 14 / 0.3, 46.7, ""},
		{"DC rating at the circuit's", onPack(`{"rating_a": 3, "voltage_rating_v": 14, "breaking_capacity_a": 100, "distance_from_source_m": 0.29}`),
			"fuse.interrupt", "lamp", Pass, 14, 14, "14.0 V DC rating covers the 14.0 V circuit"},
		{"DC rating below the circuit's", onPack(`{"rating_a": 3, "voltage_rating_v": 13.9, "breaking_capacity_a": 100, "distance_from_source_m": 0.29}`),
			"fuse.interrupt", "lamp", Fail, 13.9, 14, "below the 14.0 V the circuit reaches"},
		// A blade's family figures: 45 A of its 1,000 A, 32 V DC of 14 V.
		{"blade from its family", onPack(`{"rating_a": 3, "family": "blade", "distance_from_source_m": 0.29}`),
			"fuse.interrupt", "lamp", Pass, atEnd, 1000, "32.0 V DC rating"},
		// Glass 5 A: 10 × 5 = 50 A, above 45.16 A but for AC only: a warning
		// even with a DC rating read off the datasheet.
		{"glass within its AC figure", onPack(`{"rating_a": 5, "family": "glass-5x20", "voltage_rating_v": 32, "distance_from_source_m": 0.29}`),
			"fuse.interrupt", "lamp", Warn, atEnd, 50, "stated for AC only"},
		// Glass 4 A: 10 × 4 = 40 A < 45.16 A.
		{"glass past its AC figure", onPack(`{"rating_a": 4, "family": "glass-5x20", "voltage_rating_v": 32, "distance_from_source_m": 0.29}`),
			"fuse.interrupt", "lamp", Fail, atEnd, 40, "more than the 40.0 A"},
		// Glass 3.15 A: 10 × 3.15 = 31.5 A, so the 35 A floor holds.
		{"glass at its 35 A floor", onPack(`{"rating_a": 3.15, "family": "glass-5x20", "voltage_rating_v": 32, "distance_from_source_m": 0.29}`),
			"fuse.interrupt", "lamp", Fail, atEnd, 35, "more than the 35.0 A"},
	})

	// Supplies and regulators: 12 V, 5 A, no current limit: 10 × 5 = 50 A.
	fromSupply := func(supply, fuse string) string {
		return doc("", supply, `{"id": "lamp", "type": "load", "current_a": 1, `+feedJS("bench", "1mm2", 0.29, `, "fuse": `+fuse)+`}`)
	}
	const dcFuse = `{"rating_a": 3, "voltage_rating_v": 32, "breaking_capacity_a": 49, "distance_from_source_m": 0.1}`
	// A buck of 2 A with no current limit: 10 × 2 = 20 A below it.
	belowBuck := func(fuse string) string {
		return doc("", nimh(10, ""),
			`{"id": "buck", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 2, `+feedJS("pack", "1mm2", 0.29, "")+`}`,
			`{"id": "lamp", "type": "load", "current_a": 0.5, `+feedJS("buck", "1mm2", 0.29, `, "fuse": `+fuse)+`}`)
	}
	// Behind a driver on the pack: the driver's 0.01 Ω feed lies before
	// the fuse, and none of the lamp's own: 14 / 0.31 = 45.16 A.
	behindDriver := doc("", nimh(10, ""),
		`{"id": "drv", "type": "driver", "max_input_v": 24, "continuous_a": 5, `+feedJS("pack", "1mm2", 0.29, "")+`}`,
		`{"id": "lamp", "type": "load", "current_a": 1, `+feedJS("drv", "1mm2", 0.29,
			`, "fuse": {"rating_a": 3, "voltage_rating_v": 32, "breaking_capacity_a": 45.1, "distance_from_source_m": 0.29}`)+`}`)
	runEdges(t, []edge{
		{"supply with no current limit", fromSupply(supplyOf(12, 5), dcFuse), "fuse.interrupt", "lamp", Fail, 50, 49,
			"bench states no current_limit_a: 10.0 × its 5.00 A"},
		{"supply with a current limit", fromSupply(`{"id": "bench", "type": "supply", "output_v": 12, "max_a": 5, "current_limit_a": 6}`, dcFuse),
			"fuse.interrupt", "lamp", Pass, 6, 49, ""},
		{"below a regulator", belowBuck(`{"rating_a": 1, "voltage_rating_v": 32, "breaking_capacity_a": 19.9}`), "fuse.interrupt", "lamp",
			Fail, 20, 19.9, "buck states no current_limit_a"},
		{"behind a driver", behindDriver, "fuse.interrupt", "lamp", Fail, atEnd, 45.1, ""},
	})

	// What the fuse does not state warns, with no limit to show.
	for _, c := range []struct {
		name, fuse string
		value      float64
		msg        string
	}{
		{"no DC rating", `{"rating_a": 3, "breaking_capacity_a": 100, "distance_from_source_m": 0.29}`, 14,
			"no known DC voltage rating: it gives no voltage_rating_v"},
		{"no breaking capacity", `{"rating_a": 3, "voltage_rating_v": 32, "distance_from_source_m": 0.29}`, atEnd,
			"names no family and no breaking_capacity_a"},
	} {
		t.Run(c.name, func(t *testing.T) {
			ch, ok := findCheck(reviewDoc(t, onPack(c.fuse)), CheckFuseInterrupt, "lamp")
			if !ok || ch.Status != Warn || !nearPtr(ch.Value, c.value) || ch.Limit != nil || !strings.Contains(ch.Message, c.msg) {
				t.Errorf("%+v (value %s, limit %s)", ch, show(ch.Value), show(ch.Limit))
			}
		})
	}
	// A glass fuse with nothing read off it: its 250 V is AC and does not
	// stand in for a DC rating.
	rep := reviewDoc(t, onPack(`{"rating_a": 5, "family": "glass-5x20", "distance_from_source_m": 0.29}`))
	if ch, _ := findCheck(rep, CheckFuseRating, "lamp"); ch.Status != Pass || strings.Contains(ch.Message, "250") {
		t.Errorf("fuse.rating took the glass family's AC rating: %+v", ch)
	}
	if ch, _ := findCheck(rep, CheckFuseInterrupt, "lamp"); ch.Status != Warn {
		t.Errorf("a glass fuse with no DC figures: %+v", ch)
	}
}

// A jammed motor on a 12 V supply: stall_a at 12 V rated, running 1 A, so
// the jam adds stall − 1 A to every feed up its path and to its driver.
func TestMotorStallEdges(t *testing.T) {
	withDriver := func(drv, motor, drvFuse, motorWire string) string {
		return doc("", supplyOf(12, 20),
			`{"id": "drv", "type": "driver", "max_input_v": 24, `+drv+feedJS("bench", "1mm2", 0.29, drvFuse)+`}`,
			`{"id": "m", "type": "motor", "rated_v": 12, "running_a": 1, `+motor+
				`"feed": {"from": "drv", "wire": {`+motorWire+`, "length_m": 0.29}}}`)
	}
	const thick = `"gauge": "1mm2"`
	// 0.5 mm² with 60 °C insulation: the small-size rule gives
	// 10 A × 0.5 / 0.8231 = 6.07, rounded down to 6.0 A (33 CFR 183.425
	// Table 5's 18 AWG at 60 °C scaled by area).
	const thin = `"gauge": "0.5mm2", "insulation_c": 60`
	const fastBlade = `, "fuse": {"rating_a": 3, "speed": "fast", "family": "blade", "distance_from_source_m": 0.1}`
	const slowBlade = `, "fuse": {"rating_a": 3, "speed": "slow", "family": "blade", "distance_from_source_m": 0.1}`
	// The 10S NiMH pack full at 14 V: a 6 A (at 12 V) stall is 6 × 14/12 = 7 A.
	onPack := func(continuous float64) string {
		return doc("", nimh(10, ""),
			fmt.Sprintf(`{"id": "drv", "type": "driver", "max_input_v": 24, "continuous_a": %g, "peak_a": 20, `, continuous)+
				feedJS("pack", "1mm2", 0.29, "")+`}`,
			`{"id": "m", "type": "motor", "rated_v": 12, "running_a": 1, "stall_a": 6, `+feedJS("drv", "1mm2", 0.29, "")+`}`)
	}
	runEdges(t, []edge{
		// The driver passes 1 + (6 − 1) = 6 A.
		{"driver carries it", withDriver(`"continuous_a": 6, "peak_a": 10, `, `"stall_a": 6, `, "", thick),
			"motor.stall", "m", Pass, 6, 6, "within its continuous_a of 6.00 A"},
		{"driver past continuous", withDriver(`"continuous_a": 5.9, "peak_a": 10, `, `"stall_a": 6, `, "", thick),
			"motor.stall", "m", Warn, 6, 5.9, "above its continuous_a of 5.90 A, for as long as the jam lasts: no fuse"},
		{"driver past peak", withDriver(`"continuous_a": 2, "peak_a": 5.9, `, `"stall_a": 6, `, "", thick),
			"motor.stall", "m", Fail, 6, 5.9, "above its peak_a of 5.90 A"},
		{"no peak_a: a warning", withDriver(`"continuous_a": 2, `, `"stall_a": 6, `, "", thick),
			"motor.stall", "m", Warn, 6, 2, "continuous_a of 2.00 A"},
		// The tightest wire is the motor's own: 6.0 − 1 A spare against
		// 20 − 1 A on the driver's 1 mm² feed (33 CFR 183.425 Table 5, 105 °C).
		{"wire just carries it", withDriver(`"continuous_a": 10, "peak_a": 20, `, `"stall_a": 6, `, "", thin),
			"motor.stall", "m", Pass, 6, 6, "the feed to m, 6.00 A of its 6.00 A ampacity"},
		{"wire cannot", withDriver(`"continuous_a": 10, "peak_a": 20, `, `"stall_a": 6.06, `, "", thin),
			"motor.stall", "m", Fail, 6.06, 6, "above its ampacity of 6.00 A"},
		// A fast 3 A blade opens at 2 × 3 = 6 A within 5 s: the driver's
		// feed carries its 1 A plus the jam's 5 A.
		{"fast fuse clears it", withDriver(`"continuous_a": 2, "peak_a": 10, `, `"stall_a": 6, `, fastBlade, thick),
			"motor.stall", "m", Pass, 6, 6, "past the 6.00 A (2.00 × its rating) that opens it within 5.00 s"},
		{"fast fuse just short", withDriver(`"continuous_a": 2, "peak_a": 10, `, `"stall_a": 5.99, `, fastBlade, thick),
			"motor.stall", "m", Warn, 5.99, 2, "sees 5.99 A, short of the 6.00 A"},
		// A slow 3 A blade needs 3.5 × 3 = 10.5 A.
		{"slow fuse will not", withDriver(`"continuous_a": 2, "peak_a": 10, `, `"stall_a": 6, `, slowBlade, thick),
			"motor.stall", "m", Warn, 6, 2, "short of the 10.5 A (3.50 × its rating)"},
		{"fuse of no family", withDriver(`"continuous_a": 2, "peak_a": 10, `, `"stall_a": 6, `,
			`, "fuse": {"rating_a": 3, "speed": "fast", "distance_from_source_m": 0.1}`, thick),
			"motor.stall", "m", Warn, 6, 2, "names no family, so when it would open is unknown"},
		// A 2 A current limit holds the driver's output at 2 A: its 1 A
		// plus 1 A of the jam.
		{"driver limit holds it", withDriver(`"continuous_a": 2, "peak_a": 10, "current_limit_a": 2, `, `"stall_a": 6, `, "", thick),
			"motor.stall", "m", Pass, 2, 2, "holds its output to its 2.00 A current limit"},
		{"driver limit above continuous", withDriver(`"continuous_a": 2, "peak_a": 10, "current_limit_a": 2.1, `, `"stall_a": 6, `, "", thick),
			"motor.stall", "m", Warn, 2.1, 2, "above its continuous_a of 2.00 A"},
		{"stall at the full pack", onPack(7), "motor.stall", "m", Pass, 7, 7, "its stall current at 14.0 V"},
		{"stall at the full pack, past continuous", onPack(6.9), "motor.stall", "m", Warn, 7, 6.9, ""},
		// No driver: the wire from the supply alone.
		{"no driver", doc("", supplyOf(12, 20), `{"id": "m", "type": "motor", "rated_v": 12, "running_a": 1, "stall_a": 6.06, `+
			`"feed": {"from": "bench", "wire": {`+thin+`, "length_m": 0.29}}}`), "motor.stall", "m", Fail, 6.06, 6, "the 0.5mm2 feed to m"},
	})
}

// docAt is doc at a given ambient.
func docAt(ambientC float64, nodes ...string) string {
	return fmt.Sprintf(`{"format": 1, "name": "edge", "ambient_c": %g, "nodes": [%s]}`, ambientC, strings.Join(nodes, ",\n"))
}

// An 18 AWG feed with 60 °C insulation, tabled at 10 A at 30 °C (33 CFR
// 183.425 Table 5). At 55 °C it keeps √((60 − 55)/(60 − 30)) = 0.40825 of
// it, 4.0825 A (NFPA 70 310.15(B) ambient correction, from memory); in a
// closed box × 0.8 more (common practice, from memory).
func TestWireTemperatureEdges(t *testing.T) {
	heat := func(ambientC, currentA float64, wire, fuse string) string {
		return docAt(ambientC, supplyOf(12, 3), fmt.Sprintf(`{"id": "lamp", "type": "load", "current_a": %g, "feed": {"from": "bench", `+
			`"wire": {"gauge": "18AWG", "length_m": 0.5, "insulation_c": 60%s}%s}}`, currentA, wire, fuse))
	}
	const at55 = 10 * 0.40824829 // √(1/6) = 0.40824829
	runEdges(t, []edge{
		{"warm air", heat(55, 1, "", ""), "wire.temperature", "lamp", Pass, 55, 60, "keeps 41 % of its 10.0 A table ampacity: 4.08 A"},
		{"just below the insulation", heat(59.9, 1, "", ""), "wire.temperature", "lamp", Pass, 59.9, 60, ""},
		{"at the insulation", heat(60, 1, "", ""), "wire.temperature", "lamp", Fail, 60, 60, "at or above the 60.0 °C its insulation"},
		{"in a box", heat(25, 1, `, "enclosed": true`, ""), "wire.temperature", "lamp", Pass, 25, 60, "inside a closed box"},
		// wire.ampacity on the derated value: fail above 4.0825 A, warn
		// above 80 % of it, 3.266 A.
		{"derated ampacity passes", heat(55, 3.26, "", ""), "wire.ampacity", "lamp", Pass, 3.26, 0.8 * at55, ""},
		{"derated ampacity warns", heat(55, 3.27, "", ""), "wire.ampacity", "lamp", Warn, 3.27, 0.8 * at55, ""},
		{"derated ampacity fails", heat(55, 4.09, "", ""), "wire.ampacity", "lamp", Fail, 4.09, at55, "above its ampacity of 4.08 A"},
		// Enclosed at 25 °C: 10 × 0.8 = 8 A.
		{"boxed ampacity fails", heat(25, 8.01, `, "enclosed": true`, ""), "wire.ampacity", "lamp", Fail, 8.01, 8, ""},
		// The fuse protects the derated wire: at most 1.5 × 4.0825 = 6.124 A
		// (33 CFR 183.455), so a 7.5 A blade is too big at 55 °C and not at
		// 30 °C (1.5 × 10 = 15 A).
		{"fuse on the derated wire", heat(55, 1, "", `, "fuse": {"rating_a": 7.5, "family": "blade", "distance_from_source_m": 0.1}`),
			"fuse.rating", "lamp", Fail, 7.5, 1.5 * at55, "too big"},
		{"fuse at the table's ambient", heat(30, 1, "", `, "fuse": {"rating_a": 7.5, "family": "blade", "distance_from_source_m": 0.1}`),
			"fuse.rating", "lamp", Pass, 7.5, 15, ""},
	})
	// At the table's ambient and in the open nothing is derated, and the
	// check has nothing to say.
	rep := reviewDoc(t, heat(30, 1, "", ""))
	if c, ok := findCheck(rep, CheckWireTemperature, "lamp"); ok {
		t.Errorf("wire.temperature at 30 °C in the open: %+v", c)
	}
	if c, _ := findCheck(rep, CheckWireAmpacity, "lamp"); !nearPtr(c.Limit, 10) {
		t.Errorf("ampacity at 30 °C: %s, want 10", show(c.Limit))
	}
}

// The builds a review must not pass, each otherwise clean, and the same
// build made safe, which passes with no new finding. None of them is a
// demo design.
func TestFaultBuilds(t *testing.T) {
	type finding struct {
		check, node string
		status      Status
	}
	// An 11S2P Li-ion pack: 11 × 4.2 = 46.2 V full over 11 × 0.05 / 2 =
	// 0.275 Ω; 0.1 m of 18 AWG before the fuse at 25 °C, 2 × 0.1 ×
	// 0.02095 × 1.0197 = 0.00427 Ω (IEC 60028): 46.2 / 0.2793 = 165 A.
	lithium := func(fuse string) string {
		return `{"format": 1, "name": "LED panel on a 46 V pack", "ambient_c": 25, "nodes": [
			{"id": "pack", "type": "battery", "chemistry": "liion", "series": 11, "parallel": 2, "cell_capacity_mah": 2500,
			 "protection_cell_over_v": 4.25, "protection_cell_under_v": 2.5, "protection_trip_a": 10, "protection_per_string": true},
			{"id": "led_panel", "type": "load", "current_a": 1.5, "min_v": 30, "max_v": 48,
			 "feed": {"from": "pack", "wire": {"gauge": "18AWG", "length_m": 0.5}, "fuse": ` + fuse + `}}]}`
	}
	// A starter-type lead-acid block: 6 × 2.2 = 13.2 V full over
	// 6 × 0.0015 = 0.009 Ω, and 0.1 m of 16 AWG before the fuse, 0.00269 Ω
	// at 25 °C: 13.2 / 0.01169 = 1,129 A.
	starter := func(fuse string) string {
		return `{"format": 1, "name": "Work lamp on a car battery", "ambient_c": 25, "nodes": [
			{"id": "battery", "type": "battery", "chemistry": "leadacid", "series": 6, "parallel": 1,
			 "cell_capacity_mah": 45000, "cell_internal_ohm": 0.0015},
			{"id": "lamp", "type": "load", "current_a": 3, "min_v": 10, "max_v": 15,
			 "feed": {"from": "battery", "wire": {"gauge": "16AWG", "length_m": 1}, "fuse": ` + fuse + `}}]}`
	}
	// A gear motor of 6 A stall at 12 V behind a driver of 2 A continuous
	// (8 A peak, for starts) and a slow 3 A blade fuse, which needs
	// 3.5 × 3 = 10.5 A to open within 5 s.
	gear := func(driverLimit string) string {
		return `{"format": 1, "name": "Gate opener", "ambient_c": 25, "nodes": [
			{"id": "bench", "type": "supply", "output_v": 12, "max_a": 10},
			{"id": "drv", "type": "driver", "max_input_v": 24, "continuous_a": 2, "peak_a": 8, "clamp_v": 13.2` + driverLimit + `,
			 "feed": {"from": "bench", "wire": {"gauge": "18AWG", "length_m": 0.3},
			          "fuse": {"rating_a": 3, "speed": "slow", "family": "blade", "distance_from_source_m": 0.1}}},
			{"id": "gear", "type": "motor", "rated_v": 12, "no_load_a": 0.3, "stall_a": 6, "running_a": 1.2,
			 "min_v": 6, "max_v": 13.5,
			 "feed": {"from": "drv", "wire": {"gauge": "18AWG", "length_m": 0.5}}}]}`
	}
	// An 8 A fan in a 55 °C box. 18 AWG with 60 °C insulation carries
	// 10 A at 30 °C and 10 × √(5/30) × 0.8 = 3.27 A here; 16 AWG with
	// 105 °C insulation 25 × √(50/75) × 0.8 = 16.3 A (33 CFR 183.425
	// Table 5; NFPA 70 310.15(B), from memory; 0.8 common practice).
	hotBox := func(wire string) string {
		return `{"format": 1, "name": "Fan in the battery box", "ambient_c": 55, "nodes": [
			{"id": "bench", "type": "supply", "output_v": 12, "max_a": 10},
			{"id": "fan", "type": "load", "current_a": 8, "min_v": 10, "max_v": 13,
			 "feed": {"from": "bench", "wire": {` + wire + `, "length_m": 0.5, "enclosed": true},
			          "fuse": {"rating_a": 10, "family": "blade", "distance_from_source_m": 0.1}}}]}`
	}
	const glass2 = `{"rating_a": 2, "family": "glass-5x20", "distance_from_source_m": 0.1}`
	const glass5 = `{"rating_a": 5, "family": "glass-5x20", "distance_from_source_m": 0.1}`
	for _, b := range []struct {
		name, hazard, safe string
		want               []finding
		value              float64 // of the first finding
	}{
		{"46 V pack through a glass fuse", lithium(glass2),
			lithium(`{"rating_a": 2, "voltage_rating_v": 58, "breaking_capacity_a": 1000, "distance_from_source_m": 0.1}`),
			[]finding{{CheckFuseInterrupt, "led_panel", Fail}}, 165.4},
		{"starter battery through a glass fuse", starter(glass5),
			starter(`{"rating_a": 5, "voltage_rating_v": 32, "breaking_capacity_a": 2000, "distance_from_source_m": 0.1}`),
			[]finding{{CheckFuseInterrupt, "lamp", Fail}}, 1129},
		// A blade breaks 1,000 A: not a starter battery's short either.
		{"starter battery through a blade fuse", starter(`{"rating_a": 5, "family": "blade", "distance_from_source_m": 0.1}`),
			starter(`{"rating_a": 5, "voltage_rating_v": 32, "breaking_capacity_a": 2000, "distance_from_source_m": 0.1}`),
			[]finding{{CheckFuseInterrupt, "lamp", Fail}}, 1129},
		// The jam adds 6 − 1.2 = 4.8 A to the driver's 1.2 A: 6 A, three
		// times its continuous rating; the fuse sees 6 A, short of 10.5 A.
		// Safe: the driver states a 2 A current limit.
		{"jammed gear motor", gear(""), gear(`, "current_limit_a": 2`),
			[]finding{{CheckMotorStall, "gear", Warn}}, 6},
		// 8 A over 3.27 A; the 10 A fuse is over 1.5 × 3.27 = 4.9 A.
		{"thin wire in a hot box", hotBox(`"gauge": "18AWG", "insulation_c": 60`), hotBox(`"gauge": "16AWG", "insulation_c": 105`),
			[]finding{{CheckWireAmpacity, "fan", Fail}, {CheckFuseRating, "fan", Fail}}, 8},
	} {
		t.Run(b.name, func(t *testing.T) {
			rep := reviewWith(t, b.hazard, DefaultLimits(), nil)
			var got []finding
			for _, c := range rep.Checks {
				if c.Status != Pass {
					got = append(got, finding{c.Check, c.Node, c.Status})
				}
			}
			if !slices.Equal(got, b.want) || rep.Status == Pass {
				t.Errorf("%s: findings %v, want %v", rep.Status, got, b.want)
			}
			if c, _ := findCheck(rep, b.want[0].check, b.want[0].node); c.Value == nil || !(abs(*c.Value-b.value) <= 0.01*b.value) {
				t.Errorf("%s on %s: value %s, want about %g (%s)", c.Check, c.Node, show(c.Value), b.value, c.Message)
			}
			safe := reviewWith(t, b.safe, DefaultLimits(), nil)
			if safe.Status != Pass {
				for _, c := range safe.Checks {
					if c.Status != Pass {
						t.Errorf("safe build: %s on %s %s: %s", c.Check, c.Node, c.Status, c.Message)
					}
				}
			}
		})
	}
}

func abs(x float64) float64 { return max(x, -x) }

// oldLimits is the seeded set as stored before the fault checks: the
// first three fuse families, without their fault figures, and no faults.
func oldLimits() Limits {
	l := DefaultLimits()
	l.Fuses.Families = l.Fuses.Families[:3]
	for i := range l.Fuses.Families {
		f := &l.Fuses.Families[i]
		f.DCVoltageV, f.BreakingCapacityA, f.BreakingCapacityMultiple, f.BreakingCapacityAC = 0, 0, 0, false
		f.FaultSource, f.Clearing = "", nil
	}
	l.Faults = FaultLimits{}
	return l
}

func TestFaultChecksUnderOlderLimits(t *testing.T) {
	old := oldLimits()
	var ve *domain.ValidationError
	if err := old.Validate(); !errors.As(err, &ve) {
		t.Fatalf("want *domain.ValidationError, got %v", err)
	}
	var got []string
	for _, p := range ve.Problems {
		got = append(got, p.Pointer)
	}
	var want []string
	for i := range 3 {
		p := familyPtr(i)
		want = append(want, p+"/breaking_capacity_a", p+"/dc_voltage_v", p+"/fault_source", p+"/clearing")
	}
	want = append(want, "/faults/unstated_limit_multiple", "/faults/table_ambient_c", "/faults/enclosed_factor")
	slices.Sort(got)
	slices.Sort(want)
	if !slices.Equal(got, want) {
		t.Errorf("missing values:\n got %v\nwant %v", got, want)
	}

	ru, err := Prepare(old, 3)
	if err != nil {
		t.Fatal(err)
	}
	notRun := []string{CheckFuseInterrupt, CheckMotorStall, CheckWireTemperature}
	if !slices.Equal(ru.NotRun(), notRun) {
		t.Errorf("not run: %v, want %v", ru.NotRun(), notRun)
	}
	// Every hazard of the fault checks in one build: a glass fuse on a 46 V
	// pack, a blade fuse on it too, a jammed motor, a thin wire in a hot box.
	js := `{"format": 1, "name": "all at once", "ambient_c": 55, "nodes": [
		{"id": "pack", "type": "battery", "chemistry": "liion", "series": 11, "parallel": 2, "cell_capacity_mah": 2500},
		{"id": "panel", "type": "load", "current_a": 0.5, "feed": {"from": "pack", "wire": {"gauge": "18AWG", "length_m": 0.5},
		 "fuse": {"rating_a": 1, "family": "glass-5x20", "distance_from_source_m": 0.1}}},
		{"id": "drv", "type": "driver", "max_input_v": 60, "continuous_a": 2, "feed": {"from": "pack",
		 "wire": {"gauge": "18AWG", "length_m": 0.5, "insulation_c": 60, "enclosed": true},
		 "fuse": {"rating_a": 3, "family": "blade", "distance_from_source_m": 0.1}}},
		{"id": "m", "type": "motor", "rated_v": 46, "stall_a": 6, "running_a": 1, "feed": {"from": "drv", "wire": {"gauge": "18AWG", "length_m": 0.3}}}]}`
	d, err := domain.DecodeDesign([]byte(js))
	if err != nil {
		t.Fatal(err)
	}
	rep, err := ru.Review(mustValidate(t, d), nil)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(rep.NotRun, notRun) {
		t.Errorf("report not_run %v", rep.NotRun)
	}
	for _, c := range rep.Checks {
		if slices.Contains(notRun, c.Check) {
			t.Errorf("%s ran under limits that predate it: %+v", c.Check, c)
		}
	}
	if !slices.ContainsFunc(rep.Cautions, func(c string) bool {
		return strings.Contains(c, "Limits v3") && strings.Contains(c, "fuse.interrupt, motor.stall, wire.temperature")
	}) {
		t.Errorf("no caution names the checks not run: %q", rep.Cautions)
	}
	// fuse.rating checks the voltage rating here, from DC ratings only: the
	// blade's 32 V DC is below the 46.2 V pack; the glass family's 250 V AC
	// does not stand in.
	if c, _ := findCheck(rep, CheckFuseRating, "drv"); c.Status != Fail || !strings.Contains(c.Message, "rated 32.0 V DC, below the 46.2 V") {
		t.Errorf("blade fuse on 46 V: %+v", c)
	}
	if c, _ := findCheck(rep, CheckFuseRating, "panel"); c.Status != Pass || strings.Contains(c.Message, "250") {
		t.Errorf("glass fuse on 46 V: %+v", c)
	}
	// And the ampacity is the table's, not derated: 18 AWG at 60 °C, 10 A.
	if c, _ := findCheck(rep, CheckWireAmpacity, "drv"); !nearPtr(c.Limit, 10) {
		t.Errorf("ampacity under limits without wire.temperature: %s", show(c.Limit))
	}
}

// A stored set gains the fault figures from the defaults, keeping what
// staff set; a family the defaults lack gets the cautious figures.
func TestWithNewDefaultsFillsFaultFigures(t *testing.T) {
	l := oldLimits()
	l.Fuses.Families[0].FaultSource = "the space's own test of its blades"
	l.Fuses.Families[0].BreakingCapacityA = 500
	l.Fuses.Families[0].DCVoltageV = 24
	l.Fuses.Families = append(l.Fuses.Families, l.Fuses.Families[1])
	l.Fuses.Families[3].Name = "ptc-resettable"
	l.Faults.EnclosedFactor = Sourced{0.7, "the space's own rule"}

	filled, added := l.WithNewDefaults()
	if want := []string{CheckFuseInterrupt, CheckMotorStall, CheckWireTemperature}; !slices.Equal(added, want) {
		t.Errorf("added for %v, want %v", added, want)
	}
	if err := filled.Validate(); err != nil {
		t.Fatalf("filled set does not validate: %v", err)
	}
	blade, mini, glass, ptc := filled.Fuses.Families[0], filled.Fuses.Families[1], filled.Fuses.Families[2], filled.Fuses.Families[3]
	if blade.BreakingCapacityA != 500 || blade.DCVoltageV != 24 || blade.FaultSource != "the space's own test of its blades" {
		t.Errorf("staff blade figures not kept: %+v", blade)
	}
	if g, ok := blade.Gate("fast"); !ok || g.Multiple != 2 {
		t.Errorf("blade gate not filled from the defaults: %+v", blade.Clearing)
	}
	if mini.BreakingCapacityA != 1000 || mini.DCVoltageV != 32 || glass.DCVoltageV != 0 || !glass.BreakingCapacityAC {
		t.Errorf("default figures: mini %+v glass %+v", mini, glass)
	}
	if ptc.BreakingCapacityFor(1) != 35 || ptc.DCVoltageV != 0 || !ptc.BreakingCapacityAC || !strings.Contains(ptc.FaultSource, "weakest") {
		t.Errorf("cautious figures for a family the defaults lack: %+v", ptc)
	}
	if g, ok := ptc.Gate("slow"); !ok || g.Multiple != 10 {
		t.Errorf("cautious gate: %+v", ptc.Clearing)
	}
	if filled.Faults.EnclosedFactor.Value != 0.7 || filled.Faults.TableAmbientC.Value != 30 {
		t.Errorf("faults: %+v", filled.Faults)
	}
	// The set itself is left as it was.
	if l.Fuses.Families[1].FaultSource != "" || l.Faults.TableAmbientC.Source != "" {
		t.Error("WithNewDefaults changed the set it was given")
	}
	if again, more := filled.WithNewDefaults(); more != nil || again.Fuses.Families[0].BreakingCapacityA != 500 {
		t.Errorf("a complete set gained %v", more)
	}
}
