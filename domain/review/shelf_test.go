package review

import (
	"slices"
	"testing"

	"wattshelf/domain"
)

// shelfPart builds a shelf component; the parts are invented.
func shelfPart(id int64, name, kind string, qty int, condition string, e domain.Electrical) domain.Component {
	return domain.Component{ID: id, ComponentInput: domain.ComponentInput{Name: name, Kind: kind, Bin: "B" + name[:1],
		Quantity: qty, Condition: condition, Electrical: e}}
}

func TestPartNeedFits(t *testing.T) {
	// A fuse for a feed that runs 6 A on 18AWG wire: at least 1.25 × 6 A
	// = 7.5 A (continuous-load factor, common practice), at most 1.5 × the
	// wire's 20 A = 30 A (33 CFR 183.455 below 50 V; 18AWG 105 °C at
	// 20 A from 33 CFR 183.425 Table 5).
	fuse := PartNeed{Kind: "fuse", AtLeast: map[string]float64{"rating_a": 7.5}, AtMost: map[string]float64{"rating_a": 30}}
	// A wire of at least 16AWG: 1.309 mm² (ASTM B258: d = 0.127 mm ×
	// 92^((36−16)/39) = 1.291 mm, area π/4 × 1.291² = 1.309 mm²).
	wire := PartNeed{Kind: "wire", AtLeast: map[string]float64{domain.RatingAreaMM2: 1.3}}
	buck := PartNeed{Kind: "regulator", Topology: domain.TopologyBuck, AtLeast: map[string]float64{"max_output_a": 2}}
	for _, tc := range []struct {
		name string
		need PartNeed
		part domain.Component
		want bool
	}{
		{"a 10 A fuse", fuse, shelfPart(1, "blade 10", "fuse", 4, "working", domain.Electrical{RatingA: f64(10)}), true},
		{"exactly the least", fuse, shelfPart(1, "blade 7.5", "fuse", 1, "untested", domain.Electrical{RatingA: f64(7.5)}), true},
		{"exactly the most", fuse, shelfPart(1, "blade 30", "fuse", 1, "working", domain.Electrical{RatingA: f64(30)}), true},
		{"too small", fuse, shelfPart(1, "blade 5", "fuse", 4, "working", domain.Electrical{RatingA: f64(5)}), false},
		{"too large for the wire", fuse, shelfPart(1, "blade 40", "fuse", 4, "working", domain.Electrical{RatingA: f64(40)}), false},
		{"no rating given", fuse, shelfPart(1, "mystery fuse", "fuse", 4, "working", domain.Electrical{}), false},
		{"none left", fuse, shelfPart(1, "blade 10", "fuse", 0, "working", domain.Electrical{RatingA: f64(10)}), false},
		{"faulty", fuse, shelfPart(1, "blade 10", "fuse", 3, "faulty", domain.Electrical{RatingA: f64(10)}), false},
		{"another kind", fuse, shelfPart(1, "xt60", "connector", 3, "working", domain.Electrical{RatingA: f64(10)}), false},
		{"16AWG wire", wire, shelfPart(2, "red 16AWG", "wire", 1, "working", domain.Electrical{Gauge: "16AWG"}), true},
		{"1.5 mm² wire", wire, shelfPart(2, "flex 1.5", "wire", 1, "working", domain.Electrical{Gauge: "1.5mm2"}), true},
		// 18AWG is 0.823 mm² (ASTM B258), below 1.3.
		{"18AWG wire", wire, shelfPart(2, "red 18AWG", "wire", 1, "working", domain.Electrical{Gauge: "18AWG"}), false},
		{"wire without a gauge", wire, shelfPart(2, "spool", "wire", 1, "working", domain.Electrical{}), false},
		{"a 3 A buck", buck, shelfPart(3, "buck 3A", "regulator", 1, "working",
			domain.Electrical{Ratings: domain.Ratings{Topology: domain.TopologyBuck, MaxOutputA: f64(3)}}), true},
		{"a 3 A linear", buck, shelfPart(3, "ldo 3A", "regulator", 1, "working",
			domain.Electrical{Ratings: domain.Ratings{Topology: domain.TopologyLinear, MaxOutputA: f64(3)}}), false},
		{"a 1 A buck", buck, shelfPart(3, "buck 1A", "regulator", 1, "working",
			domain.Electrical{Ratings: domain.Ratings{Topology: domain.TopologyBuck, MaxOutputA: f64(1)}}), false},
	} {
		if got := tc.need.Fits(tc.part); got != tc.want {
			t.Errorf("%s: Fits = %v, want %v", tc.name, got, tc.want)
		}
	}
}

// The best fit overshoots the need least; a part known to work comes
// before an untested one of the same rating; faulty and used-up parts
// are left out.
func TestPartNeedRank(t *testing.T) {
	need := PartNeed{Kind: "fuse", AtLeast: map[string]float64{"rating_a": 7.5}, AtMost: map[string]float64{"rating_a": 30}}
	shelf := []domain.Component{
		shelfPart(1, "blade 20", "fuse", 5, "working", domain.Electrical{RatingA: f64(20)}),
		shelfPart(2, "blade 10 untested", "fuse", 5, "untested", domain.Electrical{RatingA: f64(10)}),
		shelfPart(3, "blade 10", "fuse", 2, "working", domain.Electrical{RatingA: f64(10)}),
		shelfPart(4, "blade 7.5 faulty", "fuse", 5, "faulty", domain.Electrical{RatingA: f64(7.5)}),
		shelfPart(5, "blade 7.5 gone", "fuse", 0, "working", domain.Electrical{RatingA: f64(7.5)}),
		shelfPart(6, "blade 15", "fuse", 1, "untested", domain.Electrical{RatingA: f64(15)}),
		shelfPart(7, "blade 10 again", "fuse", 1, "working", domain.Electrical{RatingA: f64(10)}),
	}
	var ids []int64
	for _, c := range need.Rank(shelf) {
		ids = append(ids, c.ID)
	}
	// 10 A overshoots 7.5 A by 10/7.5 = 1.33 times, 15 A by 2, 20 A by 2.67.
	if want := []int64{3, 7, 2, 6, 1}; !slices.Equal(ids, want) {
		t.Errorf("ranked %v, want %v", ids, want)
	}
}

// A higher voltage rating is no oversize that matters: a fuse for a
// 0.743 A feed on a 12.6 V circuit (three Li-ion cells at 4.2 V full, from
// memory) must carry 1.25 × 0.743 = 0.93 A (common practice) and be rated
// 12.6 V or more. A 1 A fuse rated 250 V fits it better than a 5 A one
// rated 32 V; between two 1 A fuses the lower voltage rating comes first,
// but a part known to work before an untested one.
func TestPartNeedRankBySizeBeforeVoltage(t *testing.T) {
	need := PartNeed{Kind: "fuse", AtLeast: map[string]float64{"rating_a": 0.93, "rating_v": 12.6}}
	shelf := []domain.Component{
		shelfPart(1, "blade 5 A", "fuse", 20, "working", domain.Electrical{RatingA: f64(5), RatingV: f64(32)}),
		shelfPart(2, "glass 1 A", "fuse", 10, "working", domain.Electrical{RatingA: f64(1), RatingV: f64(250)}),
		shelfPart(3, "blade 1 A", "fuse", 10, "working", domain.Electrical{RatingA: f64(1), RatingV: f64(32)}),
		shelfPart(4, "blade 1 A untested", "fuse", 10, "untested", domain.Electrical{RatingA: f64(1), RatingV: f64(32)}),
		shelfPart(5, "blade 1 A, 12 V", "fuse", 10, "working", domain.Electrical{RatingA: f64(1), RatingV: f64(12)}),
	}
	var ids []int64
	for _, c := range need.Rank(shelf) {
		ids = append(ids, c.ID)
	}
	if want := []int64{3, 2, 4, 1}; !slices.Equal(ids, want) {
		t.Errorf("ranked %v, want %v", ids, want)
	}
}

// A fuse that must break a short needs its breaking capacity on record:
// a blade fuse rated 32 V DC and 1,000 A (ISO 8820-3, from memory) serves
// a 12.6 V feed whose short could draw 400 A; a glass one whose box gives
// only its 250 V AC marking, and so no DC rating or breaking capacity,
// does not; nor does a blade fuse that records no breaking capacity.
func TestPartNeedFuseMustBreakTheShort(t *testing.T) {
	need := PartNeed{Kind: "fuse", AtLeast: map[string]float64{"rating_a": 4, "rating_v": 12.6, "breaking_capacity_a": 400}}
	for _, tc := range []struct {
		part domain.Component
		want bool
	}{
		{shelfPart(1, "blade 5 A", "fuse", 20, "working", domain.Electrical{RatingA: f64(5), RatingV: f64(32), BreakingCapacityA: f64(1000)}), true},
		{shelfPart(2, "glass 5 A", "fuse", 10, "working", domain.Electrical{RatingA: f64(5)}), false},
		{shelfPart(3, "blade 5 A, no figure", "fuse", 10, "working", domain.Electrical{RatingA: f64(5), RatingV: f64(32)}), false},
		// 35 A, IEC 60127-2's low breaking capacity (from memory), is short of 400 A.
		{shelfPart(4, "glass 5 A, 35 A", "fuse", 10, "working", domain.Electrical{RatingA: f64(5), RatingV: f64(32), BreakingCapacityA: f64(35)}), false},
	} {
		if got := need.Fits(tc.part); got != tc.want {
			t.Errorf("%s: Fits = %v, want %v", tc.part.Name, got, tc.want)
		}
	}
}

func TestReportFillShelf(t *testing.T) {
	fuse := &PartNeed{Kind: "fuse", AtLeast: map[string]float64{"rating_a": 7.5}}
	wire := &PartNeed{Kind: "wire", AtLeast: map[string]float64{domain.RatingAreaMM2: 1.3}}
	rep := Report{Checks: []Check{
		{Check: CheckFuseRating, Node: "drv", Status: Fail, Remedies: []Remedy{
			{Change: "fit a 7.5 A fuse", Part: fuse, Shelf: []ShelfMatch{{ID: 99, Name: "stale"}}},
			{Change: "move the fuse nearer the pack"},
		}},
		{Check: CheckWireAmpacity, Node: "drv", Status: Warn, Remedies: []Remedy{{Change: "use 16AWG", Part: wire}}},
		{Check: CheckWireAmpacity, Node: "lamp", Status: Warn, Remedies: []Remedy{{Change: "use 16AWG", Part: wire}}},
		{Check: CheckWireDrop, Node: "lamp", Status: Pass},
	}}
	if kinds := rep.PartKinds(); !slices.Equal(kinds, []string{"fuse", "wire"}) {
		t.Errorf("part kinds %v", kinds)
	}
	var shelf []domain.Component
	for i := range MaxShelfMatches + 2 {
		shelf = append(shelf, shelfPart(int64(10+i), "blade", "fuse", 1, "working", domain.Electrical{RatingA: f64(10 + float64(i))}))
	}
	shelf = append(shelf, shelfPart(30, "red 14AWG", "wire", 2, "working", domain.Electrical{Gauge: "14AWG"}),
		shelfPart(31, "red 16AWG", "wire", 1, "working", domain.Electrical{Gauge: "16AWG"}))
	rep.FillShelf(shelf)

	got := rep.Checks[0].Remedies[0].Shelf
	if len(got) != MaxShelfMatches || got[0].ID != 10 || got[0].Bin != "Bb" || got[0].Quantity != 1 {
		t.Errorf("fuse matches %+v: want the %d smallest, 10 A first, the stale match gone", got, MaxShelfMatches)
	}
	if s := rep.Checks[0].Remedies[1].Shelf; s != nil {
		t.Errorf("a remedy that calls for no part lists %+v", s)
	}
	for _, i := range []int{1, 2} {
		// 16AWG (1.309 mm²) overshoots 1.3 mm² less than 14AWG (2.081 mm²; ASTM B258).
		if s := rep.Checks[i].Remedies[0].Shelf; len(s) != 2 || s[0].ID != 31 || s[1].ID != 30 {
			t.Errorf("wire matches of check %d: %+v", i, s)
		}
	}
	rep.Checks[1].Remedies[0].Shelf[0].Name = "changed"
	if rep.Checks[2].Remedies[0].Shelf[0].Name == "changed" {
		t.Error("two remedies share one list of matches")
	}
}
