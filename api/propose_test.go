package api

import (
	"fmt"
	"math"
	"net/http"
	"slices"
	"strings"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store"
)

// heaterDesign runs a 12 V, 8 A heater pad over 22AWG wire, so
// wire.ampacity fails. By hand: 33 CFR 183.425 Table 5 gives 18AWG 20 A
// at 105 °C, and the default limits scale that by area below 18AWG (their
// stated rule). Areas from ASTM B258 (d = 0.127 mm × 92^((36 − n)/39)):
// 18AWG 0.8231, 20AWG 0.5176, 22AWG 0.3255 mm². So 22AWG carries
// 20 × 0.3255/0.8231 = 7.9 A, under the 8 A; 20AWG carries
// 20 × 0.5176/0.8231 = 12.5 A, and 8 A is 64 % of it, under the 80 %
// utilisation threshold (common practice): 20AWG is the lightest wire
// that clears it, and the remedy asks for 0.5176 mm² or more.
const heaterDesign = `{"format": 1, "name": "Seed-tray heater", "ambient_c": 25,
 "nodes": [
  {"id": "bench", "type": "supply", "output_v": 12, "max_a": 10},
  {"id": "heater", "type": "load", "min_v": 10, "max_v": 13, "current_a": 8,
   "feed": {"from": "bench", "wire": {"gauge": "22AWG", "length_m": 0.5},
            "fuse": {"rating_a": 10, "speed": "slow", "family": "blade", "voltage_rating_v": 32, "distance_from_source_m": 0.05}}}
 ]}`

// heater20AWGAreaMM2 is 20AWG's area (ASTM B258), the least the heater's
// remedy may ask.
const heater20AWGAreaMM2 = 0.5176

// shelfWires puts wires on the shelf for the heater's remedy: three that
// could serve, one marked faulty, one used up and one too thin. Their
// names and bins are invented.
func shelfWires(t *testing.T, h *designHarness) map[string]domain.Component {
	t.Helper()
	out := map[string]domain.Component{}
	for _, w := range []struct {
		name, gauge, condition string
		qty                    int
	}{
		{"red 18AWG silicone", "18AWG", "working", 3},
		{"black 16AWG", "16AWG", "untested", 2},
		{"twin 14AWG", "14AWG", "working", 1},
		{"burnt 16AWG", "16AWG", "faulty", 5},
		{"empty 16AWG reel", "16AWG", "working", 0},
		{"ribbon 24AWG", "24AWG", "working", 9},
	} {
		in := domain.ComponentInput{Name: w.name, Kind: "wire", Bin: "W" + w.gauge[:2], Quantity: w.qty, Condition: w.condition,
			Electrical: domain.Electrical{Gauge: w.gauge}}
		in.Defaults()
		c, err := h.store.CreateComponent(t.Context(), domain.User{Name: "rowan", Role: domain.RoleStaff}, in)
		if err != nil {
			t.Fatal(err)
		}
		out[w.name] = c
	}
	return out
}

func findCheck(t *testing.T, rep review.Report, check, node string) review.Check {
	t.Helper()
	for _, c := range rep.Checks {
		if c.Check == check && c.Node == node {
			return c
		}
	}
	t.Fatalf("no %s check on %s in the report", check, node)
	return review.Check{}
}

func TestProposeInlineReview(t *testing.T) {
	h := newDesignHarness(t, Config{})
	wires := shelfWires(t, h)
	var p review.Proposal
	h.expect(h.call(http.MethodPost, "/v1/reviews?propose=1", "", []byte(heaterDesign)), http.StatusOK, &p)
	if p.Report.Status != review.Fail {
		t.Fatalf("status %s, want fail", p.Report.Status)
	}
	c := findCheck(t, p.Report, review.CheckWireAmpacity, "heater")
	if c.Status != review.Fail || len(c.Remedies) == 0 {
		t.Fatalf("wire.ampacity of heater: %s with %d remedies, want a fail with a remedy", c.Status, len(c.Remedies))
	}
	rem := c.Remedies[0]
	if rem.Part == nil || rem.Part.Kind != "wire" || len(rem.Patch) == 0 || !strings.Contains(rem.Change, "20AWG") {
		t.Fatalf("the remedy %+v does not call for 20AWG wire", rem)
	}
	if least := rem.Part.AtLeast[domain.RatingAreaMM2]; math.Abs(least-heater20AWGAreaMM2) > 0.005*heater20AWGAreaMM2 {
		t.Errorf("the remedy asks for %g mm², want 20AWG's %g mm²", least, heater20AWGAreaMM2)
	}
	var ids []int64
	for _, m := range rem.Shelf {
		ids = append(ids, m.ID)
	}
	want := wantedWires(t, rem.Part, wires)
	if !slices.Equal(ids, want) {
		t.Errorf("shelf under the remedy %v, want %v (%+v)", ids, want, rem.Part)
	}
	if p.Proposed == nil || p.ProposedStatus.Severity() >= review.Fail.Severity() {
		t.Fatalf("proposed design %v with status %s, want one that no longer fails", p.Proposed != nil, p.ProposedStatus)
	}
	if g := p.Proposed.Nodes[1].Feed.Wire.Gauge; g == "22AWG" {
		t.Errorf("the proposed design keeps the 22AWG feed")
	}

	// Without propose, or with 0, the answer is the report alone.
	for _, q := range []string{"", "?propose=0"} {
		var rep map[string]any
		h.expect(h.call(http.MethodPost, "/v1/reviews"+q, "", []byte(heaterDesign)), http.StatusOK, &rep)
		if _, ok := rep["proposed"]; ok || rep["status"] != "fail" {
			t.Errorf("POST /v1/reviews%s answered %.200v, want the report alone", q, rep)
		}
		if strings.Contains(fmt.Sprint(rep["checks"]), "remedies") {
			t.Errorf("POST /v1/reviews%s carries remedies", q)
		}
	}
	rec := h.call(http.MethodPost, "/v1/reviews?propose=yes", "", []byte(heaterDesign))
	h.expect(rec, http.StatusBadRequest, nil)
	if !strings.Contains(rec.Body.String(), `"/propose"`) {
		t.Errorf("a bad propose is not named: %s", rec.Body.String())
	}
	// A document that does not validate is refused with or without a proposal.
	h.expect(h.call(http.MethodPost, "/v1/reviews?propose=1", "", []byte(`{"format": 1, "nodes": [{"id": "x", "type": "toaster"}]}`)),
		http.StatusUnprocessableEntity, nil)
}

// wantedWires are the shelf wires that serve need, worked out here from
// the areas of ASTM B258 rather than through PartNeed.Fits: in stock, not
// faulty, at least the area asked; the thinnest first.
func wantedWires(t *testing.T, need *review.PartNeed, wires map[string]domain.Component) []int64 {
	t.Helper()
	least, ok := need.AtLeast[domain.RatingAreaMM2]
	if !ok || len(need.AtLeast) != 1 || len(need.AtMost) != 0 {
		t.Fatalf("a wire need bounds %+v, want its least area alone", need)
	}
	// ASTM B258 areas: 18AWG 0.823, 16AWG 1.309, 14AWG 2.081 mm².
	var want []int64
	for _, w := range []struct {
		name string
		area float64
	}{{"red 18AWG silicone", 0.823}, {"black 16AWG", 1.309}, {"twin 14AWG", 2.081}} {
		if w.area >= least {
			want = append(want, wires[w.name].ID)
		}
	}
	if len(want) == 0 {
		t.Fatalf("no wire on the test's shelf is %g mm² or more", least)
	}
	return want
}

// A stored review always proposes: the stored report carries the
// remedies, the answer the proposed design, and the report page says
// under the finding what would fix it and which bin holds the wire.
func TestStoredReviewProposes(t *testing.T) {
	h := newDesignHarness(t, Config{})
	wires := shelfWires(t, h)
	var d store.StoredDesign
	h.expect(h.call(http.MethodPost, "/v1/designs", "ada", []byte(heaterDesign)), http.StatusCreated, &d)
	var r StoredReviewView
	h.expect(h.call(http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", d.ID), "ada", nil), http.StatusCreated, &r)
	if r.Proposed == nil || r.ProposedStatus == "" || r.ProposedStatus.Severity() >= review.Fail.Severity() {
		t.Fatalf("the answer's proposed design: %v, status %q", r.Proposed != nil, r.ProposedStatus)
	}
	stored, err := h.store.ReviewByShareID(t.Context(), r.ShareID)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := review.ReadStored(stored.Report)
	if err != nil {
		t.Fatal(err)
	}
	c := findCheck(t, rep, review.CheckWireAmpacity, "heater")
	if len(c.Remedies) == 0 || len(c.Remedies[0].Shelf) == 0 {
		t.Fatalf("the stored finding has no remedy with shelf parts: %+v", c)
	}
	first := c.Remedies[0].Shelf[0]

	// The page lists the parts as the shelf holds them when it is opened:
	// take the first part off the shelf and it is no longer offered.
	page := h.call(http.MethodGet, "/reports/"+r.ShareID, "", nil)
	h.expect(page, http.StatusOK, nil)
	html := page.Body.String()
	if !strings.Contains(html, "Would fix it:") || !strings.Contains(html, fmt.Sprintf("(part %d, bin %s,", first.ID, first.Bin)) {
		t.Fatalf("the report page does not show the remedy and its shelf part %+v", first)
	}
	var used domain.Component
	for _, w := range wires {
		if w.ID == first.ID {
			used = w
		}
	}
	used.Quantity = 0
	if _, err := h.store.UpdateComponent(t.Context(), domain.User{Name: "rowan", Role: domain.RoleStaff}, used.ID, used.Version, used.ComponentInput); err != nil {
		t.Fatal(err)
	}
	page = h.call(http.MethodGet, "/reports/"+r.ShareID, "", nil)
	h.expect(page, http.StatusOK, nil)
	if strings.Contains(page.Body.String(), fmt.Sprintf("(part %d, bin", first.ID)) {
		t.Error("the page still offers a part the shelf has none of")
	}
}
