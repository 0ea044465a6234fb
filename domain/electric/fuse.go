package electric

import "math"

// FuseFamily is a physical fuse type with its series of standard ratings
// and what it can do in a fault.
type FuseFamily struct {
	Name     string    `json:"name"`
	Standard string    `json:"standard"`
	RatingsA []float64 `json:"ratings_a"`
	// MaxVoltageV is the voltage rating the family's standard or catalogue
	// gives, of whatever kind that is: for IEC 60127-2 cartridges an AC
	// rating. Limits sets stored before DCVoltageV existed carry it; the
	// review never reads it as a DC rating.
	MaxVoltageV float64 `json:"max_voltage_v"`
	Source      string  `json:"source"`

	// The fault figures, which FaultSource names the source of; a family
	// stored without FaultSource predates them.

	// DCVoltageV is the highest DC voltage the family is rated to break;
	// 0 when its standard gives none.
	DCVoltageV float64 `json:"dc_voltage_v"`
	// BreakingCapacityA is the most current the family can interrupt; the
	// capacity of a fuse is the greater of it and BreakingCapacityMultiple
	// × its rating.
	BreakingCapacityA        float64 `json:"breaking_capacity_a"`
	BreakingCapacityMultiple float64 `json:"breaking_capacity_multiple,omitempty"`
	// BreakingCapacityAC marks a capacity stated for AC only: on DC it is
	// at most an upper bound, which a fuse's datasheet must confirm.
	BreakingCapacityAC bool   `json:"breaking_capacity_ac,omitempty"`
	FaultSource        string `json:"fault_source"`
	// Clearing says, per speed, what overload opens the family's fuses
	// within a given time: a held stall current is cleared when it reaches
	// the gate. Each gate names its own source.
	Clearing []ClearingGate `json:"clearing"`
}

// ClearingGate is a point of a fuse's time/current characteristic: a fuse
// of Speed ("fast" or "slow") opens within WithinS seconds once the
// current reaches Multiple × its rating.
type ClearingGate struct {
	Speed    string  `json:"speed"`
	Multiple float64 `json:"multiple"`
	WithinS  float64 `json:"within_s"`
	Source   string  `json:"source"`
}

// BreakingCapacityFor is the current a fuse of the family rated ratingA
// can interrupt: the greater of the family's fixed figure and its multiple
// of the rating (IEC 60127-2 low breaking: 35 A or 10 × rating).
func (f FuseFamily) BreakingCapacityFor(ratingA float64) float64 {
	return max(f.BreakingCapacityA, f.BreakingCapacityMultiple*ratingA)
}

// Gate is the family's clearing gate for fuses of speed; false when the
// family stores none for it.
func (f FuseFamily) Gate(speed string) (ClearingGate, bool) {
	for _, g := range f.Clearing {
		if g.Speed == speed {
			return g, true
		}
	}
	return ClearingGate{}, false
}

// ProspectiveShortA is the current a dead short draws from a source of
// open-circuit voltage sourceV through its internal resistance and the
// wire loop up to the short, by Ohm's law (+Inf when both are zero).
func ProspectiveShortA(sourceV, internalOhm, loopOhm float64) float64 {
	r := internalOhm + loopOhm
	if r <= 0 {
		return math.Inf(1)
	}
	return sourceV / r
}

// DefaultFuseFamilies is the seeded fuse table.
func DefaultFuseFamilies() []FuseFamily {
	return []FuseFamily{
		{
			Name: "blade", Standard: "ISO 8820-3",
			RatingsA:    []float64{1, 2, 3, 4, 5, 7.5, 10, 15, 20, 25, 30, 35, 40},
			MaxVoltageV: 32,
			Source:      "ISO 8820-3 blade fuse ratings and 32 V rating (from memory)",
			DCVoltageV:  32, BreakingCapacityA: 1000,
			FaultSource: "ISO 8820-3 blade fuses: rated 32 V DC, breaking capacity 1,000 A (from memory)",
			Clearing:    bladeClearing(),
		},
		{
			Name: "mini-blade", Standard: "ISO 8820-3",
			RatingsA:    []float64{2, 3, 4, 5, 7.5, 10, 15, 20, 25, 30},
			MaxVoltageV: 32,
			Source:      "ISO 8820-3 miniature blade fuse ratings and 32 V rating (from memory)",
			DCVoltageV:  32, BreakingCapacityA: 1000,
			FaultSource: "ISO 8820-3 miniature blade fuses: rated 32 V DC, breaking capacity 1,000 A (from memory)",
			Clearing:    bladeClearing(),
		},
		{
			Name: "glass-5x20", Standard: "IEC 60127-2",
			RatingsA: []float64{
				0.032, 0.04, 0.05, 0.063, 0.08, 0.1, 0.125, 0.16, 0.2, 0.25, 0.315, 0.4, 0.5, 0.63, 0.8,
				1, 1.25, 1.6, 2, 2.5, 3.15, 4, 5, 6.3, 8, 10,
			},
			MaxVoltageV: 250,
			Source: "IEC 60127-2 5x20 mm cartridge fuses: R10 preferred numbers (ISO 3) 32 mA to 10 A, rated 250 V AC " +
				"(from memory); the DC rating of a given fuse can be lower: read its datasheet",
			// A glass tube is the low-breaking kind.
			BreakingCapacityA: 35, BreakingCapacityMultiple: 10, BreakingCapacityAC: true,
			FaultSource: "IEC 60127-2 low-breaking-capacity cartridges (glass): 35 A or 10 × rating, whichever is greater, " +
				"at 250 V AC; the standard gives no DC rating or DC breaking capacity (from memory): only a fuse's " +
				"datasheet can",
			Clearing: cartridgeClearing(),
		},
		{
			Name: "ceramic-5x20", Standard: "IEC 60127-2",
			RatingsA:    []float64{1, 1.25, 1.6, 2, 2.5, 3.15, 4, 5, 6.3, 8, 10},
			MaxVoltageV: 250,
			Source: "IEC 60127-2 5x20 mm high-breaking-capacity (sand-filled ceramic) cartridges: R10 preferred numbers " +
				"1 A to 10 A, rated 250 V AC (from memory); the DC rating of a given fuse can be lower: read its datasheet",
			BreakingCapacityA: 1500, BreakingCapacityAC: true,
			FaultSource: "IEC 60127-2 high-breaking-capacity cartridges: 1,500 A at 250 V AC; the standard gives no DC " +
				"rating or DC breaking capacity (from memory): only a fuse's datasheet can",
			Clearing: cartridgeClearing(),
		},
	}
}

// bladeClearing are the ISO 8820-3 gates a blade fuse opens within.
func bladeClearing() []ClearingGate {
	return []ClearingGate{
		{Speed: "fast", Multiple: 2, WithinS: 5, Source: "ISO 8820-3: at 200 % of its rating a blade fuse opens within 5 s (from memory)"},
		{Speed: "slow", Multiple: 3.5, WithinS: 5, Source: "common practice (from memory): a time-delay blade needs about " +
			"350 % of its rating to open within 5 s, the ISO 8820-3 200 % gate being for the standard kind"},
	}
}

// cartridgeClearing are the IEC 60127-2 gates a 5x20 cartridge opens within.
func cartridgeClearing() []ClearingGate {
	return []ClearingGate{
		{Speed: "fast", Multiple: 2.75, WithinS: 2, Source: "IEC 60127-2 quick-acting (F) standard sheets: at 2.75 × its " +
			"rating a cartridge opens within 2 s (from memory)"},
		{Speed: "slow", Multiple: 4, WithinS: 3, Source: "IEC 60127-2 time-lag (T) standard sheets: at 4 × its rating " +
			"a cartridge opens within 3 s (from memory)"},
	}
}

// ratingTolerance absorbs the rounding of stored ratings (3.15 A stored as
// 3.1500000001) without merging neighbouring sizes.
const ratingTolerance = 1e-6

// NextStandardRating is the smallest rating in ratings at or above
// currentA; false when every rating is below it.
func NextStandardRating(ratings []float64, currentA float64) (float64, bool) {
	best, found := math.Inf(1), false
	for _, r := range ratings {
		if r >= currentA*(1-ratingTolerance) && r < best {
			best, found = r, true
		}
	}
	if !found {
		return 0, false
	}
	return best, true
}

// IsStandardRating tells whether ratingA is one of ratings.
func IsStandardRating(ratings []float64, ratingA float64) bool {
	for _, r := range ratings {
		if math.Abs(r-ratingA) <= ratingTolerance*math.Abs(r) {
			return true
		}
	}
	return false
}

// MinFuseRatingA is the smallest fuse that carries a continuous runA
// without nuisance trips: runA × factor (1.25 by common practice).
func MinFuseRatingA(runA, factor float64) float64 { return runA * factor }

// MaxFuseRatingA is the largest fuse that still protects a conductor of
// the given ampacity: ampacity × multiple (1.5 below 50 V, 33 CFR 183.455).
func MaxFuseRatingA(ampacityA, multiple float64) float64 { return ampacityA * multiple }

// FuseRules are the fuse-sizing and placement values the limits seed,
// each with its source.
type FuseRules struct {
	ContinuousLoadFactor       float64 `json:"continuous_load_factor"`
	ContinuousLoadFactorSource string  `json:"continuous_load_factor_source"`
	MaxAmpacityMultiple        float64 `json:"max_ampacity_multiple"`
	MaxAmpacityMultipleSource  string  `json:"max_ampacity_multiple_source"`
	MaxDistanceM               float64 `json:"max_distance_m"`
	MaxDistanceSheathedM       float64 `json:"max_distance_sheathed_m"`
	MaxDistanceSource          string  `json:"max_distance_source"`
}

// DefaultFuseRules are the seeded fuse rules.
func DefaultFuseRules() FuseRules {
	return FuseRules{
		ContinuousLoadFactor:       1.25,
		ContinuousLoadFactorSource: "common practice: a fuse runs continuously at no more than 80 % of its rating",
		MaxAmpacityMultiple:        1.5,
		MaxAmpacityMultipleSource:  "33 CFR 183.455: at most 150 % of the protected conductor's ampacity (circuits below 50 V)",
		MaxDistanceM:               0.178,
		MaxDistanceSheathedM:       1.016,
		MaxDistanceSource: "33 CFR 183.455: within 7 in (178 mm) of the source along the conductor, " +
			"or 40 in (1,016 mm) when the whole conductor is in a sheath or enclosure",
	}
}

// MaxDistanceFor is the greatest distance from the source allowed for a
// fuse on a conductor that is sheathed or not.
func (r FuseRules) MaxDistanceFor(sheathed bool) float64 {
	if sheathed {
		return r.MaxDistanceSheathedM
	}
	return r.MaxDistanceM
}
