package store_test

import (
	"context"
	"encoding/json"
	"slices"
	"strings"
	"testing"

	"wattshelf/domain/review"
	"wattshelf/domain/store/storetest"
)

// limitsBeforeFaults is the seeded limits set as stored before the fault
// checks: the first three fuse families without their fault figures, and
// no faults member.
func limitsBeforeFaults(t *testing.T) []byte {
	t.Helper()
	data, err := json.Marshal(review.DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(data, &m); err != nil {
		t.Fatal(err)
	}
	delete(m, "faults")
	fuses := m["fuses"].(map[string]any)
	families := fuses["families"].([]any)[:3]
	for _, f := range families {
		for _, k := range []string{"dc_voltage_v", "breaking_capacity_a", "breaking_capacity_multiple", "breaking_capacity_ac", "fault_source", "clearing"} {
			delete(f.(map[string]any), k)
		}
	}
	fuses["families"] = families
	out, err := json.Marshal(m)
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// A stored set that predates the fault checks is completed as a new
// version when serve starts, once, with the defaults' figures.
func TestSeedAddsTheFaultFigures(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	if _, err := st.EnsureDefaultLimits(ctx, limitsBeforeFaults(t), "defaults before the fault checks"); err != nil {
		t.Fatal(err)
	}
	for range 2 {
		if _, err := st.SeedDefaultLimits(ctx); err != nil {
			t.Fatal(err)
		}
	}
	cur, err := st.CurrentLimits(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if cur.Version != 2 || !strings.Contains(cur.Note, "fuse.interrupt, motor.stall, wire.temperature") {
		t.Fatalf("current limits v%d %q; want v2 naming the fault checks", cur.Version, cur.Note)
	}
	var l review.Limits
	if err := json.Unmarshal(cur.Body, &l); err != nil {
		t.Fatal(err)
	}
	ru, err := review.Prepare(l, cur.Version)
	if err != nil || len(ru.NotRun()) != 0 {
		t.Fatalf("v2 does not run every check: %v, %v", ru.NotRun(), err)
	}
	// The blade family gains ISO 8820-3's figures (from memory): 32 V DC, 1,000 A.
	if f := l.Fuses.Families[0]; f.Name != "blade" || f.DCVoltageV != 32 || f.BreakingCapacityA != 1000 || len(f.Clearing) != 2 {
		t.Errorf("blade after the fill: %+v", f)
	}
	v1, err := st.Limits(ctx, 1)
	if err != nil {
		t.Fatal(err)
	}
	var old review.Limits
	if err := json.Unmarshal(v1.Body, &old); err != nil {
		t.Fatal(err)
	}
	if ru, err := review.Prepare(old, 1); err != nil || !slices.Equal(ru.NotRun(), []string{"fuse.interrupt", "motor.stall", "wire.temperature"}) {
		t.Errorf("v1 stays as stored: not run %v, %v", ru.NotRun(), err)
	}
}
