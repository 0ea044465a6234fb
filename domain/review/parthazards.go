package review

import (
	"math"
	"strconv"
	"strings"

	"wattshelf/domain/electric"
)

// The part hazards: a switching regulator's heat, a lithium pack's
// protection circuit, power through a connector that can be mated the
// wrong way round, and the energy a motor pushes back into a rail that
// cannot take it.

// partHazardNeeds are what the part hazard checks (switching-regulator heat,
// lithium protection, reverse polarity, energy back into a rail) need from
// a limits set. Lithium protection and energy back into a rail need no
// stored value; the other two each need one.
func partHazardNeeds() []limitsNeed {
	return []limitsNeed{
		{
			check: CheckRegulatorHeat,
			missing: func(l *Limits) []string {
				if strings.TrimSpace(l.Regulators.NoHeatsinkMaxW.Source) == "" {
					return []string{"/regulators/no_heatsink_max_w"}
				}
				return nil
			},
			fill: func(l, defaults *Limits) { l.Regulators.NoHeatsinkMaxW = defaults.Regulators.NoHeatsinkMaxW },
		},
		{
			check: CheckConnectorPolarity,
			missing: func(l *Limits) []string {
				var out []string
				for i, c := range l.Connectors {
					if c.FixesPolarity == nil {
						out = append(out, "/connectors/"+strconv.Itoa(i)+"/fixes_polarity")
					}
				}
				return out
			},
			fill: fillPolarity,
		},
	}
}

// fillPolarity gives each connector family of l that does not say whether
// it fixes polarity the defaults' answer for the family of that name, and
// adds the default families l lacks (ring terminals and clip leads came
// with this check). A family the defaults do not know is taken as not
// fixing polarity, the cautious answer, and its source says so.
func fillPolarity(l, defaults *Limits) {
	for i := range l.Connectors {
		c := &l.Connectors[i]
		if c.FixesPolarity != nil {
			continue
		}
		if d, ok := defaults.connectorFamily(c.Family); ok {
			c.FixesPolarity = boolPtr(*d.FixesPolarity)
			c.Source += "; fixes_polarity from the defaults: " + polarityBasis(d.Source)
			continue
		}
		c.FixesPolarity = boolPtr(false)
		c.Source += "; fixes_polarity not stated when stored: taken as false, the cautious answer"
	}
	for _, d := range defaults.Connectors {
		if _, ok := l.connectorFamily(d.Family); !ok {
			l.Connectors = append(l.Connectors, d)
		}
	}
}

// polarityBasis is the part of a default family's source that speaks of
// polarity: what follows its last semicolon.
func polarityBasis(source string) string {
	if i := strings.LastIndex(source, ";"); i >= 0 {
		return strings.TrimSpace(source[i+1:])
	}
	return source
}

func boolPtr(b bool) *bool { return &b }

// isLithium tells the chemistries whose packs need a protection circuit.
func isLithium(chemistry string) bool { return chemistry == "liion" || chemistry == "lifepo4" }

// protection is a lithium pack's protection circuit as the design states
// it; a value of 0 was not given.
type protection struct {
	overV, underV, tripA float64
	perString            bool
}

// missing names what the design leaves out of a protection circuit.
func (p *protection) missing() []string {
	var out []string
	if p.overV == 0 {
		out = append(out, "protection_cell_over_v")
	}
	if p.underV == 0 {
		out = append(out, "protection_cell_under_v")
	}
	if p.tripA == 0 {
		out = append(out, "protection_trip_a")
	}
	return out
}

// partHazardRules are the rule-and-source sentences of the part hazard
// checks.
func partHazardRules(l Limits) map[string]Rule {
	h := l.Regulators.NoHeatsinkMaxW
	datasheet := "the part's datasheet"
	return map[string]Rule{
		CheckRegulatorHeat: {Basis: "a switching regulator's heat is P_out·(1/η − 1) at the running output current (η stated, " +
			"else the limits' default) plus V_in·I_q at the input high end; without a thermal resistance, warn above " +
			num(h.Value) + " W, what a board with no heat sink sheds (" + cite(h.Source) + "); with one, regulator.thermal " +
			"checks its junction", Source: datasheet + "; " + cite(h.Source)},
		CheckBatteryProtection: {Basis: "a lithium pack needs a protection circuit: per-cell over- and under-voltage cut-offs " +
			"and an over-current trip; warn when the design states none, fail when the trip lets through more than a wire " +
			"between the pack and its first fuse carries", Source: "common practice for lithium cells; the cell's datasheet"},
		CheckConnectorPolarity: {Basis: "power through a connector that can be mated the wrong way round (the limits' " +
			"connector families say which fix polarity) reaches a part that needs the right polarity: warn unless the part " +
			"states reverse-polarity protection; brushed motors and loads that work either way are exempt",
			Source: "the limits' connector families; common practice"},
		CheckRailBackfeed: {Basis: "a motor slowing down pushes current back into its rail; a battery takes it, a supply, a " +
			"linear regulator or a switching regulator that cannot sink does not, so the rail rises: warn without a stated " +
			"clamp, or with a clamp above a part's maximum voltage", Source: "common practice; the parts' datasheets"},
	}
}

// heat is a switching regulator's loss at its input high end:
// P_out·(1/η − 1) at its running output current, plus V_in·I_q.
func heat(n *node) float64 {
	return electric.SwitchingLossW(n.outHigh, n.outRun, n.efficiency) + n.vHigh*n.quiescentA
}

// regulatorHeat judges a switching regulator that gives no thermal
// resistance by its heat, against what a board with no heat sink sheds.
func (r *reviewer) regulatorHeat(n *node) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	powerW := heat(n)
	limit := r.limits.Regulators.NoHeatsinkMaxW.Value
	conds := append(room[:0], above("hot", Warn, powerW, limit, "W"))
	r.emit(CheckRegulatorHeat, n.id, conds, func(c cond, passed bool) string {
		if passed {
			return r.say(txt(n.id), txt(" sheds "), val(powerW), txt(" W, within the "), val(limit),
				txt(" W a board with no heat sink sheds."))
		}
		return n.id + " sheds " + num(powerW) + " W (" + num(n.outHigh*n.outRun) + " W out at " + pct(n.efficiency) +
			" efficiency), above the " + num(limit) + " W a small board with no heat sink sheds in still air: it will run " +
			"hot, and nothing says where the heat goes. Give its theta_ja_c_per_w (with its heat sink, if it has one) so its " +
			"junction is checked, or use a more efficient or larger converter."
	})
}

// minUnfusedAmpacity is the smallest ampacity among the conductors
// between battery i and its first fuse (a feed from it without a fuse and
// every unfused feed below that, down to a regulator), with the node whose
// feed it is; +Inf when every feed from the pack is fused.
func (r *reviewer) minUnfusedAmpacity(i int, protAmp []float64, protID []string) (float64, string) {
	amp, id := math.Inf(1), ""
	for _, c := range r.t.children(i) {
		if r.t.nodes[c].feed.fuse == nil && protAmp[c] < amp {
			amp, id = protAmp[c], protID[c]
		}
	}
	return amp, id
}

// batteryProtection checks a lithium pack's protection circuit.
func (r *reviewer) batteryProtection(n *node, unfusedAmp float64, unfusedID string) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	p := n.protection
	missing := p.missing()
	conds := room[:0]
	if p.tripA > 0 && !math.IsInf(unfusedAmp, 1) {
		conds = append(conds, above("trip", Fail, p.tripA, unfusedAmp, "A"))
	}
	unstated := flagged("unstated", Warn, len(missing) > 0, p.tripA, 0, "A")
	unstated.noLimit = true
	unstated.noValue = p.tripA == 0
	conds = append(conds, unstated)
	r.emit(CheckBatteryProtection, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed && math.IsInf(unfusedAmp, 1):
			return r.say(txt(n.id), txt("'s protection circuit cuts off each cell at "), val(p.underV), txt("–"), val(p.overV),
				txt(" V and trips at "), val(p.tripA), txt(" A, and every feed from it is fused."))
		case passed:
			return r.say(txt(n.id), txt("'s protection circuit cuts off each cell at "), val(p.underV), txt("–"), val(p.overV),
				txt(" V and trips at "), val(p.tripA), txt(" A, within the "), val(unfusedAmp), txt(" A the unfused wire to "),
				txt(unfusedID), txt(" carries."))
		case c.what == "trip":
			return n.id + "'s protection circuit trips only at " + num(p.tripA) + " A, above the " + num(unfusedAmp) +
				" A the wire to " + unfusedID + " carries, and no fuse protects that wire: a short there would burn it before " +
				"the pack cuts off. Fuse the feed next to the pack, or use a wire that carries the trip current."
		}
		return n.id + " is a lithium pack (" + n.pack.Chem.Name + ") that states no protection circuit: " +
			strings.Join(missing, ", ") + " not given. A lithium pack needs per-cell over- and under-voltage cut-offs and " +
			"an over-current trip: use a pack or a protection board that has them, and state their figures."
	})
}

// perStringCaution is the caution for a lithium pack of parallel strings
// that states no protection for each string, "" otherwise.
func perStringCaution(n *node) string {
	if n.protection == nil || n.pack.Parallel < 2 || n.protection.perString {
		return ""
	}
	return n.id + " has " + strconv.Itoa(n.pack.Parallel) + " strings of lithium cells in parallel and states no " +
		"protection for each string (protection_per_string): a cell that shorts is fed by every other string. Fuse " +
		"each string, or use cells with their own protection."
}

// connectorPolarity checks a node whose feed passes a connector that can
// be mated the wrong way round. The node is the one at risk: a regulator
// or driver shields what it feeds, and motors and loads feed nothing.
func (r *reviewer) connectorPolarity(n *node) {
	k := -1
	for j, c := range n.feed.connectors {
		if !c.fixesPolarity {
			k = j
			break
		}
	}
	if k < 0 {
		return
	}
	var room [6]cond // a check has at most five conditions: they stay on the stack
	c := n.feed.connectors[k]
	exempt := n.kind == kindMotor || n.polarityFree
	reversed := flagged("reversed", Warn, !exempt && !n.revProtected, n.vHigh, 0, "V")
	// A part at risk takes no reversed voltage at all; one that is safe
	// has no limit to show.
	reversed.noLimit = !reversed.crossed
	conds := append(room[:0], reversed)
	r.emit(CheckConnectorPolarity, n.id, conds, func(_ cond, passed bool) string {
		name := "connector " + strconv.Itoa(k+1)
		if c.family != "" {
			name = "the " + c.family + " connector"
		}
		switch {
		case passed && n.kind == kindMotor:
			return r.say(txt(n.id), txt(" is a brushed motor: if "), txt(name), txt(" on its feed is mated the wrong way round, it runs backwards."))
		case passed && n.polarityFree:
			return r.say(txt(n.id), txt(" works either way round, so "), txt(name), txt(" on its feed may be mated either way."))
		case passed:
			return r.say(txt(n.id), txt(" has reverse-polarity protection (losing "), val(n.revDropV),
				txt(" V, counted in its input window), so "), txt(name), txt(" on its feed, which can be mated either way, cannot reverse it."))
		}
		return "The feed to " + n.id + " passes " + name + ", which does not fix polarity: a source or lead of the other " +
			"polarity (an adapter wired centre-negative, a swapped terminal) puts " + num(n.vHigh) + " V the wrong way " +
			"across " + n.id + ". Give it reverse-polarity protection (a series diode or FET) and state its " +
			"reverse_protection_drop_v, or use a connector that mates one way only."
	})
}

// railSum is what the parts on one rail with a motor ask of the node that
// makes the rail.
type railSum struct {
	motors     []string // the first few, for messages
	motorCount int
	clampV     float64 // the lowest clamp a driver on the rail states; 0: none
	lowestMax  float64 // +Inf: no part on the rail states a maximum
	threatened []int32 // parts other than motors that state a maximum voltage
}

// rails collects, in two passes over the nodes, every rail that feeds a
// motor: a rail is made by a source or regulator and runs through drivers
// (a driver's output follows its input, and its switches pass current
// back). The result is keyed by the node that makes the rail.
func (r *reviewer) rails() map[int32]*railSum {
	t := r.t
	var of []int32 // the node making each node's input rail
	var sums map[int32]*railSum
	for _, i := range t.order {
		n := &t.nodes[i]
		if n.kind != kindMotor {
			continue
		}
		if of == nil {
			of = r.railOf()
			sums = map[int32]*railSum{}
		}
		s := sums[of[i]]
		if s == nil {
			s = &railSum{lowestMax: math.Inf(1)}
			sums[of[i]] = s
		}
		if len(s.motors) < shownParts {
			s.motors = append(s.motors, n.id)
		}
		s.motorCount++
	}
	if sums == nil {
		return nil
	}
	for j := range t.nodes {
		n := &t.nodes[j]
		if of[j] < 0 || n.kind == kindMotor {
			continue
		}
		s := sums[of[j]]
		if s == nil {
			continue
		}
		if n.kind == kindDriver && n.clampV > 0 && (s.clampV == 0 || n.clampV < s.clampV) {
			s.clampV = n.clampV
		}
		if m, ok := n.maxInput(); ok {
			s.lowestMax = min(s.lowestMax, m)
			s.threatened = append(s.threatened, int32(j))
		}
	}
	return sums
}

// railOf gives each node the node that makes its input rail: its first
// source or regulator above it; −1 at a root.
func (r *reviewer) railOf() []int32 {
	t := r.t
	of := make([]int32, len(t.nodes))
	for _, i := range t.order {
		n := &t.nodes[i]
		switch p := n.parent; {
		case p < 0:
			of[i] = -1
		case t.nodes[p].kind == kindDriver:
			of[i] = of[p]
		default:
			of[i] = int32(p)
		}
	}
	return of
}

// maxInput is the highest input voltage a part states.
func (n *node) maxInput() (float64, bool) {
	switch n.kind {
	case kindLoad, kindMotor:
		return n.maxV, n.hasMaxV
	case kindDriver, kindRegulator:
		return n.maxInputV, n.maxInputV > 0
	}
	return 0, false
}

// railBackfeed checks the node that makes a rail with motors on it: can the
// energy they push back go anywhere?
func (r *reviewer) railBackfeed(n *node, s *railSum) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	clamp := s.clampV
	if n.clampV > 0 && (clamp == 0 || n.clampV < clamp) {
		clamp = n.clampV
	}
	takesBack := n.kind == kindBattery || n.sinks
	back := flagged("backfeed", Warn, !takesBack && clamp == 0, n.outHigh, s.lowestMax, "V")
	// The parts' maxima are the limit only where the rail can rise.
	back.noLimit = takesBack || math.IsInf(s.lowestMax, 1)
	conds := append(room[:0], back)
	if clamp > 0 && !back.noLimit {
		conds = append(conds, above("clamp", Warn, clamp, s.lowestMax, "V"))
	}
	r.emit(CheckRailBackfeed, n.id, conds, func(c cond, passed bool) string {
		motors, push := s.motorText(), " pushes"
		if s.motorCount > 1 {
			push = " push"
		}
		switch {
		case passed && n.kind == kindBattery:
			return r.say(txt(n.id), txt(" takes back the current "), txt(motors), txt(push), txt(" into its rail when slowing down."))
		case passed && n.sinks:
			return r.say(txt(n.id), txt(" states it sinks current, so it takes back what "), txt(motors), txt(push), txt(" into its rail."))
		case passed:
			return r.say(txt("A clamp at "), val(clamp), txt(" V takes what "), txt(motors), txt(push), txt(" into "), txt(n.id),
				txt("'s rail, below the maximum of every part on it."))
		case c.what == "clamp":
			return "The clamp on " + n.id + "'s rail holds it at " + num(clamp) + " V, above what " +
				r.threatenedText(s, clamp) + " take: choose a clamp below " + num(s.lowestMax) + " V."
		}
		threat := "no part on the rail states a maximum voltage to check the rise against"
		if len(s.threatened) > 0 {
			threat = "the rise threatens " + r.threatenedText(s, math.Inf(1))
		}
		slows := " slows down or stops, the current it pushes"
		if s.motorCount > 1 {
			slows = " slow down or stop, the current they push"
		}
		return n.id + " is " + sinkless(n) + ": when " + motors + slows + " back has " +
			"nowhere to go and the " + num(n.outHigh) + " V rail rises; " + threat + ". State a clamp on the rail " +
			"(clamp_v: a TVS diode, zener or braking resistor on " + n.id + " or the driver), use a supply that sinks " +
			"current (sinks_current), or run the motor from a battery."
	})
}

// sinkless says what kind of rail source cannot take current back.
func sinkless(n *node) string {
	switch {
	case n.kind == kindSupply:
		return "a supply that does not state it sinks current"
	case n.topo == topoLinear:
		return "a linear regulator, which cannot take current back"
	}
	return "a switching regulator that does not state it sinks current"
}

// shownParts is how many parts a message names before it counts the rest:
// a rail of a large design can feed thousands.
const shownParts = 5

// motorText names the motors on a rail: the first few, then how many more.
func (s *railSum) motorText() string {
	if more := s.motorCount - len(s.motors); more > 0 {
		return strings.Join(s.motors, ", ") + " and " + strconv.Itoa(more) + " more"
	}
	return joinIDs(s.motors)
}

// threatenedText lists the parts on a rail whose maximum voltage is below
// under, with their maxima; the first few, then how many more.
func (r *reviewer) threatenedText(s *railSum, under float64) string {
	var parts []string
	more := 0
	for _, j := range s.threatened {
		n := &r.t.nodes[j]
		m, _ := n.maxInput()
		if m >= under {
			continue
		}
		if len(parts) == shownParts {
			more++
			continue
		}
		parts = append(parts, n.id+" ("+num(m)+" V)")
	}
	if more > 0 {
		parts = append(parts, strconv.Itoa(more)+" more")
	}
	return joinIDs(parts)
}
