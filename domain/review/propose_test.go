package review

import (
	"strings"
	"testing"

	"wattshelf/domain"
)

// These designs are made up for the tests and are not demo data. Each
// fails or warns for one reason, and its remedy is worked by hand below
// from the rule the check cites. Conventions as in checks_test.go:
// ambient 20 °C (no temperature correction), copper 1/58 Ω·mm²/m (IEC
// 60028), AWG areas from the ASTM B258 diameter d = 0.127 mm × 92^((36 −
// n)/39), ampacities from 33 CFR 183.425 Table 5 at 105 °C, seeded limits
// (utilisation 80 %, fuse 1.25 × running and at most 1.5 × ampacity,
// within 178 mm of the source).

func proposeDoc(t *testing.T, js string, comps map[int64]domain.Component) Proposal {
	t.Helper()
	d, err := domain.DecodeDesign([]byte(js))
	if err != nil {
		t.Fatalf("decode: %v\n%s", err, js)
	}
	rules, err := Prepare(DefaultLimits(), 1)
	if err != nil {
		t.Fatal(err)
	}
	prop, err := rules.Propose(mustValidate(t, d), comps)
	if err != nil {
		t.Fatalf("propose: %v\n%s", err, js)
	}
	return prop
}

// wantRemedy is a finding and its first remedy: words its change must
// say and the patch it must be, as "op path value" lines.
type wantRemedy struct {
	check, node string
	status      Status
	says        []string
	patch       []string
}

func patchLines(ops []PatchOp) []string {
	out := make([]string, len(ops))
	for i, op := range ops {
		out[i] = strings.TrimSpace(op.Op + " " + op.Path + " " + string(op.Value))
	}
	return out
}

func checkRemedy(t *testing.T, prop Proposal, w wantRemedy) Remedy {
	t.Helper()
	c, ok := findCheck(prop.Report, w.check, w.node)
	if !ok {
		t.Fatalf("no %s check on %s", w.check, w.node)
	}
	if c.Status != w.status {
		t.Fatalf("%s on %s is %s, want %s: %s", w.check, w.node, c.Status, w.status, c.Message)
	}
	if len(c.Remedies) == 0 {
		t.Fatalf("%s on %s has no remedy: %s", w.check, w.node, c.NoRemedy)
	}
	r := c.Remedies[0]
	for _, s := range w.says {
		if !strings.Contains(r.Change, s) {
			t.Errorf("%s on %s: the remedy %q does not say %q", w.check, w.node, r.Change, s)
		}
	}
	if got := patchLines(r.Patch); strings.Join(got, "\n") != strings.Join(w.patch, "\n") {
		t.Errorf("%s on %s: patch\n%s\nwant\n%s", w.check, w.node, strings.Join(got, "\n"), strings.Join(w.patch, "\n"))
	}
	return r
}

// noFailLeft checks that the proposed design exists and its review has no
// fail, and that the proposal's status is that review's.
func noFailLeft(t *testing.T, prop Proposal) {
	t.Helper()
	if prop.Proposed == nil {
		t.Fatal("no proposed design")
	}
	rep, err := Review(*prop.Proposed, DefaultLimits(), 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Status != prop.ProposedStatus || rep.Status == Fail || rep.Status == OutOfScope {
		t.Errorf("proposed design reviews %s (proposal says %s): %+v", rep.Status, prop.ProposedStatus, failing(rep))
	}
}

func failing(rep Report) []string {
	var out []string
	for _, c := range rep.Checks {
		if c.Status != Pass {
			out = append(out, c.Check+" "+c.Node+": "+c.Message)
		}
	}
	return out
}

// fusedFeed is a feed from the bench supply or pack with a fuse that
// passes its own checks for the load it carries.
func fusedFeed(from, gauge string, length, fuseA float64) string {
	return feedJS(from, gauge, length, `, "fuse": {"rating_a": `+num(fuseA)+`, "family": "blade", "distance_from_source_m": 0.1}`)
}

func TestProposeWire(t *testing.T) {
	// Ampacity: 18 A on 18AWG rated 20 A (Table 5, 105 °C) is over 80 %
	// (16 A): warn. 16AWG is rated 25 A, and 80 % of it is 20 A ≥ 18 A.
	// 16AWG: d = 0.127 × 92^(20/39) = 1.2908 mm, area π/4 × d² = 1.3087 mm²;
	// 0.5 m of it is 2 × 0.5 / 58 / 1.3087 = 0.013175 Ω, so 18 A drops
	// 0.2372 V, 1.98 % of 12 V. The 25 A blade fuse carries 1.25 × 18 =
	// 22.5 A and is at most 1.5 × 20 = 30 A: it passes as it is, and
	// protects the new wire too (25 ≤ 1.5 × 25 = 37.5 A, 33 CFR 183.455).
	ampacity := doc("", bench, `{"id": "heater", "type": "load", "current_a": 18, `+fusedFeed("bench", "18AWG", 0.5, 25)+`}`)
	prop := proposeDoc(t, ampacity, nil)
	r := checkRemedy(t, prop, wantRemedy{CheckWireAmpacity, "heater", Warn,
		[]string{"16AWG", "25.0 A ampacity", "18.0 A", "1.98 %", "25.0 A fuse protects it"},
		[]string{`add /nodes/1/feed/wire/gauge "16AWG"`}})
	if r.Part == nil || r.Part.Kind != "wire" || !near(r.Part.AtLeast["area_mm2"], 1.3087) {
		t.Errorf("wire need %+v, want area_mm2 at least 1.3087", r.Part)
	}
	noFailLeft(t, prop)

	// Drop: 2 A over 4 m of 24AWG (d = 0.127 × 92^(12/39) = 0.51054 mm,
	// 0.20471 mm²): 2 × 4 / 58 / 0.20471 = 0.67378 Ω, 1.3476 V, 11.2 % of
	// 12 V, over 10 %: fail. 23AWG (d = 0.127 × 92^(13/39) = 0.57333 mm,
	// 0.25817 mm²) is 0.53427 Ω: 1.0685 V, 8.90 %. The table lists 23AWG
	// (the small-size rule: 20 A × 0.25817 / 0.82310 = 6.27, so 6.2 A).
	drop := doc("", supplyOf(12, 3), `{"id": "strip", "type": "load", "current_a": 2, `+fusedFeed("bench", "24AWG", 4, 3)+`}`)
	prop = proposeDoc(t, drop, nil)
	checkRemedy(t, prop, wantRemedy{CheckWireDrop, "strip", Fail,
		[]string{"23AWG", "6.20 A ampacity", "8.90 %"},
		[]string{`add /nodes/1/feed/wire/gauge "23AWG"`}})
	noFailLeft(t, prop)
}

func TestProposeFuse(t *testing.T) {
	// No fuse on a NiMH 10S pack's feed: a short of the full pack draws
	// 14 V / (10 × 0.03 Ω) = 46.7 A, more than the 20 A of 18AWG: fail
	// (33 CFR 183.455). 3 A running needs 1.25 × 3 = 3.75 A, and 18AWG
	// allows up to 1.5 × 20 = 30 A: the blade series (ISO 8820-3) has 4 A,
	// rated 32 V for the 14 V circuit. Placed within 178 mm of the pack.
	missing := doc("", nimh(10, ""), `{"id": "fan", "type": "load", "current_a": 3, `+feedJS("pack", "18AWG", 1, "")+`}`)
	prop := proposeDoc(t, missing, nil)
	r := checkRemedy(t, prop, wantRemedy{CheckFuseMissing, "fan", Fail,
		[]string{"4.00 A slow blade fuse", "within 0.178 m of pack", "3.75 A", "30.0 A"},
		[]string{`add /nodes/1/feed/fuse {"rating_a":4,"speed":"slow","distance_from_source_m":0.178,"family":"blade"}`}})
	if r.Part == nil || r.Part.Kind != "fuse" || !near(r.Part.AtLeast["rating_a"], 3.75) || !near(r.Part.AtMost["rating_a"], 30) ||
		!near(r.Part.AtLeast["rating_v"], 14) {
		t.Errorf("fuse need %+v, want 3.75–30 A, at least 14 V", r.Part)
	}
	noFailLeft(t, prop)

	// Too big: a 20 A fuse on 22AWG, rated by the small-size rule 20 A ×
	// 0.32552 / 0.82310 = 7.9 A (d = 0.127 × 92^(14/39) = 0.64378 mm): at
	// most 1.5 × 7.9 = 11.85 A (printed 11.9): fail. The smallest blade
	// rating carrying 1.25 × 2 = 2.5 A is 3 A.
	big := doc("", bench, `{"id": "radio", "type": "load", "current_a": 2, `+fusedFeed("bench", "22AWG", 0.5, 20)+`}`)
	prop = proposeDoc(t, big, nil)
	checkRemedy(t, prop, wantRemedy{CheckFuseRating, "radio", Fail,
		[]string{"3.00 A slow blade fuse", "instead of the 20.0 A one", "2.50 A", "11.9 A"},
		[]string{`add /nodes/1/feed/fuse/rating_a 3`}})
	noFailLeft(t, prop)

	// A fast 5 A fuse before a motor whose stall is 10 A at 12 V: the
	// surge at the 12 V supply is 10 × 12/12 = 10 A, above 5 A: warn. 5 A
	// still lies between 1.25 × 2 = 2.5 A and 1.5 × 25 = 37.5 A (16AWG), so
	// the remedy keeps it and makes it slow (time-delay).
	surge := doc("", bench, `{"id": "pump", "type": "motor", "rated_v": 12, "running_a": 2, "stall_a": 10, "min_v": 6, "max_v": 14, `+
		feedJS("bench", "16AWG", 0.5, `, "fuse": {"rating_a": 5, "speed": "fast", "family": "blade", "distance_from_source_m": 0.1}`)+`}`)
	prop = proposeDoc(t, surge, nil)
	checkRemedy(t, prop, wantRemedy{CheckFuseRating, "pump", Warn,
		[]string{"5.00 A slow blade fuse", "10.0 A motor surge"},
		[]string{`add /nodes/1/feed/fuse/rating_a 5`, `add /nodes/1/feed/fuse/speed "slow"`}})
	noFailLeft(t, prop)

	// Too far: 0.4 m from the source, beyond 178 mm (33 CFR 183.455). The
	// first remedy moves it; the second sheaths the run (1,016 mm allowed).
	far := doc("", bench, `{"id": "lamp", "type": "load", "current_a": 2, `+
		feedJS("bench", "18AWG", 1, `, "fuse": {"rating_a": 3, "family": "blade", "distance_from_source_m": 0.4}`)+`}`)
	prop = proposeDoc(t, far, nil)
	checkRemedy(t, prop, wantRemedy{CheckFusePlacement, "lamp", Warn,
		[]string{"within 0.178 m of bench"},
		[]string{`add /nodes/1/feed/fuse/distance_from_source_m 0.178`}})
	c, _ := findCheck(prop.Report, CheckFusePlacement, "lamp")
	if len(c.Remedies) != 2 || patchLines(c.Remedies[1].Patch)[0] != `add /nodes/1/feed/fuse/sheathed true` {
		t.Errorf("want the sheath as the second remedy, have %+v", c.Remedies)
	}
}

func TestProposeRegulator(t *testing.T) {
	// A linear 5 V regulator (dropout 2 V, θJA 50 °C/W) from 12 V feeding
	// 1 A: it sheds (12 − 5) × 1 = 7 W, its junction 20 + 7 × 50 = 370 °C,
	// past the 125 °C limit: fail. A buck at the limits' 85 % sheds
	// 5 × 1 × (1/0.85 − 1) = 0.882 W. The other remedy: a heatsink for a
	// junction under 125 − 25 = 100 °C, θJA < (100 − 20)/7 = 11.4, so
	// 11 °C/W, 20 + 7 × 11 = 97 °C.
	hot := doc("", bench,
		`{"id": "reg", "type": "regulator", "topology": "linear", "output_v": 5, "max_output_a": 1.5, "dropout_v": 2, "theta_ja_c_per_w": 50, `+
			feedJS("bench", "1mm2", 0.29, `, "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.1}`)+`}`,
		`{"id": "board", "type": "load", "current_a": 1, "min_v": 4.5, "max_v": 5.5, `+feedJS("reg", "1mm2", 0.29, "")+`}`)
	prop := proposeDoc(t, hot, nil)
	r := checkRemedy(t, prop, wantRemedy{CheckRegulatorThermal, "reg", Fail,
		[]string{"buck converter", "0.882 W", "7.00 W", "370 °C"},
		[]string{`remove /nodes/1/dropout_v`, `remove /nodes/1/theta_ja_c_per_w`, `add /nodes/1/topology "buck"`}})
	if r.Part == nil || r.Part.Topology != "buck" || r.Part.AtLeast["output_v"] != 5 || r.Part.AtMost["output_v"] != 5 {
		t.Errorf("regulator need %+v", r.Part)
	}
	c, _ := findCheck(prop.Report, CheckRegulatorThermal, "reg")
	if len(c.Remedies) < 2 || !strings.Contains(c.Remedies[1].Change, "11.0 °C/W") || !strings.Contains(c.Remedies[1].Change, "97.0 °C") {
		t.Errorf("want a heatsink of 11 °C/W (97 °C) second, have %+v", c.Remedies)
	}
	noFailLeft(t, prop)

	// Current: 1 A from a regulator rated 1.1 A is over 80 % (0.88 A): warn.
	// It needs at least 1 / 0.8 = 1.25 A, said in two digits: 1.3 A.
	// (A buck, so no heat finding gets in the way.)
	busy := doc("", bench,
		`{"id": "reg", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 1.1, `+
			feedJS("bench", "1mm2", 0.29, `, "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.1}`)+`}`,
		`{"id": "board", "type": "load", "current_a": 1, "min_v": 4.5, "max_v": 5.5, `+feedJS("reg", "1mm2", 0.29, "")+`}`)
	prop = proposeDoc(t, busy, nil)
	checkRemedy(t, prop, wantRemedy{CheckRegulatorCurrent, "reg", Warn,
		[]string{"at least 1.30 A"},
		[]string{`add /nodes/1/max_output_a 1.3`}})
	noFailLeft(t, prop)

	// Headroom: the same linear regulator (dropout 2 V) from NiMH 6S,
	// cutoff 6 × 1.0 = 6 V; its 0.1 A draw drops 0.001 V on 0.01 Ω, so its
	// input falls to 5.999 V, below 5 + 2 = 7 V: warn. A low-dropout part
	// needs dropout_v ≤ 5.999 − 5 = 0.999 V: 0.99 V in two digits.
	short := doc("", nimh(6, ""),
		`{"id": "reg", "type": "regulator", "topology": "linear", "output_v": 5, "max_output_a": 1.5, "dropout_v": 2, "theta_ja_c_per_w": 50, `+
			feedJS("pack", "1mm2", 0.29, `, "fuse": {"rating_a": 1, "family": "blade", "distance_from_source_m": 0.1}`)+`}`,
		`{"id": "board", "type": "load", "current_a": 0.1, "min_v": 3, "max_v": 5.5, `+feedJS("reg", "1mm2", 0.29, "")+`}`)
	prop = proposeDoc(t, short, nil)
	checkRemedy(t, prop, wantRemedy{CheckRegulatorHeadroom, "reg", Warn,
		[]string{"low-dropout", "at most 0.99 V", "6.00 V"},
		[]string{`add /nodes/1/dropout_v 0.99`}})
	noFailLeft(t, prop)
}

func TestProposeDriver(t *testing.T) {
	// A driver rated 2 A continuous and 4 A peak, fed 12 V, runs a motor of
	// 2 A with a 6 A stall at 12 V (surge 6 × 12/12 = 6 A). 6 A > 4 A:
	// fail; 2 A > 0.8 × 2 A: over the threshold too. It needs 2 / 0.8 =
	// 2.5 A continuous and 6 / 0.8 = 7.5 A peak.
	weak := doc("", supplyOf(12, 3),
		`{"id": "drv", "type": "driver", "max_input_v": 24, "continuous_a": 2, "peak_a": 4, `+fusedFeed("bench", "18AWG", 0.3, 3)+`}`,
		`{"id": "wheel", "type": "motor", "rated_v": 12, "running_a": 2, "stall_a": 6, "min_v": 6, "max_v": 14, `+feedJS("drv", "18AWG", 0.3, "")+`}`)
	prop := proposeDoc(t, weak, nil)
	r := checkRemedy(t, prop, wantRemedy{CheckDriverCurrent, "drv", Fail,
		[]string{"2.50 A continuously", "7.50 A peak"},
		[]string{`add /nodes/1/continuous_a 2.5`, `add /nodes/1/peak_a 7.5`}})
	if r.Part == nil || r.Part.Kind != "driver" || r.Part.AtLeast["continuous_a"] != 2.5 || r.Part.AtLeast["peak_a"] != 7.5 ||
		r.Part.AtLeast["max_input_v"] != 24 {
		t.Errorf("driver need %+v", r.Part)
	}

	// Voltage: 12 V on a driver rated 14 V is over 80 % (11.2 V): warn. It
	// needs 12 / 0.8 = 15 V.
	near := doc("", supplyOf(12, 3),
		`{"id": "drv", "type": "driver", "max_input_v": 14, "continuous_a": 5, `+fusedFeed("bench", "18AWG", 0.3, 3)+`}`,
		`{"id": "wheel", "type": "motor", "rated_v": 12, "running_a": 1, "stall_a": 2, "min_v": 6, "max_v": 14, `+feedJS("drv", "18AWG", 0.3, "")+`}`)
	prop = proposeDoc(t, near, nil)
	checkRemedy(t, prop, wantRemedy{CheckDriverVoltage, "drv", Warn,
		[]string{"at least 15.0 V"},
		[]string{`add /nodes/1/max_input_v 15`}})
	noFailLeft(t, prop)
}

func TestProposeConnector(t *testing.T) {
	// 2.3 A through a 2 mm wire-to-board pair rated 2 A: fail. The stored
	// families by current: jst-ph 2 A, barrel 2.5 A (80 %: 2 A, short),
	// pin header 3 A (stores no voltage rating, so it cannot be judged),
	// jst-xh 3 A and 250 V: 80 % is 2.4 A ≥ 2.3 A and 200 V ≥ 12 V.
	js := doc("", supplyOf(12, 3),
		`{"id": "amp", "type": "load", "current_a": 2.3, `+
			feedJS("bench", "18AWG", 0.3, `, "fuse": {"rating_a": 3, "family": "blade", "distance_from_source_m": 0.1}, "connectors": [{"family": "jst-ph-2mm"}]`)+`}`)
	prop := proposeDoc(t, js, nil)
	c, ok := findCheck(prop.Report, CheckConnectorRating, "amp")
	if !ok || c.Status != Fail || len(c.Remedies) == 0 {
		t.Fatalf("connector check %+v", c)
	}
	r := c.Remedies[0]
	if got := patchLines(r.Patch); len(got) != 1 || got[0] != `add /nodes/1/feed/connectors/0 {"family":"jst-xh-2.5mm"}` {
		t.Errorf("patch %v", got)
	}
	// It needs 2.3 / 0.8 = 2.875 A (2.9 A in two digits) and 12 / 0.8 = 15 V.
	if r.Part == nil || r.Part.Kind != "connector" || r.Part.AtLeast["rating_a"] != 2.9 || r.Part.AtLeast["rating_v"] != 15 {
		t.Errorf("connector need %+v", r.Part)
	}
	noFailLeft(t, prop)
}

func TestProposePackVoltage(t *testing.T) {
	// A Li-ion 4S pack is 4 × 4.2 = 16.8 V full, above the pump's 15 V
	// max_v: fail. The pump's 1 A drops 0.01 V on 0.01 Ω, so it needs the
	// pack at 7 + 0.01 = 7.01 V at cutoff. Li-ion (3.0–4.2 V a cell): at
	// least ⌈7.01 / 3.0⌉ = 3 cells, at most ⌊15 / 4.2⌋ = 3: 3 cells,
	// 9.0–12.6 V. Of the other stored chemistries (cutoff–full a cell,
	// common practice and from memory as the limits say), NiMH 1.0–1.4 V
	// gives ⌈7.01⌉ = 8 to ⌊10.7⌋ = 10 cells, and its default 2 C × 2 Ah =
	// 4 A carries the stall surge 3 × 11.2/12 = 2.8 A. LiFePO4 (3 to 4
	// cells) is not offered: its default 1 C × 2 Ah = 2 A is below the
	// surge 3 × 10.8/12 = 2.7 A, so the source check would warn.
	js := doc("", `{"id": "pack", "type": "battery", "chemistry": "liion", "series": 4, "parallel": 1, "cell_capacity_mah": 2000, "max_discharge_a": 10}`,
		`{"id": "pump", "type": "motor", "rated_v": 12, "running_a": 1, "stall_a": 3, "min_v": 7, "max_v": 15, `+
			feedJS("pack", "1mm2", 0.29, `, "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.1}`)+`}`)
	prop := proposeDoc(t, js, nil)
	checkRemedy(t, prop, wantRemedy{CheckVoltageRange, "pump", Fail,
		[]string{"Use 3 liion cells in series in pack instead of 4", "9.00–12.6 V", "any of 3–3"},
		[]string{`add /nodes/0/series 3`}})
	c, _ := findCheck(prop.Report, CheckVoltageRange, "pump")
	var others []string
	for _, r := range c.Remedies[1:] {
		others = append(others, r.Change)
	}
	all := strings.Join(others, "\n")
	for _, want := range []string{"8 nimh cells", "any of 8–10"} {
		if !strings.Contains(all, want) {
			t.Errorf("other chemistries do not say %q:\n%s", want, all)
		}
	}
	if strings.Contains(all, "lifepo4") {
		t.Errorf("LiFePO4 offered though its discharge limit is below the surge:\n%s", all)
	}
	noFailLeft(t, prop)
}

func TestProposeSupplyVoltage(t *testing.T) {
	// A 24 V supply feeds a lamp rated 9–15 V: 24 > 15, fail. The lamp's
	// 1 A drops 0.01 V on 0.01 Ω, so the supply must give 9.01 V or more,
	// and 15 V at most (no load, no drop at the high end).
	js := doc("", supplyOf(24, 3), `{"id": "lamp", "type": "load", "current_a": 1, "min_v": 9, "max_v": 15, `+
		feedJS("bench", "1mm2", 0.29, `, "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.1}`)+`}`)
	prop := proposeDoc(t, js, nil)
	checkRemedy(t, prop, wantRemedy{CheckVoltageRange, "lamp", Fail,
		[]string{"15.0 V supply", "from 9.01 V to 15.0 V"},
		[]string{`add /nodes/0/output_v 15`}})
	noFailLeft(t, prop)
}

func TestProposeRuntime(t *testing.T) {
	// LiFePO4 4S1P of 3000 mAh at 1 A lasts 3 Ah / 1 A = 3 h, short of 6 h:
	// warn. Runtime grows with the strings in parallel: ⌈1 × 6 / 3⌉ = 2.
	lfp := doc(`, "target_runtime_h": 6`, `{"id": "pack", "type": "battery", "chemistry": "lifepo4", "series": 4, "parallel": 1, "cell_capacity_mah": 3000}`,
		`{"id": "light", "type": "load", "current_a": 1, `+fusedFeed("pack", "18AWG", 0.3, 2)+`}`)
	prop := proposeDoc(t, lfp, nil)
	checkRemedy(t, prop, wantRemedy{CheckSourceRuntime, "pack", Warn,
		[]string{"2 strings", "6.00 Ah instead of 3.00 Ah", "about 6.00 h"},
		[]string{`add /nodes/0/parallel 2`}})
	noFailLeft(t, prop)

	// Lead-acid 6S of 7 Ah at 1 A, by Peukert (k 1.2 over 20 h, as stored):
	// 20 × (7 / (1 × 20))^1.2 = 20 × 0.35^1.2 = 5.674 h, short of 10 h.
	// Runtime goes as capacity^k: ⌈(10 / 5.674)^(1/1.2)⌉ = ⌈1.604⌉ = 2
	// strings, 5.674 × 2^1.2 = 13.0 h.
	lead := doc(`, "target_runtime_h": 10`, `{"id": "pack", "type": "battery", "chemistry": "leadacid", "series": 6, "parallel": 1, "cell_capacity_mah": 7000}`,
		`{"id": "light", "type": "load", "current_a": 1, `+fusedFeed("pack", "18AWG", 0.3, 2)+`}`)
	prop = proposeDoc(t, lead, nil)
	checkRemedy(t, prop, wantRemedy{CheckSourceRuntime, "pack", Warn,
		[]string{"2 strings", "14.0 Ah instead of 7.00 Ah", "about 13.0 h"},
		[]string{`add /nodes/0/parallel 2`}})
	noFailLeft(t, prop)
}

// A node that names a shelf part and needs a better one: the patch takes
// the part's values into the document and drops its component_id, so the
// proposed design no longer claims the shelf part is rated so.
func TestProposeReplacesAShelfPart(t *testing.T) {
	comps := map[int64]domain.Component{7: {ID: 7, ComponentInput: domain.ComponentInput{Name: "salvaged driver", Kind: "driver",
		Electrical: domain.Electrical{Ratings: domain.Ratings{MaxInputV: f64(24), ContinuousA: f64(2), PeakA: f64(4)}}}}}
	js := doc("", supplyOf(12, 3),
		`{"id": "drv", "type": "driver", "component_id": 7, `+fusedFeed("bench", "18AWG", 0.3, 3)+`}`,
		`{"id": "wheel", "type": "motor", "rated_v": 12, "running_a": 2, "stall_a": 6, "min_v": 6, "max_v": 14, `+feedJS("drv", "18AWG", 0.3, "")+`}`)
	prop := proposeDoc(t, js, comps)
	checkRemedy(t, prop, wantRemedy{CheckDriverCurrent, "drv", Fail, []string{"2.50 A continuously"},
		[]string{`remove /nodes/1/component_id`, `add /nodes/1/max_input_v 24`, `add /nodes/1/continuous_a 2.5`, `add /nodes/1/peak_a 7.5`}})
	if n := prop.Proposed.Nodes[1]; n.ComponentID != nil || n.MaxInputV == nil || *n.MaxInputV != 24 {
		t.Errorf("proposed node %+v", n)
	}
}

func TestProposeLeavesScopeAlone(t *testing.T) {
	// Mains anywhere: out of scope; findings get no remedy and say why.
	js := doc("", bench, `{"id": "lamp", "type": "load", "mains": true, "current_a": 18, `+fusedFeed("bench", "18AWG", 0.5, 25)+`}`)
	prop := proposeDoc(t, js, nil)
	if prop.Proposed != nil || prop.ProposedStatus != "" {
		t.Errorf("an out-of-scope design got a proposal: %+v", prop.Proposed)
	}
	c, _ := findCheck(prop.Report, CheckWireAmpacity, "lamp")
	if c.Status != Warn || len(c.Remedies) > 0 || !strings.Contains(c.NoRemedy, "out of scope") {
		t.Errorf("finding of an out-of-scope design: %+v", c)
	}
	// A design with nothing wrong gets no proposal.
	ok := proposeDoc(t, doc("", bench, `{"id": "lamp", "type": "load", "current_a": 1, "min_v": 10, "max_v": 13, `+fusedFeed("bench", "18AWG", 0.5, 2)+`}`), nil)
	if ok.Report.Status != Pass || ok.Proposed != nil {
		t.Errorf("a passing design: status %s, proposed %v", ok.Report.Status, ok.Proposed)
	}
}

func TestProposePartHazards(t *testing.T) {
	// Heat: a 5 V buck delivering 3 A at the limits' default 85 %
	// efficiency sheds 15 × (1/0.85 − 1) = 2.65 W, above the 1.5 W a board
	// with no heat sink sheds (the limits' value, common practice): warn.
	// It needs η ≥ 15 / (15 + 1.5) = 0.909, 91 % in two digits, which sheds
	// 15 × (1/0.91 − 1) = 1.48 W. The other remedy: a heatsink for a
	// junction under 125 − 25 = 100 °C: θJA < (100 − 20) / 2.65 = 30.2, so
	// 30 °C/W, 20 + 2.65 × 30 = 99.4 °C.
	hot := doc("", bench,
		`{"id": "buck", "type": "regulator", "topology": "buck", "output_v": 5, "max_output_a": 4, `+
			feedJS("bench", "1mm2", 0.29, `, "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.1}`)+`}`,
		`{"id": "board", "type": "load", "current_a": 3, "min_v": 4.5, "max_v": 5.5, `+feedJS("buck", "1mm2", 0.29, "")+`}`)
	prop := proposeDoc(t, hot, nil)
	checkRemedy(t, prop, wantRemedy{CheckRegulatorHeat, "buck", Warn,
		[]string{"at least 91 % efficiency", "1.48 W", "2.65 W"},
		[]string{`add /nodes/1/efficiency 0.91`}})
	c, _ := findCheck(prop.Report, CheckRegulatorHeat, "buck")
	if len(c.Remedies) < 2 || !strings.Contains(c.Remedies[1].Change, "30.0 °C/W") || !strings.Contains(c.Remedies[1].Change, "99.4 °C") {
		t.Errorf("want a 30 °C/W heatsink (99.4 °C) second, have %+v", c.Remedies)
	}
	noFailLeft(t, prop)

	// Polarity: a barrel plug, which does not fix polarity (the limits'
	// connector families), feeds a load that is not polarity-free: warn.
	// The lightest keyed family that carries 1 A within 80 % and 12 V within
	// 80 % of its rating is the 2 mm wire-to-board pair (2 A, 100 V).
	barrel := doc("", supplyOf(12, 3), `{"id": "radio", "type": "load", "current_a": 1, `+
		feedJS("bench", "18AWG", 0.3, `, "fuse": {"rating_a": 2, "family": "blade", "distance_from_source_m": 0.1}, "connectors": [{"family": "barrel-5.5x2.1mm"}]`)+`}`)
	prop = proposeDoc(t, barrel, nil)
	checkRemedy(t, prop, wantRemedy{CheckConnectorPolarity, "radio", Warn,
		[]string{"jst-ph-2mm", "mate one way only"},
		[]string{`add /nodes/1/feed/connectors/0 {"family":"jst-ph-2mm"}`}})
	noFailLeft(t, prop)

	// Energy back into a rail: a 12 V supply that does not sink current
	// feeds a driver (max_input_v 24) and its motor: warn. A clamp about
	// 10 % above the rail (1.1 × 12 = 13.2 V, two digits up: 14 V) is
	// below the driver's 24 V.
	rail := doc("", supplyOf(12, 3),
		`{"id": "drv", "type": "driver", "max_input_v": 24, "continuous_a": 5, `+fusedFeed("bench", "18AWG", 0.3, 3)+`}`,
		`{"id": "wheel", "type": "motor", "rated_v": 12, "running_a": 1, "stall_a": 2, "min_v": 6, "max_v": 14, `+feedJS("drv", "18AWG", 0.3, "")+`}`)
	prop = proposeDoc(t, rail, nil)
	checkRemedy(t, prop, wantRemedy{CheckRailBackfeed, "bench", Warn,
		[]string{"at 14.0 V", "above the rail's 12.0 V", "below the 24.0 V"},
		[]string{`add /nodes/0/clamp_v 14`}})
	noFailLeft(t, prop)

	// A Li-ion pack whose protection trips at 30 A feeds 22AWG (7.9 A by
	// the small-size rule) with no fuse: a short there burns the wire
	// before the pack cuts off: fail. The remedy fuses that feed: 1.25 × 2
	// = 2.5 A up to 1.5 × 7.9 = 11.85 A, so a 3 A blade, the same fuse the
	// missing-fuse finding gets.
	pack := doc("", `{"id": "pack", "type": "battery", "chemistry": "liion", "series": 4, "parallel": 1, "cell_capacity_mah": 2000, `+
		`"max_discharge_a": 10, "protection_cell_over_v": 4.25, "protection_cell_under_v": 2.8, "protection_trip_a": 30}`,
		`{"id": "lamp", "type": "load", "current_a": 2, "polarity_free": true, `+feedJS("pack", "22AWG", 0.3, "")+`}`)
	prop = proposeDoc(t, pack, nil)
	fuse := `add /nodes/1/feed/fuse {"rating_a":3,"speed":"slow","distance_from_source_m":0.178,"family":"blade"}`
	checkRemedy(t, prop, wantRemedy{CheckBatteryProtection, "pack", Fail,
		[]string{"3.00 A slow blade fuse", "not pack's 30.0 A trip"}, []string{fuse}})
	checkRemedy(t, prop, wantRemedy{CheckFuseMissing, "lamp", Fail, []string{"3.00 A slow blade fuse"}, []string{fuse}})
	noFailLeft(t, prop)
}

func TestProposeFaults(t *testing.T) {
	// A glass 5x20 fuse: its family states a breaking capacity for AC only
	// and no DC rating (IEC 60127-2, the limits say): warn. The supply
	// states no current limit, so a short draws 10 × its 3 A (the limits'
	// stand-in) = 30 A. A blade fuse (ISO 8820-3: 32 V DC, 1,000 A) breaks
	// it; the least blade rating carrying 1.25 × 2 = 2.5 A is 3 A, and the
	// 18AWG wire allows up to 1.5 × 20 = 30 A.
	glass := doc("", supplyOf(12, 3), `{"id": "radio", "type": "load", "current_a": 2, `+
		feedJS("bench", "18AWG", 0.3, `, "fuse": {"rating_a": 3.15, "family": "glass-5x20", "distance_from_source_m": 0.1}`)+`}`)
	prop := proposeDoc(t, glass, nil)
	checkRemedy(t, prop, wantRemedy{CheckFuseInterrupt, "radio", Warn,
		[]string{"3.00 A slow blade fuse", "32.0 V DC", "breaks 1000 A", "30.0 A a short past it could draw"},
		[]string{`add /nodes/1/feed/fuse/family "blade"`, `add /nodes/1/feed/fuse/rating_a 3`}})
	noFailLeft(t, prop)

	// A LiFePO4 pack of 4 × 50 cells: 4 × 0.03 / 50 = 0.0024 Ω inside,
	// 4 × 3.6 = 14.4 V full, so a short right at the fuse draws 14.4 /
	// 0.0024 = 6,000 A, past the 1,000 A a blade fuse breaks: fail. No
	// stored series breaks that on DC (the cartridges state AC only), so
	// no fuse is offered and the finding says why.
	big := doc("", `{"id": "pack", "type": "battery", "chemistry": "lifepo4", "series": 4, "parallel": 50, "cell_capacity_mah": 3000}`,
		`{"id": "lamp", "type": "load", "current_a": 2, "polarity_free": true, `+
			feedJS("pack", "18AWG", 0.3, `, "fuse": {"rating_a": 3, "family": "blade"}`)+`}`)
	prop = proposeDoc(t, big, nil)
	c, _ := findCheck(prop.Report, CheckFuseInterrupt, "lamp")
	if c.Status != Fail || len(c.Remedies) > 0 || !strings.Contains(c.NoRemedy, "6000 A") {
		t.Errorf("a short no stored fuse breaks: %s, remedies %v, why %q", c.Status, c.Remedies, c.NoRemedy)
	}

	// A jammed motor: stall 6 A at 12 V (6 × 12/12), running 1 A, so the
	// jam adds 5 A. The slow 3 A blade above it opens at 3.5 × 3 = 10.5 A
	// (the limits' gate), and sees 1 + 5 = 6 A: it does not. The driver
	// then passes 6 A, above its 3 A continuous rating: warn. Held to 3 A
	// (current_limit_a), it passes 3 A, and the tightest feed carries
	// 1 + 2 = 3 A of its 20 A.
	jam := doc("", supplyOf(12, 3),
		`{"id": "drv", "type": "driver", "max_input_v": 24, "continuous_a": 3, "peak_a": 8, `+fusedFeed("bench", "18AWG", 0.3, 3)+`}`,
		`{"id": "wheel", "type": "motor", "rated_v": 12, "running_a": 1, "stall_a": 6, "min_v": 6, "max_v": 14, `+feedJS("drv", "18AWG", 0.3, "")+`}`)
	prop = proposeDoc(t, jam, nil)
	checkRemedy(t, prop, wantRemedy{CheckMotorStall, "wheel", Warn,
		[]string{"3.00 A or less (current_limit_a)", "3.00 A continuous rating"},
		[]string{`add /nodes/1/current_limit_a 3`}})
	noFailLeft(t, prop)

	// Air at 95 °C around wire rated 90 °C: it can carry nothing (fail).
	// The next column of the table is 105 °C: derated by
	// √((105 − 95) / (105 − 30)) = 0.3651 (NFPA 70 310.15(B), as the check
	// says), 18AWG keeps 20 × 0.3651 = 7.30 A for its 2 A.
	warm := `{"format": 1, "name": "edge", "ambient_c": 95, "nodes": [` + supplyOf(12, 3) + `, {"id": "heater", "type": "load", ` +
		`"current_a": 2, "polarity_free": true, "feed": {"from": "bench", "wire": {"gauge": "18AWG", "length_m": 0.3, "insulation_c": 90}, ` +
		`"fuse": {"rating_a": 3, "family": "blade", "distance_from_source_m": 0.1}}}]}`
	prop = proposeDoc(t, warm, nil)
	checkRemedy(t, prop, wantRemedy{CheckWireTemperature, "heater", Fail,
		[]string{"insulation rated 105 °C", "7.30 A"},
		[]string{`add /nodes/1/feed/wire/insulation_c 105`}})
	noFailLeft(t, prop)
}
