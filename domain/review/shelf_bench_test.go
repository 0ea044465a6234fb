package review

import (
	"fmt"
	"testing"

	"wattshelf/domain"
)

// BenchmarkFillShelf fills a report of 1,000 wire and fuse remedies, each
// asking for a different least size, from a shelf of 2,000 wires and
// 2,000 fuses: a large design against a large shelf. The parts are
// invented.
func BenchmarkFillShelf(b *testing.B) {
	gauges := []string{"24AWG", "22AWG", "20AWG", "18AWG", "16AWG", "14AWG", "12AWG", "1.5mm2", "2.5mm2", "4mm2"}
	var shelf []domain.Component
	for i := range 2000 {
		shelf = append(shelf,
			shelfPart(int64(2*i+1), "wire", "wire", 1+i%3, "working", domain.Electrical{Gauge: gauges[i%len(gauges)]}),
			shelfPart(int64(2*i+2), "fuse", "fuse", 1+i%4, "untested", domain.Electrical{RatingA: f64(float64(1 + i%30)), RatingV: f64(32)}))
	}
	var rep Report
	for i := range 500 {
		rep.Checks = append(rep.Checks,
			Check{Check: CheckWireAmpacity, Node: fmt.Sprint("n", i), Status: Fail, Remedies: []Remedy{{Change: "thicker",
				Part: &PartNeed{Kind: "wire", AtLeast: map[string]float64{domain.RatingAreaMM2: 0.2 + float64(i)*0.005}}}}},
			Check{Check: CheckFuseRating, Node: fmt.Sprint("n", i), Status: Warn, Remedies: []Remedy{{Change: "larger fuse",
				Part: &PartNeed{Kind: "fuse", AtLeast: map[string]float64{"rating_a": 1 + float64(i)*0.03, "rating_v": 12.6},
					AtMost: map[string]float64{"rating_a": 30}}}}})
	}
	for b.Loop() {
		rep.FillShelf(shelf)
	}
}
