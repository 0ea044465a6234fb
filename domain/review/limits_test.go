package review

import (
	"encoding/json"
	"errors"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"wattshelf/domain"
)

// The seeded values are the ones DESIGN section 9 names, each with the
// source it names.
func TestDefaultLimitsSeededValues(t *testing.T) {
	l := DefaultLimits()
	if err := l.Validate(); err != nil {
		t.Fatalf("seeded limits invalid: %v", err)
	}
	for _, c := range []struct {
		name   string
		got    Sourced
		value  float64
		source string
	}{
		{"continuous-load factor", l.Fuses.ContinuousLoadFactor, 1.25, "common practice"},
		{"fuse multiple of ampacity", l.Fuses.MaxAmpacityMultiple, 1.5, "33 CFR 183.455"},
		{"fuse distance", l.Fuses.MaxDistanceM, 0.178, "33 CFR 183.455"},
		{"fuse distance sheathed", l.Fuses.MaxDistanceSheathedM, 1.016, "33 CFR 183.455"},
		{"critical drop", l.VoltageDrop.CriticalPct, 3, "marine DC wiring practice"},
		{"other drop", l.VoltageDrop.NonCriticalPct, 10, "marine DC wiring practice"},
		{"in-scope ceiling", l.Policy.InScopeMaxV, 50, "50 V"},
		{"utilisation", l.Policy.UtilisationPct, 80, "common practice"},
		{"thermal margin", l.Policy.ThermalMarginC, 25, "common practice"},
	} {
		if c.got.Value != c.value || !strings.Contains(c.got.Source, c.source) {
			t.Errorf("%s: %+v, want %g from %q", c.name, c.got, c.value, c.source)
		}
	}
	if len(l.Chemistries) != 5 || len(l.Fuses.Families) == 0 || len(l.Conductors.Rows) == 0 || len(l.Connectors) == 0 {
		t.Errorf("seeded tables missing: %d chemistries, %d fuse families, %d conductor rows, %d connectors",
			len(l.Chemistries), len(l.Fuses.Families), len(l.Conductors.Rows), len(l.Connectors))
	}
	// 18 AWG at 105 °C is 20 A in 33 CFR 183.425 Table 5.
	for _, r := range l.Conductors.Rows {
		if r.Gauge == "18AWG" && r.Ampacity["105"] != 20 {
			t.Errorf("18AWG at 105 °C: %g A", r.Ampacity["105"])
		}
	}
}

// Every stored value says where it comes from: each scalar carries a
// source, and so does each table row.
func TestDefaultLimitsEveryValueHasASource(t *testing.T) {
	data, err := json.Marshal(DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	var tree any
	if err := json.Unmarshal(data, &tree); err != nil {
		t.Fatal(err)
	}
	var walk func(ptr string, v any)
	checked := 0
	walk = func(ptr string, v any) {
		switch v := v.(type) {
		case map[string]any:
			_, hasValue := v["value"]
			_, hasRating := v["rating_a"]
			_, hasAmpacity := v["ampacity"]
			_, hasFactor := v["factor"]
			_, hasCurve := v["curve"]
			_, hasSeries := v["ratings_a"]
			if hasValue || hasRating || hasAmpacity || hasFactor || hasCurve || hasSeries {
				checked++
				if s, _ := v["source"].(string); strings.TrimSpace(s) == "" {
					t.Errorf("%s has no source", ptr)
				}
			}
			for k, c := range v {
				walk(ptr+"/"+k, c)
			}
		case []any:
			for i, c := range v {
				walk(ptr+"/"+strconv.Itoa(i), c)
			}
		}
	}
	walk("", tree)
	if checked < 50 {
		t.Errorf("only %d sourced entries found", checked)
	}
}

func TestLimitsJSONRoundTrip(t *testing.T) {
	l := DefaultLimits()
	data, err := json.Marshal(l)
	if err != nil {
		t.Fatal(err)
	}
	var back Limits
	dec := json.NewDecoder(strings.NewReader(string(data)))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&back); err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(l, back) {
		t.Error("limits changed on a JSON round trip")
	}
	for _, key := range []string{`"utilisation_pct":{"value":80,"source":`, `"continuous_load_factor":{"value":1.25,"source":`} {
		if !strings.Contains(string(data), key) {
			t.Errorf("JSON lacks %s", key)
		}
	}
}

func TestLimitsValidateProblems(t *testing.T) {
	tests := []struct {
		name   string
		change func(l *Limits)
		ptr    string
	}{
		{"utilisation zero", func(l *Limits) { l.Policy.UtilisationPct.Value = 0 }, "/policy/utilisation_pct/value"},
		{"no source", func(l *Limits) { l.Fuses.MaxDistanceM.Source = " " }, "/fuses/max_distance_m/source"},
		{"critical above other", func(l *Limits) { l.VoltageDrop.CriticalPct.Value = 12 }, "/voltage_drop/critical_pct/value"},
		{"ratings out of order", func(l *Limits) { l.Fuses.Families[0].RatingsA[1] = 0.5 }, "/fuses/families/0/ratings_a/1"},
		{"duplicate family", func(l *Limits) { l.Fuses.Families[1].Name = l.Fuses.Families[0].Name }, "/fuses/families/1/name"},
		{"bad chemistry", func(l *Limits) { l.Chemistries[2].CutoffV = 9 }, "/chemistries/2"},
		{"no conductors", func(l *Limits) { l.Conductors.Rows = nil }, "/conductors"},
		{"connector without rating", func(l *Limits) { l.Connectors[0].RatingA = 0 }, "/connectors/0/rating_a"},
		{"efficiency above 1", func(l *Limits) { l.Regulators.SwitchingEfficiency.Value = 1.1 }, "/regulators/switching_efficiency/value"},
		{"NaN", func(l *Limits) { l.Policy.ThermalMarginC.Value = nan() }, "/policy/thermal_margin_c/value"},
		// The fault checks' values (faults.go).
		{"negative DC rating", func(l *Limits) { l.Fuses.Families[0].DCVoltageV = -1 }, "/fuses/families/0/dc_voltage_v"},
		{"no breaking capacity", func(l *Limits) { l.Fuses.Families[1].BreakingCapacityA = 0 }, "/fuses/families/1/breaking_capacity_a"},
		{"blank fault source", func(l *Limits) { l.Fuses.Families[2].FaultSource = " " }, "/fuses/families/2/fault_source"},
		{"gate speed", func(l *Limits) { l.Fuses.Families[0].Clearing[0].Speed = "medium" }, "/fuses/families/0/clearing/0/speed"},
		{"two gates for one speed", func(l *Limits) { l.Fuses.Families[0].Clearing[1].Speed = "fast" }, "/fuses/families/0/clearing/1/speed"},
		{"gate at the rating", func(l *Limits) { l.Fuses.Families[0].Clearing[0].Multiple = 1 }, "/fuses/families/0/clearing/0/multiple"},
		{"gate with no time", func(l *Limits) { l.Fuses.Families[0].Clearing[0].WithinS = 0 }, "/fuses/families/0/clearing/0/within_s"},
		{"gate without source", func(l *Limits) { l.Fuses.Families[0].Clearing[1].Source = "" }, "/fuses/families/0/clearing/1/source"},
		{"multiple below 1", func(l *Limits) { l.Faults.UnstatedLimitMultiple.Value = 0.5 }, "/faults/unstated_limit_multiple/value"},
		{"enclosed factor 0", func(l *Limits) { l.Faults.EnclosedFactor.Value = 0 }, "/faults/enclosed_factor/value"},
		{"table ambient absurd", func(l *Limits) { l.Faults.TableAmbientC.Value = 400 }, "/faults/table_ambient_c/value"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			l := DefaultLimits()
			tt.change(&l)
			var ve *domain.ValidationError
			if err := l.Validate(); !errors.As(err, &ve) {
				t.Fatalf("want *domain.ValidationError, got %v", err)
			}
			found := false
			for _, p := range ve.Problems {
				found = found || p.Pointer == tt.ptr
			}
			if !found {
				t.Errorf("no problem at %s: %v", tt.ptr, ve.Problems)
			}
		})
	}
}

func nan() float64 {
	var zero float64
	return zero / zero
}

// Broken limits are the service's fault: Review says so with a plain error
// that does not pass for a problem with the document.
func TestReviewWithUnusableLimits(t *testing.T) {
	l := DefaultLimits()
	l.Policy.UtilisationPct.Value = 0
	d, err := domain.DecodeDesign([]byte(doc("", bench, `{"id": "x", "type": "load", "current_a": 1, `+feedJS("bench", "1mm2", 1, "")+`}`)))
	if err != nil {
		t.Fatal(err)
	}
	_, err = Review(d, l, 7, nil)
	var ve *domain.ValidationError
	if err == nil || errors.As(err, &ve) || !strings.Contains(err.Error(), "limits v7") {
		t.Errorf("got %v", err)
	}
}
