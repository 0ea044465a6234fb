package review

import (
	"strings"
	"testing"
	"time"
)

// A limit staff change without saying why is cited as their change, and
// as a departure from the published rule it replaced; a value left alone,
// or changed with a source of its own, is cited as written.
func TestMarkEditsCitesTheStaffChange(t *testing.T) {
	before := DefaultLimits()
	after := DefaultLimits()
	after.VoltageDrop.CriticalPct.Value = 2 // from 3 %: marine DC wiring practice
	after.Policy.UtilisationPct.Value = 70
	after.Policy.UtilisationPct.Source = "the space's own rule: 70 %"
	after.MarkEdits(before, "kim", time.Date(2026, 12, 2, 20, 0, 0, 0, time.UTC))

	got := after.VoltageDrop.CriticalPct.Source
	for _, want := range []string{"staff change by kim on 2026-12-02", "was 3", "marine DC wiring practice"} {
		if !strings.Contains(got, want) {
			t.Errorf("edited source %q lacks %q", got, want)
		}
	}
	if after.Policy.UtilisationPct.Source != "the space's own rule: 70 %" {
		t.Errorf("a source staff wrote was replaced: %q", after.Policy.UtilisationPct.Source)
	}
	if after.VoltageDrop.NonCriticalPct != before.VoltageDrop.NonCriticalPct {
		t.Errorf("an unchanged limit was touched: %+v", after.VoltageDrop.NonCriticalPct)
	}
	if err := after.Validate(); err != nil {
		t.Fatal(err)
	}
	// The report cites the change and the rule it departs from.
	basis := newRules(after)[CheckWireDrop].Basis
	if !strings.Contains(basis, "2 %") || !strings.Contains(basis, "staff change by kim on 2026-12-02, was 3 under marine DC wiring practice") {
		t.Errorf("wire.drop basis: %q", basis)
	}
}
