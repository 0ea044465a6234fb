package review

import (
	"reflect"
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

// TestBasesNameRuleAndSource checks the seeded bases against the sources
// they must cite, and keeps them short: every check of a report carries
// one, and a 30-node report has over a hundred checks.
func TestBasesNameRuleAndSource(t *testing.T) {
	l := DefaultLimits()
	b := newBases(l)
	want := map[string][]string{
		"ampacity":      {"33 CFR 183.425 Table 5", "80 %", "common practice"},
		"drop":          {"IEC 60028", "10 %", "3 %", "marine DC wiring practice"},
		"fuseMissing":   {"33 CFR 183.455"},
		"fuseRating":    {"1.5 ×", "33 CFR 183.455", "1.25 ×", "common practice"},
		"fusePlacement": {"0.178 m", "1.016 m", "33 CFR 183.455"},
		"rating":        {"80 %", "common practice"},
		"thermal":       {"25 °C", "common practice"},
		"connector":     {"80 %"},
		"scope":         {"50 V DC", "33 CFR 183.455"},
	}
	v := reflect.ValueOf(b)
	for i := range v.NumField() {
		name, text := v.Type().Field(i).Name, v.Field(i).String()
		if text == "" || len(text) > 240 {
			t.Errorf("basis %s is %d bytes: %q", name, len(text), text)
		}
		for _, w := range want[name] {
			if !strings.Contains(text, w) {
				t.Errorf("basis %s does not say %q: %q", name, w, text)
			}
		}
	}
	// The values come from the limits, not from the code.
	l.Policy.UtilisationPct = Sourced{70, "the space's own rule: 70 %"}
	if got := newBases(l).rating; !strings.Contains(got, "70 %") || !strings.Contains(got, "the space's own rule") {
		t.Errorf("rating basis with a 70 %% policy: %q", got)
	}
}
