package review

import (
	"errors"
	"os"
	"slices"
	"strings"
	"testing"

	"github.com/go-json-experiment/json"

	"wattshelf/domain"
)

// limitsBeforeHazards is the default limits set as this service stored it
// before the fault and part hazard checks existed: a staff database holds
// sets like it.
func limitsBeforeHazards(t *testing.T) Limits {
	t.Helper()
	raw, err := os.ReadFile("testdata/limits-before-hazards.json")
	if err != nil {
		t.Fatal(err)
	}
	var l Limits
	if err := json.Unmarshal(raw, &l); err != nil {
		t.Fatal(err)
	}
	return l
}

// neededChecks are the checks some limitsNeed serves, each once.
func neededChecks() []string {
	var checks []string
	for _, n := range limitsNeeds() {
		if !slices.Contains(checks, n.check) {
			checks = append(checks, n.check)
		}
	}
	return checks
}

func TestDefaultLimitsLackNothing(t *testing.T) {
	l := DefaultLimits()
	if missing := l.missing(); len(missing) > 0 {
		t.Errorf("the defaults lack %v", missing)
	}
	if _, added := l.WithNewDefaults(); added != nil {
		t.Errorf("the defaults would be given %v", added)
	}
}

// A set stored before the hazard checks: PUT refuses it naming what it
// lacks; a review under it runs none of those checks and says so; the
// version serve stores from it keeps its values and runs them all.
func TestLimitsStoredBeforeTheHazardChecks(t *testing.T) {
	old := limitsBeforeHazards(t)
	checks := neededChecks()
	if len(checks) == 0 {
		t.Fatal("no check declares what it needs from the limits")
	}

	missing := old.missing()
	var ve *domain.ValidationError
	if err := old.Validate(); !errors.As(err, &ve) {
		t.Fatalf("Validate of the old set: %v, want a validation error", err)
	}
	for _, ptr := range missing {
		if !slices.ContainsFunc(ve.Problems, func(p domain.FieldProblem) bool { return p.Pointer == ptr }) {
			t.Errorf("Validate does not name %s", ptr)
		}
	}
	if len(ve.Problems) != len(missing) {
		t.Errorf("Validate names %d problems for %d missing values: %v", len(ve.Problems), len(missing), ve.Problems)
	}

	ru, err := Prepare(old, 1)
	if err != nil {
		t.Fatalf("the old set cannot be used: %v", err)
	}
	if !equalSets(ru.NotRun(), checks) {
		t.Errorf("not run under the old set: %v, want %v", ru.NotRun(), checks)
	}
	rep, err := ru.Review(mustValidate(t, demoLikeDesign(t)), nil)
	if err != nil {
		t.Fatal(err)
	}
	if !equalSets(rep.NotRun, checks) {
		t.Errorf("report not_run %v, want %v", rep.NotRun, checks)
	}
	for _, c := range rep.Checks {
		if slices.Contains(checks, c.Check) {
			t.Errorf("%s ran under limits that predate it: %s", c.Check, c.Status)
		}
	}
	last := rep.Cautions[len(rep.Cautions)-1]
	for _, c := range checks {
		if !strings.Contains(last, c) {
			t.Errorf("the caution does not name %s: %q", c, last)
		}
	}

	// A staff value of the old set survives the upgrade.
	old.Policy.UtilisationPct = Sourced{70, "the space's own rule: 70 %"}
	upgraded, added := old.WithNewDefaults()
	if !equalSets(added, checks) {
		t.Errorf("added for %v, want %v", added, checks)
	}
	if err := upgraded.Validate(); err != nil {
		t.Errorf("the upgraded set does not validate: %v", err)
	}
	if upgraded.Policy.UtilisationPct.Value != 70 {
		t.Errorf("the staff's utilisation became %v", upgraded.Policy.UtilisationPct)
	}
	if again := limitsBeforeHazards(t); len(again.missing()) != len(missing) {
		t.Error("filling changed the set it was made from")
	}
	ru, err = Prepare(upgraded, 2)
	if err != nil {
		t.Fatal(err)
	}
	if len(ru.NotRun()) != 0 {
		t.Errorf("the upgraded set still skips %v", ru.NotRun())
	}
}

// demoLikeDesign is a small battery build that exercises every node type.
func demoLikeDesign(t *testing.T) domain.Design {
	t.Helper()
	var d domain.Design
	raw := `{"format":1,"name":"bench lamp","nodes":[
	 {"id":"pack","type":"battery","chemistry":"liion","series":3,"parallel":1,"cell_capacity_mah":2500},
	 {"id":"buck","type":"regulator","topology":"buck","output_v":5,"max_output_a":3,"max_input_v":28,
	  "feed":{"from":"pack","wire":{"gauge":"20AWG","length_m":0.2},"fuse":{"rating_a":5,"family":"blade"}}},
	 {"id":"lamp","type":"load","current_a":0.5,"min_v":4.5,"max_v":5.5,
	  "feed":{"from":"buck","wire":{"gauge":"24AWG","length_m":0.3}}}]}`
	if err := json.Unmarshal([]byte(raw), &d); err != nil {
		t.Fatal(err)
	}
	return d
}

func equalSets(a, b []string) bool {
	a, b = slices.Sorted(slices.Values(a)), slices.Sorted(slices.Values(b))
	return slices.Equal(a, b)
}

// mustValidate is d validated, as the service hands it to the engine.
func mustValidate(t testing.TB, d domain.Design) domain.ValidDesign {
	t.Helper()
	v, err := d.Validated()
	if err != nil {
		t.Fatal(err)
	}
	return v
}
