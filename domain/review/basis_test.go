package review

import (
	"strings"
	"testing"
)

func TestCite(t *testing.T) {
	for _, c := range []struct{ source, want string }{
		{"33 CFR 183.455: at most 150 % of the protected conductor's ampacity", "33 CFR 183.455"},
		{"common practice: run a part at no more than 80 % of its rating", "common practice"},
		{"33 CFR 183.425 Table 5 (30 °C ambient); values from memory except two cells", "33 CFR 183.425 Table 5 (30 °C ambient), partly from memory"},
		{"marine DC wiring practice: 10 % (common practice; from memory)", "marine DC wiring practice, partly from memory"},
		{"a datasheet value (from memory); details", "a datasheet value (from memory)"},
		{"IEC 60228 class 5", "IEC 60228 class 5"},
		{"  spaced out  : rest", "spaced out"},
	} {
		if got := cite(c.source); got != c.want {
			t.Errorf("cite(%q) = %q, want %q", c.source, got, c.want)
		}
	}
	if got := cites("33 CFR 183.455: a", "33 CFR 183.455: b"); got != "33 CFR 183.455" {
		t.Errorf("two sources citing the same: %q", got)
	}
	if got := cites("common practice: a", "33 CFR 183.455: b"); got != "common practice; 33 CFR 183.455" {
		t.Errorf("two different sources: %q", got)
	}
}

// TestRulesNameRuleAndSource checks the seeded rules against the sources
// they must cite, and keeps each basis short enough to read at a glance.
func TestRulesNameRuleAndSource(t *testing.T) {
	l := DefaultLimits()
	rules := newRules(l)
	want := map[string][]string{
		CheckWireAmpacity:      {"33 CFR 183.425 Table 5", "80 %", "common practice"},
		CheckWireDrop:          {"IEC 60028", "10 %", "3 %", "marine DC wiring practice"},
		CheckFuseMissing:       {"33 CFR 183.455"},
		CheckFuseRating:        {"1.5 ×", "33 CFR 183.455", "1.25 ×", "common practice"},
		CheckFusePlacement:     {"0.178 m", "1.016 m", "33 CFR 183.455"},
		CheckDriverCurrent:     {"80 %", "common practice"},
		CheckRegulatorThermal:  {"25 °C", "common practice"},
		CheckConnectorRating:   {"80 %"},
		CheckScopeMains:        {"50 V DC", "33 CFR 183.455"},
		CheckRegulatorHeat:     {"1.50 W", "P_out·(1/η − 1)", "V_in·I_q", "common practice, from memory"},
		CheckBatteryProtection: {"over- and under-voltage", "over-current trip"},
		CheckConnectorPolarity: {"reverse-polarity protection", "brushed motors"},
		CheckRailBackfeed:      {"clamp", "battery"},
		CheckFuseInterrupt:     {"V_full / (R_internal + R_wire)", "10 ×", "breaking capacity", "DC voltage rating"},
		CheckMotorStall:        {"stall_a × V_high / rated_v", "current_limit_a", "peak_a", "continuous_a"},
		CheckWireTemperature:   {"30 °C", "33 CFR 183.425 Table 5", "√((T_ins − T_amb) / (T_ins − 30))", "NFPA 70 310.15(B)", "0.8"},
	}
	for _, check := range []string{CheckVoltageRange, CheckRegulatorHeadroom, CheckRegulatorCurrent, CheckRegulatorThermal,
		CheckDriverVoltage, CheckDriverCurrent, CheckSourceCurrent, CheckSourceRuntime, CheckWireAmpacity, CheckWireDrop,
		CheckFuseMissing, CheckFuseRating, CheckFusePlacement, CheckConnectorRating, CheckScopeMains,
		CheckRegulatorHeat, CheckBatteryProtection, CheckConnectorPolarity, CheckRailBackfeed,
		CheckFuseInterrupt, CheckMotorStall, CheckWireTemperature} {
		r, ok := rules[check]
		if !ok || r.Basis == "" || r.Source == "" || len(r.Basis) > 400 {
			t.Errorf("rule of %s: %+v", check, r)
		}
		for _, w := range want[check] {
			if !strings.Contains(r.Basis, w) {
				t.Errorf("basis of %s does not say %q: %q", check, w, r.Basis)
			}
		}
	}
	if len(rules) != 22 {
		t.Errorf("%d rules, want one for each of the 22 checks", len(rules))
	}
	// The values come from the limits, not from the code.
	l.Policy.UtilisationPct = Sourced{70, "the space's own rule: 70 %"}
	if got := newRules(l)[CheckDriverCurrent].Basis; !strings.Contains(got, "70 %") || !strings.Contains(got, "the space's own rule") {
		t.Errorf("rating basis with a 70 %% policy: %q", got)
	}
}
