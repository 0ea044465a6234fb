package store_test

import (
	"encoding/json"
	"errors"
	"reflect"
	"strings"
	"testing"

	"wattshelf/domain/store"
)

// Each case breaks one rule the API holds records to; the check names
// the record and the field. The file-level test with the four
// records is TestImportRefusesRecordsTheAPIWouldNotStore (cmd/wattshelf).
func TestCheckSnapshot(t *testing.T) {
	user := store.ExportedUser{ID: 1, Name: "ada", Role: "member"}
	part := store.ExportedComponent{ID: 7, Name: "drill motor", Kind: "motor", Condition: "working",
		SpecSource: "measured", Electrical: json.RawMessage(`{"rated_v": 12, "stall_a": 4}`), Owner: "ada", Version: 1}
	cases := []struct {
		name  string
		spoil func(*store.Snapshot)
		want  string // "" for a snapshot that passes
	}{
		{"valid", func(*store.Snapshot) {}, ""},
		{"unknown role", func(s *store.Snapshot) { s.Users[0].Role = "root" }, "users[0] (id 1): invalid input: /role"},
		{"padded user name", func(s *store.Snapshot) { s.Users[0].Name = " ada" }, "users[0] (id 1): invalid input: /name"},
		{"electrical member unknown", func(s *store.Snapshot) { s.Components[0].Electrical = json.RawMessage(`{"colour": "red"}`) },
			"components[0] (id 7): /electrical"},
		{"negative stall current", func(s *store.Snapshot) { s.Components[0].Electrical = json.RawMessage(`{"stall_a": -4}`) },
			"components[0] (id 7): invalid input: /stall_a"},
		{"unknown condition", func(s *store.Snapshot) { s.Components[0].Condition = "mint" },
			"components[0] (id 7): invalid input: /condition"},
		{"measurement past 1 kV", func(s *store.Snapshot) {
			s.Measurements = []store.ExportedMeasurement{{ID: 3, ComponentID: 7, VoltageV: 5000, CurrentA: 1, RecordedBy: "ada"}}
		}, "measurements[0] (id 3): invalid input: /voltage_v"},
		{"design not JSON", func(s *store.Snapshot) {
			s.Designs = []store.ExportedDesign{{ID: 4, Name: "x", Document: "{", Owner: "ada"}}
		},
			"designs[0] (id 4): /document"},
		{"limits body not limits", func(s *store.Snapshot) {
			s.Limits = []store.ExportedLimits{{Version: 1, Body: json.RawMessage(`[]`), CreatedBy: "system"}}
		}, "limits[0] (id 1): /body"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			snap := store.Snapshot{FormatVersion: store.ExportFormatVersion,
				Users: []store.ExportedUser{user}, Components: []store.ExportedComponent{part}}
			tc.spoil(&snap)
			err := store.CheckSnapshot(snap)
			switch {
			case tc.want == "" && err != nil:
				t.Fatalf("a valid snapshot was refused: %v", err)
			case tc.want != "" && (err == nil || !strings.Contains(err.Error(), tc.want)):
				t.Fatalf("error %v, want it to name %q", err, tc.want)
			}
		})
	}
}

// Every list of a backup is checked: a record whose text is a NUL (which
// no column the API writes may hold) is refused in each, so a table export starts carrying (export's own test
// holds it to the schema) cannot be imported unchecked.
func TestCheckSnapshotChecksEveryList(t *testing.T) {
	typ := reflect.TypeFor[store.Snapshot]()
	lists := 0
	for i := range typ.NumField() {
		f := typ.Field(i)
		if f.Type.Kind() != reflect.Slice {
			continue
		}
		lists++
		name, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		var snap store.Snapshot
		v := reflect.ValueOf(&snap).Elem().Field(i)
		v.Set(reflect.MakeSlice(f.Type, 1, 1))
		rec := v.Index(0)
		for j := range rec.NumField() {
			switch fv := rec.Field(j); {
			case fv.Kind() == reflect.String:
				fv.SetString("\x00")
			case fv.Kind() == reflect.Slice && fv.Type().Elem().Kind() == reflect.Uint8:
				fv.SetBytes([]byte("\x00"))
			}
		}
		var se *store.SnapshotError
		if err := store.CheckSnapshot(snap); !errors.As(err, &se) || !strings.HasPrefix(strings.Join(se.Problems, "\n"), name+"[0]") {
			t.Errorf("a record of NULs in %s: %v", name, err)
		}
	}
	if lists < 7 {
		t.Fatalf("found %d lists in Snapshot", lists)
	}
}
