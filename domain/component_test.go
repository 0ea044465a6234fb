package domain

import (
	"encoding/json"
	"errors"
	"math"
	"reflect"
	"slices"
	"strings"
	"testing"
)

func ptr[T any](v T) *T { return &v }

// validComponent is the smallest input that passes validation.
func validComponent() ComponentInput {
	return ComponentInput{Name: "Gear motor", Kind: "motor", Condition: "working", SpecSource: "measured"}
}

// problemPointers returns the JSON pointers a validation error names, or
// nil when err is nil; any other error fails the test.
func problemPointers(t *testing.T, err error) []string {
	t.Helper()
	if err == nil {
		return nil
	}
	var ve *ValidationError
	if !errors.As(err, &ve) {
		t.Fatalf("error %v is not a *ValidationError", err)
	}
	var ptrs []string
	for _, p := range ve.Problems {
		if p.Detail == "" {
			t.Errorf("problem at %s has no detail", p.Pointer)
		}
		ptrs = append(ptrs, p.Pointer)
	}
	return ptrs
}

func TestComponentInputValidate(t *testing.T) {
	tests := []struct {
		name   string
		change func(*ComponentInput)
		want   []string // pointers of the expected problems, nil for valid
	}{
		{"minimal", func(*ComponentInput) {}, nil},
		{"every text field at its limit", func(c *ComponentInput) {
			c.Name = strings.Repeat("n", MaxNameLen)
			c.Description = strings.Repeat("d", MaxTextLen)
			c.Origin = strings.Repeat("o", 2*MaxNameLen)
			c.Bin = strings.Repeat("b", MaxShortFieldLen)
			c.Notes = strings.Repeat("x", MaxTextLen)
			c.Chemistry = strings.Repeat("c", MaxShortFieldLen)
			c.Gauge = strings.Repeat("g", MaxShortFieldLen)
		}, nil},
		// Limits count characters, not bytes: 120 three-byte runes fit.
		{"name of multi-byte runes at the limit", func(c *ComponentInput) { c.Name = strings.Repeat("Ω", MaxNameLen) }, nil},
		{"name one rune too long", func(c *ComponentInput) { c.Name = strings.Repeat("Ω", MaxNameLen+1) }, []string{"/name"}},
		{"empty name", func(c *ComponentInput) { c.Name = "" }, []string{"/name"}},
		{"blank name", func(c *ComponentInput) { c.Name = " \t\n" }, []string{"/name"}},
		{"description too long", func(c *ComponentInput) { c.Description = strings.Repeat("d", MaxTextLen+1) }, []string{"/description"}},
		{"origin too long", func(c *ComponentInput) { c.Origin = strings.Repeat("o", 2*MaxNameLen+1) }, []string{"/origin"}},
		{"bin too long", func(c *ComponentInput) { c.Bin = strings.Repeat("b", MaxShortFieldLen+1) }, []string{"/bin"}},
		{"notes too long", func(c *ComponentInput) { c.Notes = strings.Repeat("x", MaxTextLen+1) }, []string{"/notes"}},
		{"unknown topology", func(c *ComponentInput) { c.Topology = "flyback" }, []string{"/topology"}},
		{"chemistry too long", func(c *ComponentInput) { c.Chemistry = strings.Repeat("c", MaxShortFieldLen+1) }, []string{"/chemistry"}},
		{"gauge too long", func(c *ComponentInput) { c.Gauge = strings.Repeat("g", MaxShortFieldLen+1) }, []string{"/gauge"}},
		{"unknown kind", func(c *ComponentInput) { c.Kind = "flux-capacitor" }, []string{"/kind"}},
		{"kind in another case", func(c *ComponentInput) { c.Kind = "Motor" }, []string{"/kind"}},
		{"empty kind", func(c *ComponentInput) { c.Kind = "" }, []string{"/kind"}},
		{"negative quantity", func(c *ComponentInput) { c.Quantity = -1 }, []string{"/quantity"}},
		{"zero quantity", func(c *ComponentInput) { c.Quantity = 0 }, nil},
		{"largest quantity", func(c *ComponentInput) { c.Quantity = MaxQuantity }, nil},
		{"quantity above the limit", func(c *ComponentInput) { c.Quantity = MaxQuantity + 1 }, []string{"/quantity"}},
		{"unknown condition", func(c *ComponentInput) { c.Condition = "smoking" }, []string{"/condition"}},
		{"unknown spec source", func(c *ComponentInput) { c.SpecSource = "guessed" }, []string{"/spec_source"}},
		{"window upside down", func(c *ComponentInput) { c.MinV, c.MaxV = ptr(12.0), ptr(5.0) }, []string{"/min_v"}},
		{"window of one voltage", func(c *ComponentInput) { c.MinV, c.MaxV = ptr(5.0), ptr(5.0) }, nil},
		{"input window upside down", func(c *ComponentInput) { c.MinInputV, c.MaxInputV = ptr(36.0), ptr(4.5) }, []string{"/min_input_v"}},
		{"no cells in series", func(c *ComponentInput) { c.Series = ptr(0) }, []string{"/series"}},
		{"too many cells in series", func(c *ComponentInput) { c.Series = ptr(1001) }, []string{"/series"}},
		{"largest pack", func(c *ComponentInput) { c.Series, c.Parallel = ptr(1000), ptr(1000) }, nil},
		{"no cells in parallel", func(c *ComponentInput) { c.Parallel = ptr(0) }, []string{"/parallel"}},
		{"negative cells in parallel", func(c *ComponentInput) { c.Parallel = ptr(-2) }, []string{"/parallel"}},
		{"efficiency of zero", func(c *ComponentInput) { c.Efficiency = ptr(0.0) }, []string{"/efficiency"}},
		{"efficiency above one", func(c *ComponentInput) { c.Efficiency = ptr(1.01) }, []string{"/efficiency"}},
		{"efficiency of one", func(c *ComponentInput) { c.Efficiency = ptr(1.0) }, nil},
		{"junction limit too hot", func(c *ComponentInput) { c.TjMaxC = ptr(301.0) }, []string{"/tj_max_c"}},
		{"thermal resistance too high", func(c *ComponentInput) { c.ThetaJACPerW = ptr(1001.0) }, []string{"/theta_ja_c_per_w"}},
		{"cell capacity too large", func(c *ComponentInput) { c.CellCapacityMAh = ptr(float64(MaxCellCapacityAh*1000 + 1)) }, []string{"/cell_capacity_mah"}},
		{"motor too fast", func(c *ComponentInput) { c.NoLoadRPM = ptr(MaxSpeedRPM + 1.0) }, []string{"/no_load_rpm"}},
		{"every problem reported at once", func(c *ComponentInput) {
			c.Name, c.Kind, c.Quantity, c.Condition, c.SpecSource = "", "robot", -5, "", ""
			c.MaxV = ptr(-1.0)
		}, []string{"/name", "/kind", "/quantity", "/condition", "/spec_source", "/max_v"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			in := validComponent()
			tt.change(&in)
			got := problemPointers(t, in.Validate())
			if !slices.Equal(got, tt.want) {
				t.Errorf("problems at %v, want %v", got, tt.want)
			}
		})
	}
}

func TestEveryKindIsAccepted(t *testing.T) {
	kinds := ComponentKinds()
	// DESIGN section 4 names fourteen kinds.
	if len(kinds) != 14 {
		t.Fatalf("%d kinds, want 14: %v", len(kinds), kinds)
	}
	for _, k := range kinds {
		in := validComponent()
		in.Kind = k
		if err := in.Validate(); err != nil {
			t.Errorf("kind %q: %v", k, err)
		}
	}
	// The returned slice is a copy: changing it must not change validation.
	kinds[0] = "robot"
	in := validComponent()
	in.Kind = "motor"
	if err := in.Validate(); err != nil {
		t.Errorf("changing the returned kinds changed validation: %v", err)
	}
}

// TestElectricalRanges walks every number field of Electrical by
// reflection, so a field added later without a range check fails here.
// Every declared number of a part is accepted at both ends of its range
// and refused just past them, alone, with its own pointer.
func TestElectricalRanges(t *testing.T) {
	checked := 0
	for _, f := range FieldsOf(reflect.TypeFor[Electrical]()) {
		if f.Kind != "number" && f.Kind != "integer" {
			continue
		}
		if f.Min == nil || f.Max == nil {
			t.Errorf("%s declares no range", f.Name)
			continue
		}
		set := func(v float64) ComponentInput {
			in := validComponent()
			field := reflect.ValueOf(&in.Electrical).Elem().FieldByIndex(f.Index)
			if f.Kind == "integer" {
				n := int(v)
				field.Set(reflect.ValueOf(&n))
			} else {
				field.Set(reflect.ValueOf(&v))
			}
			return in
		}
		checked++
		for _, ok := range []float64{*f.Min, *f.Max} {
			if err := set(ok).Validate(); err != nil {
				t.Errorf("%s = %g rejected: %v", f.Name, ok, err)
			}
		}
		bad := []float64{*f.Min - 1, *f.Max + 1}
		if f.Kind == "number" {
			bad = append(bad, *f.Min-1e-9*max(1, math.Abs(*f.Min)), math.NaN(), math.Inf(1), math.Inf(-1))
		}
		for _, v := range bad {
			if got := problemPointers(t, set(v).Validate()); !slices.Equal(got, []string{"/" + f.Name}) {
				t.Errorf("%s = %g: problems at %v, want only /%s", f.Name, v, got, f.Name)
			}
		}
	}
	if checked < 25 {
		t.Fatalf("only %d number fields found in Electrical; the walk is broken", checked)
	}
}

func TestComponentDefaults(t *testing.T) {
	var in ComponentInput
	in.Defaults()
	if in.Condition != "untested" || in.SpecSource != "estimated" {
		t.Errorf("defaults: condition %q, spec source %q; want untested, estimated", in.Condition, in.SpecSource)
	}
	in = ComponentInput{Condition: "faulty", SpecSource: "datasheet"}
	in.Defaults()
	if in.Condition != "faulty" || in.SpecSource != "datasheet" {
		t.Errorf("defaults overwrote given values: %q, %q", in.Condition, in.SpecSource)
	}
}

func TestMeasurementInputValidate(t *testing.T) {
	tests := []struct {
		name string
		in   MeasurementInput
		want []string
	}{
		{"reading with speed", MeasurementInput{VoltageV: 6, CurrentA: 0.4, SpeedRPM: ptr(9000.0), Note: "no load"}, nil},
		{"reading without speed", MeasurementInput{VoltageV: 12, CurrentA: 2.5}, nil},
		{"stalled: zero speed", MeasurementInput{VoltageV: 6, CurrentA: 4.8, SpeedRPM: ptr(0.0)}, nil},
		{"limits inclusive", MeasurementInput{VoltageV: MaxVoltageV, CurrentA: MaxCurrentA, SpeedRPM: ptr(float64(MaxSpeedRPM))}, nil},
		{"negative voltage", MeasurementInput{VoltageV: -0.1, CurrentA: 1}, []string{"/voltage_v"}},
		{"negative current", MeasurementInput{VoltageV: 5, CurrentA: -1}, []string{"/current_a"}},
		{"negative speed", MeasurementInput{VoltageV: 5, CurrentA: 1, SpeedRPM: ptr(-10.0)}, []string{"/speed_rpm"}},
		{"above 1 kV", MeasurementInput{VoltageV: 1000.5, CurrentA: 1}, []string{"/voltage_v"}},
		{"above 1 kA", MeasurementInput{VoltageV: 5, CurrentA: 1001}, []string{"/current_a"}},
		{"too fast", MeasurementInput{VoltageV: 5, CurrentA: 1, SpeedRPM: ptr(float64(MaxSpeedRPM) + 1)}, []string{"/speed_rpm"}},
		{"NaN voltage", MeasurementInput{VoltageV: math.NaN(), CurrentA: 1}, []string{"/voltage_v"}},
		{"infinite current", MeasurementInput{VoltageV: 5, CurrentA: math.Inf(1)}, []string{"/current_a"}},
		{"NaN speed", MeasurementInput{VoltageV: 5, CurrentA: 1, SpeedRPM: ptr(math.NaN())}, []string{"/speed_rpm"}},
		{"note at its limit", MeasurementInput{VoltageV: 5, CurrentA: 1, Note: strings.Repeat("n", MaxTextLen)}, nil},
		{"note too long", MeasurementInput{VoltageV: 5, CurrentA: 1, Note: strings.Repeat("n", MaxTextLen+1)}, []string{"/note"}},
		{"all wrong", MeasurementInput{VoltageV: -1, CurrentA: math.NaN(), SpeedRPM: ptr(-1.0), Note: strings.Repeat("n", MaxTextLen+1)},
			[]string{"/voltage_v", "/current_a", "/speed_rpm", "/note"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got := problemPointers(t, tt.in.Validate())
			if !slices.Equal(got, tt.want) {
				t.Errorf("problems at %v, want %v", got, tt.want)
			}
		})
	}
}

func TestPublicViewLeavesOutOwnerAndNotes(t *testing.T) {
	c := Component{ID: 7, ComponentInput: validComponent(), Owner: "ada", Version: 3}
	c.Notes = "bought with petty cash"
	c.Bin = "M1"
	c.MaxV = ptr(12.0)
	body, err := json.Marshal(c.Public())
	if err != nil {
		t.Fatal(err)
	}
	var fields map[string]any
	if err := json.Unmarshal(body, &fields); err != nil {
		t.Fatal(err)
	}
	for _, hidden := range []string{"owner", "notes", "version", "created_at"} {
		if _, ok := fields[hidden]; ok {
			t.Errorf("public view has %q: %s", hidden, body)
		}
	}
	if fields["id"] != 7.0 || fields["bin"] != "M1" || fields["max_v"] != 12.0 || fields["name"] != "Gear motor" {
		t.Errorf("public view lost shelf fields: %s", body)
	}
	if strings.Contains(string(body), "petty cash") || strings.Contains(string(body), "ada") {
		t.Errorf("public view leaks owner or notes: %s", body)
	}
}

func TestComponentJSONIsFlat(t *testing.T) {
	// Clients send and receive one flat object, electrical fields beside the rest.
	var in ComponentInput
	if err := json.Unmarshal([]byte(`{"name":"Buck","kind":"regulator","output_v":5,"max_output_a":3,"series":2}`), &in); err != nil {
		t.Fatal(err)
	}
	if in.OutputV == nil || *in.OutputV != 5 || in.MaxOutputA == nil || *in.MaxOutputA != 3 || in.Series == nil || *in.Series != 2 {
		t.Errorf("electrical fields not read from the flat object: %+v", in.Electrical)
	}
	body, err := json.Marshal(Component{ID: 1, ComponentInput: in, Owner: "bo"})
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"output_v":5`, `"owner":"bo"`, `"id":1`, `"name":"Buck"`} {
		if !strings.Contains(string(body), want) {
			t.Errorf("encoded component lacks %s: %s", want, body)
		}
	}
	if strings.Contains(string(body), "min_v") {
		t.Errorf("absent electrical fields are encoded: %s", body)
	}
}

// A name or bin may not hide characters that render as nothing or turn
// the text around (Unicode categories Cc and Cf), and the space around it
// is trimmed.
func TestNamesAreVisibleText(t *testing.T) {
	for _, bad := range []string{"Fan\u200b", "\u202eevil", "Tab\there", "Bell\a"} {
		in := validComponent()
		in.Name, in.Bin = bad, bad
		if got := problemPointers(t, in.Validate()); !slices.Equal(got, []string{"/name", "/bin"}) {
			t.Errorf("%q: problems at %v, want /name and /bin", bad, got)
		}
	}
	in := validComponent()
	in.Name, in.Bin = "  Gear motor \n", " M1 "
	in.Defaults()
	if in.Name != "Gear motor" || in.Bin != "M1" {
		t.Errorf("trimmed to %q and %q", in.Name, in.Bin)
	}
	if err := in.Validate(); err != nil {
		t.Error(err)
	}
	in.Name = "   "
	in.Defaults()
	if got := problemPointers(t, in.Validate()); !slices.Equal(got, []string{"/name"}) {
		t.Errorf("a blank name: problems at %v", got)
	}
}

func TestElectricalRating(t *testing.T) {
	e := Electrical{Ratings: Ratings{MaxOutputA: ptr(3.0), Series: ptr(4)}, RatingA: ptr(15.0), Gauge: "14AWG"}
	for _, tc := range []struct {
		name string
		want float64
		ok   bool
	}{
		{"max_output_a", 3, true},
		{"rating_a", 15, true},
		{"series", 4, true},
		{"rating_v", 0, false},  // not given
		{"gauge", 0, false},     // not a number
		{"no_such", 0, false},   // not a field
		{"chemistry", 0, false}, // a string
		// 14AWG: d = 0.127 mm × 92^((36−14)/39) = 1.628 mm, area 2.081 mm² (ASTM B258).
		{RatingAreaMM2, 2.081, true},
	} {
		got, ok := e.Rating(tc.name)
		if ok != tc.ok || math.Abs(got-tc.want) > 0.001 {
			t.Errorf("Rating(%q) = %v, %v; want %v, %v", tc.name, got, ok, tc.want, tc.ok)
		}
	}
	if _, ok := (Electrical{}).Rating(RatingAreaMM2); ok {
		t.Error("a part without a gauge gives an area")
	}
}
