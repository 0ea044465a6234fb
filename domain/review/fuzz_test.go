package review

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"wattshelf/domain"
)

// fuzzComponents gives component_id something to find.
func fuzzComponents() map[int64]domain.Component {
	motor := domain.Component{ID: 1, ComponentInput: domain.ComponentInput{Kind: "motor", MainsOrigin: true,
		Electrical: domain.Electrical{Ratings: domain.Ratings{RatedV: f64(12), NoLoadA: f64(0.2), StallA: f64(3), MinV: f64(4), MaxV: f64(14)}}}}
	buck := domain.Component{ID: 2, ComponentInput: domain.ComponentInput{Kind: "regulator",
		Electrical: domain.Electrical{Ratings: domain.Ratings{Topology: "buck", OutputV: f64(5), MaxOutputA: f64(2), Efficiency: f64(0.9)}}}}
	pack := domain.Component{ID: 3, ComponentInput: domain.ComponentInput{Kind: "battery",
		Electrical: domain.Electrical{Ratings: domain.Ratings{Chemistry: "liion", Series: intp(3), Parallel: intp(1), CellCapacityMAh: f64(2500)}}}}
	return map[int64]domain.Component{1: motor, 2: buck, 3: pack}
}

// limitsLookups are the pointers at which a document that passed Validate
// can still be refused: a name the limits do not store, or a wire the
// conductor table cannot rate.
func limitsLookup(pointer string) bool {
	for _, suffix := range []string{"/chemistry", "/fuse/family", "/rating_a", "/feed/wire"} {
		if strings.HasSuffix(pointer, suffix) {
			return true
		}
	}
	// A pack whose own cell values contradict the stored chemistry.
	return !strings.Contains(pointer, "/feed") && strings.Count(pointer, "/") == 2
}

// FuzzReview runs decode → validate → review on arbitrary bytes. It must
// never panic; decode and validate refuse with their own error types; a
// document Validate accepts yields a whole report (or, only where the
// document names components or stored tables, a *ValidationError).
func FuzzReview(f *testing.F) {
	paths, _ := filepath.Glob(filepath.Join(demoDir, "*.json"))
	for _, p := range paths {
		if data, err := os.ReadFile(p); err == nil {
			f.Add(data)
		}
	}
	limits, comps := DefaultLimits(), fuzzComponents()
	f.Fuzz(func(t *testing.T, data []byte) {
		d, err := domain.DecodeDesign(data)
		if err != nil {
			var de *domain.DecodeError
			var ve *domain.ValidationError
			if !errors.As(err, &de) && !errors.As(err, &ve) {
				t.Fatalf("decode error of type %T: %v", err, err)
			}
			return
		}
		if len(d.Nodes) > 200 {
			return // large documents are the benchmark's business
		}
		verr := d.Validate()
		rep, err := Review(d, limits, 1, comps)
		var ve *domain.ValidationError
		switch {
		case verr != nil:
			if !errors.As(err, &ve) {
				t.Fatalf("Validate refused the document (%v) but Review gave %v", verr, err)
			}
			return
		case err != nil:
			if !errors.As(err, &ve) {
				t.Fatalf("accepted document, review error of type %T: %v", err, err)
			}
			if len(d.ComponentIDs()) > 0 {
				return
			}
			for _, p := range ve.Problems {
				if !limitsLookup(p.Pointer) {
					t.Fatalf("accepted document refused at %s: %s", p.Pointer, p.Detail)
				}
			}
			return
		}
		assertWhole(t, d, rep)
	})
}
