package review

import "testing"

// TestSeverityOrdersStatuses: pass, warn, fail, then out_of_scope, which is
// never taken as passed (DESIGN.md section 7, scope.mains); anything else is below
// them all.
func TestSeverityOrdersStatuses(t *testing.T) {
	order := []Status{"unknown", Pass, Warn, Fail, OutOfScope}
	for i := 1; i < len(order); i++ {
		if lo, hi := order[i-1], order[i]; lo.Severity() >= hi.Severity() {
			t.Errorf("%q has severity %d, not below %q's %d", lo, lo.Severity(), hi, hi.Severity())
		}
	}
}
