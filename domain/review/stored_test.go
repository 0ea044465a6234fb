package review

import (
	"os"
	"testing"
)

// Stored reports of both formats read into today's shape.
func TestReadStored(t *testing.T) {
	old, err := os.ReadFile("testdata/format1/fume-fan.json")
	if err != nil {
		t.Fatal(err)
	}
	rep, err := ReadStored(old)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Format != 1 || rep.Status != Warn || len(rep.Checks) != 32 || rep.Counts.Warn != 9 {
		t.Errorf("format %d, status %s, %d checks, %d warn", rep.Format, rep.Status, len(rep.Checks), rep.Counts.Warn)
	}
	for _, c := range rep.Checks {
		if c.Value == nil || c.Limit == nil || rep.Rules[c.Check].Basis == "" {
			t.Errorf("format 1 check %s of %s read without its value, limit or basis", c.Check, c.Node)
		}
	}
	current, err := os.ReadFile("testdata/golden/fume-fan.json")
	if err != nil {
		t.Fatal(err)
	}
	rep, err = ReadStored(current)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Format != ReportFormat || len(rep.Rules) == 0 || len(rep.Checks) != 39 {
		t.Errorf("format %d, %d rules, %d checks", rep.Format, len(rep.Rules), len(rep.Checks))
	}
}
