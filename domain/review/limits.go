// Package review turns a design, a stored limits set and the shelf's
// components into a report: it solves the design's operating point and
// runs every check against the limits. It does no I/O.
package review

import (
	"errors"
	"slices"
	"strconv"
	"strings"

	"wattshelf/domain"
	"wattshelf/domain/electric"
)

// Sourced is one stored limit value with where it comes from: a published
// standard or table, "common practice", or "from memory".
type Sourced struct {
	Value  float64 `json:"value"`
	Source string  `json:"source"`
}

// Limits is a whole stored limits set. Staff replace it
// as a unit; every review names the version it used. Every value carries
// its source: scalars as Sourced, table rows in their own source field.
type Limits struct {
	Conductors  electric.ConductorTable `json:"conductors"`
	Fuses       FuseLimits              `json:"fuses"`
	VoltageDrop DropLimits              `json:"voltage_drop"`
	Chemistries []electric.Chemistry    `json:"chemistries"`
	Connectors  []ConnectorFamily       `json:"connectors"`
	Regulators  RegulatorDefaults       `json:"regulators"`
	Policy      Policy                  `json:"policy"`
	Faults      FaultLimits             `json:"faults"`
}

// FuseLimits are the fuse series and the sizing and placement rules.
type FuseLimits struct {
	Families             []electric.FuseFamily `json:"families"`
	ContinuousLoadFactor Sourced               `json:"continuous_load_factor"`
	MaxAmpacityMultiple  Sourced               `json:"max_ampacity_multiple"`
	MaxDistanceM         Sourced               `json:"max_distance_m"`
	MaxDistanceSheathedM Sourced               `json:"max_distance_sheathed_m"`
}

// DropLimits are the largest voltage drops on a feed, as a percentage of
// the voltage it starts from.
type DropLimits struct {
	CriticalPct    Sourced `json:"critical_pct"`
	NonCriticalPct Sourced `json:"noncritical_pct"`
}

// ConnectorFamily is a connector type and what one contact pair carries.
// RatingV 0 means the family stores no voltage rating.
type ConnectorFamily struct {
	Family  string  `json:"family"`
	RatingA float64 `json:"rating_a"`
	RatingV float64 `json:"rating_v,omitempty"`
	// FixesPolarity says whether a mated pair can only go together one way
	// round; nil in a set stored before it was asked.
	FixesPolarity *bool  `json:"fixes_polarity,omitempty"`
	Source        string `json:"source"`
}

// RegulatorDefaults fill what a regulator node leaves out.
type RegulatorDefaults struct {
	SwitchingEfficiency Sourced `json:"switching_efficiency"`
	TjMaxC              Sourced `json:"tj_max_c"`
	// NoHeatsinkMaxW is the most heat a switching regulator that gives no
	// thermal resistance may shed from its board alone.
	NoHeatsinkMaxW Sourced `json:"no_heatsink_max_w"`
}

// Policy holds the thresholds that are the space's own choice.
type Policy struct {
	InScopeMaxV     Sourced `json:"in_scope_max_v"`
	UtilisationPct  Sourced `json:"utilisation_pct"`
	ThermalMarginC  Sourced `json:"thermal_margin_c"`
	DefaultAmbientC Sourced `json:"default_ambient_c"`
}

// DefaultLimits is the seeded limits set, version 1. The conductor table,
// the chemistries and the fuse series are domain/electric's defaults.
func DefaultLimits() Limits {
	chems := electric.DefaultChemistries()
	names := make([]string, 0, len(chems))
	for name := range chems {
		names = append(names, name)
	}
	slices.Sort(names)
	chemList := make([]electric.Chemistry, 0, len(names))
	for _, name := range names {
		chemList = append(chemList, chems[name])
	}
	rules := electric.DefaultFuseRules()
	const memory = "from memory of typical catalogue ratings; check the part's datasheet"
	return Limits{
		Conductors: electric.DefaultConductorTable(),
		Fuses: FuseLimits{
			Families:             electric.DefaultFuseFamilies(),
			ContinuousLoadFactor: Sourced{rules.ContinuousLoadFactor, rules.ContinuousLoadFactorSource},
			MaxAmpacityMultiple:  Sourced{rules.MaxAmpacityMultiple, rules.MaxAmpacityMultipleSource},
			MaxDistanceM:         Sourced{rules.MaxDistanceM, rules.MaxDistanceSource},
			MaxDistanceSheathedM: Sourced{rules.MaxDistanceSheathedM, rules.MaxDistanceSource},
		},
		VoltageDrop: DropLimits{
			CriticalPct: Sourced{3, "marine DC wiring practice: 3 % for loads whose function a drop " +
				"would impair (common practice, as in ABYC E-11; from memory)"},
			NonCriticalPct: Sourced{10, "marine DC wiring practice: 10 % for other loads (common practice, as in ABYC E-11; from memory)"},
		},
		Chemistries: chemList,
		// Polarity (common practice): a housing whose shape lets the pair
		// mate one way only fixes polarity once its leads are wired to a
		// convention; a round plug, a loose terminal or a clip does not.
		Connectors: []ConnectorFamily{
			{Family: "pin-header-2.54mm", RatingA: 3, FixesPolarity: boolPtr(false), Source: "0.1 in pin header and socket, 3 A per contact: " + memory +
				"; a plain header has no key and mates reversed or offset (common practice)"},
			{Family: "jst-ph-2mm", RatingA: 2, RatingV: 100, FixesPolarity: boolPtr(true), Source: "2.0 mm pitch wire-to-board, 2 A and 100 V: " + memory +
				"; its housing is keyed (common practice)"},
			{Family: "jst-xh-2.5mm", RatingA: 3, RatingV: 250, FixesPolarity: boolPtr(true), Source: "2.5 mm pitch wire-to-board, 3 A and 250 V: " + memory +
				"; its housing is keyed (common practice)"},
			{Family: "barrel-5.5x2.1mm", RatingA: 2.5, RatingV: 24, FixesPolarity: boolPtr(false), Source: "5.5 × 2.1 mm DC barrel plug, 2.5 A and 24 V (many are rated lower): " + memory +
				"; adapters come centre-positive or centre-negative, so the plug does not fix polarity (common practice)"},
			{Family: "screw-terminal-5mm", RatingA: 10, RatingV: 250, FixesPolarity: boolPtr(false), Source: "5 mm pitch PCB screw terminal, 10 A: " + memory +
				"; either wire goes in either clamp (common practice)"},
			{Family: "xt30", RatingA: 15, RatingV: 500, FixesPolarity: boolPtr(true), Source: "XT30 pair, 15 A continuous: " + memory +
				"; its housing mates one way only (common practice)"},
			{Family: "xt60", RatingA: 30, RatingV: 500, FixesPolarity: boolPtr(true), Source: "XT60 pair, 30 A continuous: " + memory +
				"; its housing mates one way only (common practice)"},
			{Family: "powerpole-15", RatingA: 15, RatingV: 600, FixesPolarity: boolPtr(true), Source: "15 A Powerpole contacts: " + memory +
				"; fixes polarity when assembled to the usual red-right, tongue-up layout (common practice)"},
			{Family: "powerpole-30", RatingA: 30, RatingV: 600, FixesPolarity: boolPtr(true), Source: "30 A Powerpole contacts: " + memory +
				"; fixes polarity when assembled to the usual red-right, tongue-up layout (common practice)"},
			{Family: "spade-6.3mm", RatingA: 15, FixesPolarity: boolPtr(false), Source: "6.3 mm quick-connect tab, 15 A: " + memory +
				"; each tab takes either lead (common practice)"},
			{Family: "ring-terminal", RatingA: 15, FixesPolarity: boolPtr(false), Source: "insulated crimp ring terminal for 16–14 AWG wire, 15 A: " + memory +
				"; each stud takes either lead (common practice)"},
			{Family: "clip-leads", RatingA: 3, FixesPolarity: boolPtr(false), Source: "test leads with crocodile clips, 3 A (many small ones are rated lower): " + memory +
				"; either clip goes on either terminal (common practice)"},
		},
		Regulators: RegulatorDefaults{
			SwitchingEfficiency: Sourced{0.85, "common practice: a small buck or boost module at a moderate load (from memory)"},
			TjMaxC:              Sourced{125, "common practice: the junction limit on most regulator datasheets"},
			NoHeatsinkMaxW: Sourced{1.5, "common practice, from memory: a small converter module cooled only by its own " +
				"board in still air runs hot somewhere between 1 and 2 W of loss; 1.5 W sits in that range, not a measured figure"},
		},
		Policy: Policy{
			InScopeMaxV: Sourced{50, "33 CFR 183.455 and the conductor rules above are written for systems " +
				"below 50 V DC (from memory); past that boundary this review does not apply"},
			UtilisationPct:  Sourced{80, "common practice: run a part at no more than 80 % of its rating"},
			ThermalMarginC:  Sourced{25, "common practice: keep a junction 25 °C below its limit"},
			DefaultAmbientC: Sourced{25, "common practice: room temperature, used when a design gives no ambient_c"},
		},
		Faults: defaultFaultLimits(),
	}
}

// Validate reports every problem with the limits set at once, each with a
// JSON pointer into it, and every value a newer check needs that the set
// leaves out (limitsNeeds).
func (l Limits) Validate() error {
	var p domain.Problems
	for _, ptr := range l.missing() {
		p.Add(ptr, "is required: the checks added since this set was written need it (the current defaults hold a sourced value)")
	}
	filled, _ := l.WithNewDefaults()
	addProblems(&p, filled.validateValues())
	return p.Err()
}

// validateValues is Validate without the values a newer check needs:
// those are checked by Validate, or filled by WithNewDefaults, before it runs.
func (l Limits) validateValues() error {
	var p domain.Problems
	addJoined(&p, "/conductors", l.Conductors.Validate())

	f := l.Fuses
	if len(f.Families) == 0 {
		p.Add("/fuses/families", "needs at least one fuse family")
	}
	seen := map[string]int{}
	for i, fam := range f.Families {
		ptr := "/fuses/families/" + strconv.Itoa(i)
		checkName(&p, ptr+"/name", fam.Name, seen, i)
		if fam.Source == "" {
			p.Add(ptr+"/source", "is required")
		}
		if len(fam.RatingsA) == 0 {
			p.Add(ptr+"/ratings_a", "needs at least one rating")
		}
		for j, r := range fam.RatingsA {
			if !(r > 0 && r <= domain.MaxCurrentA) || (j > 0 && !(r > fam.RatingsA[j-1])) {
				p.Add(ptr+"/ratings_a/"+strconv.Itoa(j), "must be above 0, at most %d A, and above the rating before it", domain.MaxCurrentA)
			}
		}
		if !(fam.MaxVoltageV > 0 && fam.MaxVoltageV <= domain.MaxVoltageV) {
			p.Add(ptr+"/max_voltage_v", "must be above 0 and at most %d V", domain.MaxVoltageV)
		}
	}
	checkSourced(&p, "/fuses/continuous_load_factor", f.ContinuousLoadFactor, 1, 3)
	checkSourced(&p, "/fuses/max_ampacity_multiple", f.MaxAmpacityMultiple, 1, 5)
	checkSourced(&p, "/fuses/max_distance_m", f.MaxDistanceM, 0.001, 10)
	checkSourced(&p, "/fuses/max_distance_sheathed_m", f.MaxDistanceSheathedM, 0.001, 10)

	checkSourced(&p, "/voltage_drop/critical_pct", l.VoltageDrop.CriticalPct, 0.1, 50)
	checkSourced(&p, "/voltage_drop/noncritical_pct", l.VoltageDrop.NonCriticalPct, 0.1, 50)
	if l.VoltageDrop.CriticalPct.Value > l.VoltageDrop.NonCriticalPct.Value {
		p.Add("/voltage_drop/critical_pct/value", "is above noncritical_pct: a critical load must get the stricter limit")
	}

	if len(l.Chemistries) == 0 {
		p.Add("/chemistries", "needs at least one chemistry")
	}
	seen = map[string]int{}
	for i, c := range l.Chemistries {
		ptr := "/chemistries/" + strconv.Itoa(i)
		checkName(&p, ptr+"/name", c.Name, seen, i)
		addJoined(&p, ptr, c.Validate())
	}

	seen = map[string]int{}
	for i, c := range l.Connectors {
		ptr := "/connectors/" + strconv.Itoa(i)
		checkName(&p, ptr+"/family", c.Family, seen, i)
		if !(c.RatingA > 0 && c.RatingA <= domain.MaxCurrentA) {
			p.Add(ptr+"/rating_a", "must be above 0 and at most %d A", domain.MaxCurrentA)
		}
		if !(c.RatingV >= 0 && c.RatingV <= domain.MaxVoltageV) {
			p.Add(ptr+"/rating_v", "must be 0 (not stored) or up to %d V", domain.MaxVoltageV)
		}
		if c.Source == "" {
			p.Add(ptr+"/source", "is required")
		}
	}

	checkSourced(&p, "/regulators/switching_efficiency", l.Regulators.SwitchingEfficiency, 0.01, 1)
	checkSourced(&p, "/regulators/tj_max_c", l.Regulators.TjMaxC, 1, domain.MaxTemperatureC)
	checkSourced(&p, "/regulators/no_heatsink_max_w", l.Regulators.NoHeatsinkMaxW, 0.01, 100)
	checkSourced(&p, "/policy/in_scope_max_v", l.Policy.InScopeMaxV, 1, domain.MaxVoltageV)
	checkSourced(&p, "/policy/utilisation_pct", l.Policy.UtilisationPct, 1, 100)
	checkSourced(&p, "/policy/thermal_margin_c", l.Policy.ThermalMarginC, 0, 200)
	checkSourced(&p, "/policy/default_ambient_c", l.Policy.DefaultAmbientC, domain.MinTemperatureC, domain.MaxAmbientC)
	l.validateFaultValues(&p)
	return p.Err()
}

// checkSourced wants a source and a value in [lo, hi].
func checkSourced(p *domain.Problems, ptr string, s Sourced, lo, hi float64) {
	p.CheckRange(ptr+"/value", s.Value, lo, hi, "")
	if strings.TrimSpace(s.Source) == "" {
		p.Add(ptr+"/source", "is required: name the standard or table, or write \"common practice\" or \"from memory\"")
	}
}

func checkName(p *domain.Problems, ptr, name string, seen map[string]int, i int) {
	if strings.TrimSpace(name) == "" {
		p.Add(ptr, "is required")
		return
	}
	if j, dup := seen[name]; dup {
		p.Add(ptr, "repeats %q of entry %d", name, j)
		return
	}
	seen[name] = i
}

// addJoined records each error of an errors.Join result at ptr.
func addJoined(p *domain.Problems, ptr string, err error) {
	if err == nil {
		return
	}
	var joined interface{ Unwrap() []error }
	if errors.As(err, &joined) {
		for _, e := range joined.Unwrap() {
			p.Add(ptr, "%v", e)
		}
		return
	}
	p.Add(ptr, "%v", err)
}

// chemistry returns the stored chemistry called name.
func (l *Limits) chemistry(name string) (electric.Chemistry, bool) {
	for _, c := range l.Chemistries {
		if c.Name == name {
			return c, true
		}
	}
	return electric.Chemistry{}, false
}

// fuseFamily returns the stored fuse family called name.
func (l *Limits) fuseFamily(name string) (electric.FuseFamily, bool) {
	for _, f := range l.Fuses.Families {
		if f.Name == name {
			return f, true
		}
	}
	return electric.FuseFamily{}, false
}

// connectorFamily returns the stored connector family called name.
func (l *Limits) connectorFamily(name string) (ConnectorFamily, bool) {
	for _, c := range l.Connectors {
		if c.Family == name {
			return c, true
		}
	}
	return ConnectorFamily{}, false
}

// names lists the names of a stored table for messages.
func names[T any](items []T, name func(T) string) string {
	out := make([]string, len(items))
	for i, it := range items {
		out[i] = name(it)
	}
	return strings.Join(out, ", ")
}

// utilisation is the policy threshold as a share.
func (l *Limits) utilisation() float64 { return l.Policy.UtilisationPct.Value / 100 }
