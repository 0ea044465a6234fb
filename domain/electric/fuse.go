package electric

import "math"

// FuseFamily is a physical fuse type with its series of standard ratings.
type FuseFamily struct {
	Name        string    `json:"name"`
	Standard    string    `json:"standard"`
	RatingsA    []float64 `json:"ratings_a"`
	MaxVoltageV float64   `json:"max_voltage_v"`
	Source      string    `json:"source"`
}

// DefaultFuseFamilies is the seeded fuse table.
func DefaultFuseFamilies() []FuseFamily {
	return []FuseFamily{
		{
			Name: "blade", Standard: "ISO 8820-3",
			RatingsA:    []float64{1, 2, 3, 4, 5, 7.5, 10, 15, 20, 25, 30, 35, 40},
			MaxVoltageV: 32,
			Source:      "ISO 8820-3 blade fuse ratings and 32 V rating (from memory)",
		},
		{
			Name: "mini-blade", Standard: "ISO 8820-3",
			RatingsA:    []float64{2, 3, 4, 5, 7.5, 10, 15, 20, 25, 30},
			MaxVoltageV: 32,
			Source:      "ISO 8820-3 miniature blade fuse ratings and 32 V rating (from memory)",
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
		},
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
