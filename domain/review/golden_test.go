package review

import (
	"bytes"
	"encoding/json"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"

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
			got, err := json.MarshalIndent(rep, "", "  ")
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
