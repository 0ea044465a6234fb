package domain

import (
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"strings"
	"testing"
)

// validDoc is a small, complete design: a pack, a fused driver with a
// motor, and a regulator with a load. Tests mutate copies of it.
const validDoc = `{
  "format": 1,
  "name": "test cart",
  "ambient_c": 25,
  "nodes": [
    {"id": "pack", "type": "battery", "chemistry": "nimh", "series": 8, "parallel": 1, "cell_capacity_mah": 2000},
    {"id": "drv", "type": "driver", "max_input_v": 24, "continuous_a": 3, "peak_a": 6,
     "feed": {"from": "pack", "wire": {"gauge": "18AWG", "length_m": 0.5},
              "fuse": {"rating_a": 5, "speed": "slow", "distance_from_source_m": 0.1},
              "connectors": [{"family": "xt30"}]}},
    {"id": "wheel", "type": "motor", "rated_v": 9, "no_load_a": 0.2, "stall_a": 3, "duty": 0.5,
     "feed": {"from": "drv", "wire": {"gauge": "20AWG", "length_m": 0.3}}},
    {"id": "reg", "type": "regulator", "topology": "linear", "output_v": 5, "max_output_a": 1, "dropout_v": 2,
     "theta_ja_c_per_w": 50,
     "feed": {"from": "pack", "wire": {"gauge": "22AWG", "length_m": 0.2}}},
    {"id": "brain", "type": "load", "min_v": 4.5, "max_v": 5.5, "current_a": 0.1, "critical": true,
     "feed": {"from": "reg", "wire": {"gauge": "0.5mm2", "length_m": 0.1}}}
  ]
}`

func decodeValid(t *testing.T) Design {
	t.Helper()
	d, err := DecodeDesign([]byte(validDoc))
	if err != nil {
		t.Fatal(err)
	}
	return d
}

func problemsOf(t *testing.T, err error) []FieldProblem {
	t.Helper()
	var ve *ValidationError
	if !errors.As(err, &ve) {
		t.Fatalf("want a *ValidationError, got %T: %v", err, err)
	}
	return ve.Problems
}

// hasProblem reports whether ps holds a problem at pointer whose detail
// contains part.
func hasProblem(ps []FieldProblem, pointer, part string) bool {
	for _, p := range ps {
		if p.Pointer == pointer && strings.Contains(p.Detail, part) {
			return true
		}
	}
	return false
}

func TestDecodeDesignValid(t *testing.T) {
	d := decodeValid(t)
	if d.Format != 1 || len(d.Nodes) != 5 {
		t.Fatalf("decoded %d nodes, format %d", len(d.Nodes), d.Format)
	}
	if got := d.Nodes[1].Feed.Fuse.RatingA; got != 5 {
		t.Errorf("fuse rating %g, want 5", got)
	}
	if got := *d.Nodes[2].StallA; got != 3 {
		t.Errorf("stall_a %g, want 3", got)
	}
	if err := d.Validate(); err != nil {
		t.Fatalf("valid document rejected: %v", err)
	}
}

// Broken JSON is a *DecodeError (the API answers 400) that says where.
func TestDecodeDesignBrokenJSON(t *testing.T) {
	tests := []struct {
		name, body string
		offset     int64
		reason     string
	}{
		{"empty", "  \n", 0, "empty"},
		{"syntax", "{\"format\": 1,\n \"name\" \"x\"}", 22, "line 2, column 9"},
		{"truncated", `{"format": 1, "nodes": [`, 24, "ends too early"},
		{"trailing data", `{"format": 1} {"format": 1}`, 14, "trailing data"},
		{"trailing garbage", `{"format": 1} x`, 14, "trailing data"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := DecodeDesign([]byte(tt.body))
			var de *DecodeError
			if !errors.As(err, &de) {
				t.Fatalf("want *DecodeError, got %T: %v", err, err)
			}
			if de.Offset != tt.offset || !strings.Contains(de.Reason, tt.reason) {
				t.Errorf("got offset %d, reason %q; want offset %d and %q", de.Offset, de.Reason, tt.offset, tt.reason)
			}
		})
	}
}

// Well-formed JSON of the wrong shape is a *ValidationError (422) with
// every problem and its pointer, not just the first: shape problems from
// the format's schema and, for the rest of the document, what Validate
// finds.
func TestDecodeDesignShapeProblems(t *testing.T) {
	body := `{
	  "format": "1", "colour": "red",
	  "nodes": [
	    {"id": "pack", "type": "battery", "series": 2.5, "cell_capacity_mah": 1e400, "chemistry": 7},
	    {"id": "m", "type": "motor", "critical": "yes",
	     "feed": {"from": "pack"},
	     "feed": {"from": "pack", "wire": {"gauge": "18AWG", "length_m": 1, "colour~/x": 1}, "connectors": {}}}
	  ]
	}`
	_, err := DecodeDesign([]byte(body))
	ps := problemsOf(t, err)
	want := []struct{ ptr, part string }{
		{"/format", "must be a whole number"},
		{"/colour", "is not a field of a design"},
		{"/nodes/0/series", "whole number"},
		{"/nodes/0/cell_capacity_mah", "too large"},
		{"/nodes/0/chemistry", "must be a string"},
		{"/nodes/1/critical", "true or false"},
		{"/nodes/1/feed/wire/colour~0~1x", "is not a field of a wire"},
		{"/nodes/1/feed/connectors", "must be an array"},
		{"/nodes/1/feed", "fed from exactly one parent"},
		// Found by Validate in what could be decoded.
		{"/nodes/0/parallel", "is required for a battery"},
		{"/nodes/1/rated_v", "is required for a motor"},
		{"/nodes/1/stall_a", "is required for a motor"},
		{"/nodes/1/no_load_a", "is required for a motor"},
	}
	for _, w := range want {
		if !hasProblem(ps, w.ptr, w.part) {
			t.Errorf("no problem %q at %s; got %v", w.part, w.ptr, ps)
		}
	}
	if len(ps) != len(want) {
		t.Errorf("got %d problems, want %d: %v", len(ps), len(want), ps)
	}

	for _, body := range []string{`[]`, `null`, `"design"`} {
		_, err := DecodeDesign([]byte(body))
		if ps := problemsOf(t, err); !hasProblem(ps, "", "must be a JSON object") {
			t.Errorf("%s: got %v", body, ps)
		}
	}
}

// The four kinds of mistake a member makes at once (an unknown member, a
// wrong-typed value, a bad gauge, a parent that does not exist) come back
// together in one answer.
func TestDecodeDesignListsEveryKindOfMistakeAtOnce(t *testing.T) {
	body := strings.NewReplacer(
		`"ambient_c": 25,`, `"ambient_c": 25, "colour": "red",`,
		`"duty": 0.5`, `"duty": "half"`,
		`"gauge": "22AWG"`, `"gauge": "40AWG"`,
		`"from": "reg"`, `"from": "regulator"`,
	).Replace(validDoc)
	_, err := DecodeDesign([]byte(body))
	ps := problemsOf(t, err)
	for _, w := range []struct{ ptr, part string }{
		{"/colour", "is not a field of a design"},
		{"/nodes/2/duty", "must be a number"},
		{"/nodes/3/feed/wire/gauge", "AWG"},
		{"/nodes/4/feed/from", "not a node of this design"},
	} {
		if !hasProblem(ps, w.ptr, w.part) {
			t.Errorf("no problem %q at %s; got %v", w.part, w.ptr, ps)
		}
	}
	if len(ps) != 4 {
		t.Errorf("got %d problems, want 4: %v", len(ps), ps)
	}
}

// mutate decodes validDoc into generic JSON, lets change edit it, and
// decodes the result as a Design.
func mutate(t *testing.T, change func(doc map[string]any, nodes []any)) Design {
	t.Helper()
	var doc map[string]any
	if err := json.Unmarshal([]byte(validDoc), &doc); err != nil {
		t.Fatal(err)
	}
	change(doc, doc["nodes"].([]any))
	data, err := json.Marshal(doc)
	if err != nil {
		t.Fatal(err)
	}
	d, err := DecodeDesign(data)
	if err != nil {
		t.Fatalf("mutated document did not decode: %v", err)
	}
	return d
}

func node(nodes []any, i int) map[string]any { return nodes[i].(map[string]any) }

func feedOf(nodes []any, i int) map[string]any { return node(nodes, i)["feed"].(map[string]any) }

func TestValidateFindsEachProblem(t *testing.T) {
	tests := []struct {
		name   string
		change func(doc map[string]any, nodes []any)
		ptr    string
		part   string
	}{
		{"format 2", func(d map[string]any, _ []any) { d["format"] = 2 }, "/format", "must be 1"},
		{"unknown type", func(_ map[string]any, n []any) { node(n, 2)["type"] = "servo" }, "/nodes/2/type", "must be one of"},
		{"missing parent", func(_ map[string]any, n []any) { delete(node(n, 2), "feed") }, "/nodes/2/feed", "is required"},
		{"unknown parent", func(_ map[string]any, n []any) { feedOf(n, 2)["from"] = "nowhere" }, "/nodes/2/feed/from", "not a node"},
		{"empty parent", func(_ map[string]any, n []any) { feedOf(n, 2)["from"] = "" }, "/nodes/2/feed/from", "is required"},
		{"fed by a load", func(_ map[string]any, n []any) { feedOf(n, 2)["from"] = "brain" }, "/nodes/2/feed/from", "only a battery"},
		{"self fed", func(_ map[string]any, n []any) { feedOf(n, 2)["from"] = "wheel" }, "/nodes/2/feed/from", "feed itself"},
		{"fed source", func(_ map[string]any, n []any) {
			node(n, 0)["feed"] = map[string]any{"from": "drv", "wire": map[string]any{"gauge": "18AWG", "length_m": 1}}
		}, "/nodes/0/feed", "must be left out"},
		{"duplicate id", func(_ map[string]any, n []any) { node(n, 3)["id"] = "drv" }, "/nodes/3/id", "fed twice (from \"pack\" and from \"pack\")"},
		{"no source", func(_ map[string]any, n []any) { node(n, 0)["type"] = "driver"; node(n, 0)["max_input_v"] = 1 }, "/nodes", "no battery or supply"},
		{"unknown gauge", func(_ map[string]any, n []any) { feedOf(n, 1)["wire"].(map[string]any)["gauge"] = "17mm2" }, "/nodes/1/feed/wire/gauge", "unknown wire gauge"},
		{"no wire", func(_ map[string]any, n []any) { delete(feedOf(n, 1), "wire") }, "/nodes/1/feed/wire", "is required"},
		{"half a kilometre of wire", func(_ map[string]any, n []any) { feedOf(n, 1)["wire"].(map[string]any)["length_m"] = 500 }, "/nodes/1/feed/wire/length_m", "at most 100"},
		{"zero length", func(_ map[string]any, n []any) { feedOf(n, 1)["wire"].(map[string]any)["length_m"] = 0 }, "/nodes/1/feed/wire/length_m", "at least"},
		{"rail over 1 kV", func(_ map[string]any, n []any) { node(n, 3)["output_v"] = 1001 }, "/nodes/3/output_v", "at most 1000 V"},
		{"current over 1 kA", func(_ map[string]any, n []any) { node(n, 1)["continuous_a"] = 1500 }, "/nodes/1/continuous_a", "at most 1000 A"},
		{"1001 cells", func(_ map[string]any, n []any) { node(n, 0)["series"] = 11; node(n, 0)["parallel"] = 91 }, "/nodes/0/parallel", "1001 cells"},
		{"negative current", func(_ map[string]any, n []any) { node(n, 4)["current_a"] = -0.1 }, "/nodes/4/current_a", "at least 0"},
		{"zero duty", func(_ map[string]any, n []any) { node(n, 2)["duty"] = 0 }, "/nodes/2/duty", "at least"},
		{"efficiency over 1", func(_ map[string]any, n []any) {
			node(n, 3)["topology"] = "buck"
			delete(node(n, 3), "dropout_v")
			delete(node(n, 3), "theta_ja_c_per_w")
			node(n, 3)["efficiency"] = 1.2
		}, "/nodes/3/efficiency", "at most 1"},
		{"field of another type", func(_ map[string]any, n []any) { node(n, 4)["chemistry"] = "nimh" }, "/nodes/4/chemistry", "does not apply to a load"},
		{"linear field on a buck", func(_ map[string]any, n []any) {
			node(n, 3)["topology"] = "buck"
			delete(node(n, 3), "theta_ja_c_per_w")
		}, "/nodes/3/dropout_v", "does not apply to a switching (buck) regulator"},
		{"unknown topology", func(_ map[string]any, n []any) { node(n, 3)["topology"] = "charge_pump" }, "/nodes/3/topology", "must be one of"},
		{"min above max", func(_ map[string]any, n []any) { node(n, 4)["min_v"] = 6 }, "/nodes/4/min_v", "above max_v"},
		{"missing required", func(_ map[string]any, n []any) { delete(node(n, 4), "current_a") }, "/nodes/4/current_a", "is required for a load"},
		{"missing motor current", func(_ map[string]any, n []any) { delete(node(n, 2), "no_load_a") }, "/nodes/2/no_load_a", "running_a is not given"},
		{"fuse speed", func(_ map[string]any, n []any) { feedOf(n, 1)["fuse"].(map[string]any)["speed"] = "medium" }, "/nodes/1/feed/fuse/speed", "one of fast, slow"},
		{"no current limit", func(_ map[string]any, n []any) { node(n, 1)["current_limit_a"] = 0 }, "/nodes/1/current_limit_a", "at least 0.001"},
		{"current limit over 1 kA", func(_ map[string]any, n []any) { node(n, 1)["current_limit_a"] = 1001 }, "/nodes/1/current_limit_a", "at most 1000 A"},
		{"current limit on a motor", func(_ map[string]any, n []any) { node(n, 2)["current_limit_a"] = 2 }, "/nodes/2/current_limit_a", "does not apply to a motor"},
		{"fuse breaking below 1 A", func(_ map[string]any, n []any) { feedOf(n, 1)["fuse"].(map[string]any)["breaking_capacity_a"] = 0.5 }, "/nodes/1/feed/fuse/breaking_capacity_a", "at least 1 and at most 100000 A"},
		{"fuse breaking absurd", func(_ map[string]any, n []any) { feedOf(n, 1)["fuse"].(map[string]any)["breaking_capacity_a"] = 2e5 }, "/nodes/1/feed/fuse/breaking_capacity_a", "at most 100000 A"},
		{"connector without rating", func(_ map[string]any, n []any) { feedOf(n, 1)["connectors"] = []any{map[string]any{}} }, "/nodes/1/feed/connectors/0/rating_a", "names no family"},
		{"bad component id", func(_ map[string]any, n []any) { node(n, 4)["component_id"] = 0 }, "/nodes/4/component_id", "at least 1"},
		{"ambient", func(d map[string]any, _ []any) { d["ambient_c"] = 500 }, "/ambient_c", "at most 100 °C"},
		// The part hazard fields.
		{"protection over-voltage past a cell", func(_ map[string]any, n []any) { node(n, 0)["protection_cell_over_v"] = 25 }, "/nodes/0/protection_cell_over_v", "at most 20 V"},
		{"protection trip of zero", func(_ map[string]any, n []any) { node(n, 0)["protection_trip_a"] = 0 }, "/nodes/0/protection_trip_a", "at least 0.001 and"},
		{"protection cut-offs crossed", func(_ map[string]any, n []any) {
			node(n, 0)["protection_cell_under_v"] = 4.3
			node(n, 0)["protection_cell_over_v"] = 4.2
		}, "/nodes/0/protection_cell_under_v", "above protection_cell_over_v"},
		{"per-string protection on a load", func(_ map[string]any, n []any) { node(n, 4)["protection_per_string"] = true }, "/nodes/4/protection_per_string", "does not apply to a load"},
		{"reverse protection drop past 10 V", func(_ map[string]any, n []any) { node(n, 4)["reverse_protection_drop_v"] = 12 }, "/nodes/4/reverse_protection_drop_v", "at most 10 V"},
		{"negative reverse protection drop", func(_ map[string]any, n []any) { node(n, 1)["reverse_protection_drop_v"] = -0.3 }, "/nodes/1/reverse_protection_drop_v", "at least 0 and"},
		{"reverse protection on a motor", func(_ map[string]any, n []any) { node(n, 2)["reverse_protection_drop_v"] = 0.3 }, "/nodes/2/reverse_protection_drop_v", "does not apply to a motor"},
		{"polarity-free driver", func(_ map[string]any, n []any) { node(n, 1)["polarity_free"] = true }, "/nodes/1/polarity_free", "does not apply to a driver"},
		{"clamp of zero", func(_ map[string]any, n []any) { node(n, 1)["clamp_v"] = 0 }, "/nodes/1/clamp_v", "at least 0.001 and"},
		{"clamp past 1 kV", func(_ map[string]any, n []any) { node(n, 3)["clamp_v"] = 1200 }, "/nodes/3/clamp_v", "at most 1000 V"},
		{"linear regulator that sinks", func(_ map[string]any, n []any) { node(n, 3)["sinks_current"] = true }, "/nodes/3/sinks_current", "does not apply to a linear regulator"},
		{"thermal resistance of a buck out of range", func(_ map[string]any, n []any) {
			node(n, 3)["topology"] = "buck"
			delete(node(n, 3), "dropout_v")
			node(n, 3)["theta_ja_c_per_w"] = 0.01
		}, "/nodes/3/theta_ja_c_per_w", "at least 0.1"},
		{"polarity of a connector with a family", func(_ map[string]any, n []any) {
			feedOf(n, 1)["connectors"] = []any{map[string]any{"family": "xt30", "fixes_polarity": false}}
		}, "/nodes/1/feed/connectors/0/fixes_polarity", "names no family"},
		{"no nodes", func(d map[string]any, _ []any) { d["nodes"] = []any{} }, "/nodes", "is empty"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := mutate(t, tt.change).Validate()
			if ps := problemsOf(t, err); !hasProblem(ps, tt.ptr, tt.part) {
				t.Errorf("want %q at %s, got %v", tt.part, tt.ptr, ps)
			}
		})
	}
}

func TestValidateCycle(t *testing.T) {
	// pack feeds drv; reg and brain feed each other and never reach a source.
	d := mutate(t, func(_ map[string]any, n []any) { feedOf(n, 3)["from"] = "brain"; node(n, 4)["type"] = "driver" })
	d.Nodes[4] = Node{ID: "brain", Type: NodeDriver,
		Feed: &Feed{From: "reg", Wire: &Wire{Gauge: "22AWG", LengthM: 0.1}}, Ratings: Ratings{MaxInputV: ptrTo(12.0), ContinuousA: ptrTo(1.0)},
	}
	ps := problemsOf(t, d.Validate())
	if !hasProblem(ps, "/nodes/4/feed/from", "closes a loop (reg → brain → reg)") {
		t.Errorf("no loop reported: %v", ps)
	}
	if len(ps) != 1 {
		t.Errorf("want exactly the loop, got %v", ps)
	}
}

func ptrTo[T any](v T) *T { return &v }

// Every problem comes back at once, not one per round trip.
func TestValidateReportsEverythingAtOnce(t *testing.T) {
	d := mutate(t, func(doc map[string]any, n []any) {
		doc["format"] = 3
		node(n, 2)["type"] = "servo"
		feedOf(n, 4)["from"] = "ghost"
		node(n, 1)["max_input_v"] = -1
		feedOf(n, 1)["wire"].(map[string]any)["gauge"] = "19 gauge"
	})
	ps := problemsOf(t, d.Validate())
	for _, ptr := range []string{"/format", "/nodes/2/type", "/nodes/4/feed/from", "/nodes/1/max_input_v", "/nodes/1/feed/wire/gauge"} {
		if !slices.ContainsFunc(ps, func(p FieldProblem) bool { return p.Pointer == ptr }) {
			t.Errorf("no problem at %s in %v", ptr, ps)
		}
	}
}

func TestValidateNodeLimits(t *testing.T) {
	d := decodeValid(t)
	extra := make([]Node, MaxDesignNodes-len(d.Nodes)) // exactly MaxDesignNodes: accepted
	for i := range extra {
		extra[i] = Node{ID: fmt.Sprintf("led%d", i), Type: NodeLoad,
			Feed: &Feed{From: "reg", Wire: &Wire{Gauge: "26AWG", LengthM: 0.05}}, Ratings: Ratings{CurrentA: ptrTo(0.01)},
		}
	}
	d.Nodes = append(d.Nodes, extra...)
	if err := d.Validate(); err != nil {
		t.Fatalf("%d nodes rejected: %v", len(d.Nodes), err)
	}
	d.Nodes = append(d.Nodes, extra[0])
	d.Nodes[len(d.Nodes)-1].ID = "one_too_many"
	if ps := problemsOf(t, d.Validate()); !hasProblem(ps, "/nodes", "5001 items; at most 5000") {
		t.Errorf("got %v", ps)
	}
}

// A node with a component_id may leave out what the component will give;
// its present values are still checked.
func TestValidateComponentNodes(t *testing.T) {
	d := mutate(t, func(_ map[string]any, n []any) {
		m := node(n, 2)
		for _, k := range []string{"rated_v", "no_load_a", "stall_a"} {
			delete(m, k)
		}
		m["component_id"] = 17
	})
	if err := d.Validate(); err != nil {
		t.Fatalf("component node rejected: %v", err)
	}
	d.Nodes[2].Duty = ptrTo(2.0)
	if ps := problemsOf(t, d.Validate()); !hasProblem(ps, "/nodes/2/duty", "at most 1") {
		t.Errorf("got %v", ps)
	}
}

func TestComponentIDs(t *testing.T) {
	d := decodeValid(t)
	d.Nodes[4].ComponentID = ptrTo(int64(9))
	d.Nodes[2].ComponentID = ptrTo(int64(3))
	d.Nodes[1].ComponentID = ptrTo(int64(9))
	if got := d.ComponentIDs(); !slices.Equal(got, []int64{3, 9}) {
		t.Errorf("ComponentIDs = %v, want [3 9]", got)
	}
	if got := (Design{}).ComponentIDs(); len(got) != 0 {
		t.Errorf("empty design: %v", got)
	}
}

// Node ids and the design's name are shown on pages: no hidden characters.
func TestDesignNamesAreVisibleText(t *testing.T) {
	d := decodeValid(t)
	d.Name = "cart\u200b"
	d.Nodes[4].ID = "brain\u202e"
	d.Nodes[4].Feed = nil
	ps := problemsOf(t, d.Validate())
	if !hasProblem(ps, "/name", "U+200B") || !hasProblem(ps, "/nodes/4/id", "U+202E") {
		t.Errorf("got %v", ps)
	}
}
