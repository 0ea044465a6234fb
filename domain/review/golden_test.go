package review

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/go-json-experiment/json"
	"github.com/go-json-experiment/json/jsontext"

	"wattshelf/domain"
)

var update = flag.Bool("update", false, "rewrite the golden reports in testdata/golden")

// demoDir holds the invented demo designs the service loads with --demo.
const demoDir = "../../testdata/demo/designs"

func readDesign(t testing.TB, path string) domain.Design {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	d, err := domain.DecodeDesign(data)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return d
}

// TestGoldenDemoReports reviews every demo design against the seeded limits
// and compares the whole report with the checked-in one. Run
// `go test ./domain/review -run Golden -update` after a deliberate change
// and read the diff before committing it.
func TestGoldenDemoReports(t *testing.T) {
	paths, err := filepath.Glob(filepath.Join(demoDir, "*.json"))
	if err != nil || len(paths) < 3 {
		t.Fatalf("want at least three demo designs in %s, have %d (%v)", demoDir, len(paths), err)
	}
	for _, path := range paths {
		name := strings.TrimSuffix(filepath.Base(path), ".json")
		t.Run(name, func(t *testing.T) {
			rep, err := Review(readDesign(t, path), DefaultLimits(), 1, nil)
			if err != nil {
				t.Fatal(err)
			}
			got, err := json.Marshal(rep, domain.StrictJSON(), jsontext.WithIndent("  "))
			if err != nil {
				t.Fatal(err)
			}
			got = append(got, '\n')
			golden := filepath.Join("testdata", "golden", name+".json")
			if *update {
				if err := os.WriteFile(golden, got, 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(golden)
			if err != nil {
				t.Fatalf("%v (run with -update to create it)", err)
			}
			if !bytes.Equal(got, want) {
				t.Errorf("report for %s differs from %s; run with -update and review the diff", path, golden)
			}
		})
	}
}

// Each demo design is meant to show one outcome, for a reason a member
// can read in its findings. This states the verdict and the findings that
// make it, beside the golden files, so a golden report written again by
// mistake is caught here.
func TestDemoDesignVerdicts(t *testing.T) {
	type finding struct{ check, node string }
	tests := []struct {
		design   string
		status   Status
		findings []finding // every check that does not pass
	}{
		// Pass: every part inside its ratings over the whole discharge, its
		// LiFePO4 pack behind a stated protection board.
		{"seedling-cart", Pass, nil},
		// Warn: a driver and a connector near their ratings, a slow fuse a
		// little far from the pack, a short runtime, a warm linear regulator;
		// a Li-ion pack that states no protection circuit, and the LED strip
		// on a barrel plug that a centre-negative lead would reverse; and a
		// jammed blower holds 2.94 A through a driver rated 2 A continuous,
		// and its 2 A fast blade fuse needs 4 A to open within seconds
		// (ISO 8820-3, from memory), so motor.stall warns.
		{"fume-fan", Warn, []finding{
			{"source.current", "pack"}, {"source.runtime", "pack"}, {"driver.voltage", "fan_driver"},
			{"driver.current", "fan_driver"}, {"fuse.rating", "fan_driver"}, {"fuse.placement", "fan_driver"},
			{"connector.rating", "fan_driver"}, {"regulator.thermal", "reg5"}, {"voltage.range", "work_light"},
			{"battery.protection", "pack"}, {"connector.polarity", "work_light"}, {"motor.stall", "blower"},
		}},
		// Fail: an overloaded driver with no fuse on the pack's feed, a motor
		// and a camera outside their windows, a thin wire, a small regulator;
		// a Li-ion pack that states no protection circuit, the camera on a
		// plain pin header that mates either way round; and either motor,
		// jammed, holds its stall current through the 2.5 A-peak driver with
		// no fuse on its path to stop it (motor.stall).
		{"camera-slider", Fail, []finding{
			{"source.current", "pack"}, {"driver.voltage", "slide_driver"}, {"driver.current", "slide_driver"},
			{"wire.ampacity", "slide_driver"}, {"fuse.missing", "slide_driver"}, {"voltage.range", "sled_motor"},
			{"wire.ampacity", "pan_motor"}, {"regulator.current", "cam_buck"}, {"fuse.rating", "cam_buck"},
			{"voltage.range", "camera"}, {"wire.drop", "camera"},
			{"battery.protection", "pack"}, {"connector.polarity", "camera"},
			{"motor.stall", "sled_motor"}, {"motor.stall", "pan_motor"},
		}},
		// Fail, for the hazards a member cannot see on the bench: a 42 V
		// lithium pack behind glass 5×20 fuses that cannot break the 165 A it
		// can push into a short and carry no DC rating; no protection board;
		// a jammed belt motor held at 10.5 A through a driver rated 6 A peak
		// behind a slow fuse that needs 16 A to open; a buck module shedding
		// 3.35 W with nothing said about its heat; a timer board behind a
		// barrel plug that mates either way. The surge on the pack and the
		// driver follow from the stall.
		{"chip-conveyor", Fail, []finding{
			{"source.current", "pack"}, {"battery.protection", "pack"}, {"driver.current", "belt_driver"},
			{"fuse.interrupt", "belt_driver"}, {"motor.stall", "belt_motor"}, {"regulator.heat", "buck12"},
			{"fuse.interrupt", "buck12"}, {"connector.polarity", "timer_board"},
		}},
		// Pass: the same build with each of those put right.
		{"chip-conveyor-reworked", Pass, nil},
		// Out of scope: it includes the mains side of a wall adapter; the
		// adapter, which cannot sink current, takes what the brush motor
		// pushes back with no clamp on its rail; and the brush motor, jammed,
		// would hold 12 A through a 5 A speed control behind a slow 5 A blade
		// fuse that needs 17.5 A to open within seconds (motor.stall).
		{"sawdust-sweeper", OutOfScope, []finding{{"scope.mains", "wall_adapter"}, {"source.current", "wall_adapter"},
			{"rail.backfeed", "wall_adapter"}, {"motor.stall", "brush_motor"}}},
	}
	for _, tt := range tests {
		t.Run(tt.design, func(t *testing.T) {
			rep, err := Review(readDesign(t, filepath.Join(demoDir, tt.design+".json")), DefaultLimits(), 1, nil)
			if err != nil {
				t.Fatal(err)
			}
			if rep.Status != tt.status {
				t.Errorf("status %s, want %s", rep.Status, tt.status)
			}
			var got []finding
			for _, c := range rep.Checks {
				if c.Status != Pass {
					got = append(got, finding{c.Check, c.Node})
				}
			}
			slices.SortFunc(got, func(a, b finding) int { return strings.Compare(a.check+a.node, b.check+b.node) })
			want := slices.Clone(tt.findings)
			slices.SortFunc(want, func(a, b finding) int { return strings.Compare(a.check+a.node, b.check+b.node) })
			if !slices.Equal(got, want) {
				t.Errorf("findings %v, want %v", got, want)
			}
		})
	}
}
