package store_test

import (
	"encoding/json"
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
