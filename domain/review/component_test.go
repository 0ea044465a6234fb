package review

import (
	"errors"
	"strings"
	"testing"

	"wattshelf/domain"
)

func problems(t *testing.T, err error) []domain.FieldProblem {
	t.Helper()
	var ve *domain.ValidationError
	if !errors.As(err, &ve) {
		t.Fatalf("want *domain.ValidationError, got %T: %v", err, err)
	}
	return ve.Problems
}

func reviewErr(t *testing.T, js string, comps map[int64]domain.Component) error {
	t.Helper()
	d, err := domain.DecodeDesign([]byte(js))
	if err != nil {
		t.Fatal(err)
	}
	_, err = Review(d, DefaultLimits(), 1, comps)
	return err
}

// A node fills what it leaves out from its component; its own fields win.
func TestComponentFill(t *testing.T) {
	comps := map[int64]domain.Component{
		17: {ID: 17, ComponentInput: domain.ComponentInput{Kind: "motor", MainsOrigin: true, Electrical: domain.Electrical{Ratings: domain.Ratings{RatedV: f64(12), NoLoadA: f64(0.25), StallA: f64(4), MinV: f64(3), MaxV: f64(11)}}}},
	}
	// The node overrides max_v (11 → 13) and adds a duty. Running current
	// defaults to √(0.25 × 4) = 1 A (the maximum-efficiency current); the
	// surge is 4 A × 12 V/12 V = 4 A; the average 1 A × 0.5.
	js := doc("", bench, `{"id": "wheel", "type": "motor", "component_id": 17, "max_v": 13, "duty": 0.5, `+feedJS("bench", "1mm2", 0.29, "")+`}`)
	rep := reviewWith(t, js, DefaultLimits(), comps)
	n := nodeResult(t, rep, "wheel")
	if !near(n.RunA, 1) || !near(n.PeakA, 4) || !near(n.AvgA, 0.5) {
		t.Errorf("filled motor: run %g, peak %g, avg %g; want 1, 4, 0.5", n.RunA, n.PeakA, n.AvgA)
	}
	if c, _ := findCheck(rep, "voltage.range", "wheel"); c.Status != Pass || !nearPtr(c.Limit, 13) {
		t.Errorf("the node's own max_v should win: %+v", c)
	}
	if c, _ := findCheck(rep, "scope.mains", ""); c.Status != Pass || !strings.Contains(c.Message, "wheel") {
		t.Errorf("a part salvaged from mains is named, without failing the design: %+v", c)
	}

	// Unknown component: a pointer to the node's component_id.
	missing := strings.Replace(js, `"component_id": 17`, `"component_id": 18`, 1)
	ps := problems(t, reviewErr(t, missing, comps))
	if len(ps) != 1 || ps[0].Pointer != "/nodes/1/component_id" || !strings.Contains(ps[0].Detail, "not on the shelf") {
		t.Errorf("unknown component: %v", ps)
	}

	// A field neither the node nor the component gives.
	comps[17] = domain.Component{ID: 17, ComponentInput: domain.ComponentInput{Kind: "motor",
		Electrical: domain.Electrical{Ratings: domain.Ratings{RatedV: f64(12), NoLoadA: f64(0.25)}}}}
	ps = problems(t, reviewErr(t, js, comps))
	if len(ps) != 1 || ps[0].Pointer != "/nodes/1/stall_a" || !strings.Contains(ps[0].Detail, "component 17") {
		t.Errorf("incomplete after filling: %v", ps)
	}

	// A component value that contradicts the node's own.
	comps[17] = domain.Component{ID: 17, ComponentInput: domain.ComponentInput{Kind: "motor",
		Electrical: domain.Electrical{Ratings: domain.Ratings{RatedV: f64(12), NoLoadA: f64(0.25), StallA: f64(4), MinV: f64(14)}}}}
	ps = problems(t, reviewErr(t, js, comps))
	if len(ps) != 1 || ps[0].Pointer != "/nodes/1/min_v" {
		t.Errorf("contradiction after filling: %v", ps)
	}
}

// Names the limits must know: a chemistry, a fuse family, a connector
// family without a rating of its own.
func TestLimitsLookupsInTheDocument(t *testing.T) {
	js := doc("",
		`{"id": "pack", "type": "battery", "chemistry": "zinc-air", "series": 2, "parallel": 1, "cell_capacity_mah": 500}`,
		`{"id": "lamp", "type": "load", "current_a": 0.1, `+feedJS("pack", "1mm2", 0.29, `, "fuse": {"rating_a": 1, "family": "cartridge"}, "connectors": [{"family": "banana"}, {"family": "banana", "rating_a": 5}]`)+`}`)
	ps := problems(t, reviewErr(t, js, nil))
	for _, want := range []string{"/nodes/0/chemistry", "/nodes/1/feed/fuse/family", "/nodes/1/feed/connectors/0/rating_a"} {
		found := false
		for _, p := range ps {
			found = found || p.Pointer == want
		}
		if !found {
			t.Errorf("no problem at %s: %v", want, ps)
		}
	}
	if len(ps) != 3 {
		t.Errorf("want 3 problems, got %v", ps)
	}
	// Cell values that contradict the stored chemistry: a NiMH pack whose
	// cutoff is set above the stored 1.2 V nominal.
	js = doc("", nimh(4, `, "cell_cutoff_v": 1.3`), `{"id": "lamp", "type": "load", "current_a": 0.1, `+feedJS("pack", "1mm2", 0.29, "")+`}`)
	if ps := problems(t, reviewErr(t, js, nil)); len(ps) == 0 || ps[0].Pointer != "/nodes/0" || !strings.Contains(ps[0].Detail, "cutoff_v") {
		t.Errorf("contradicting cell values: %v", ps)
	}
}
