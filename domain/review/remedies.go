package review

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"wattshelf/domain"
	"wattshelf/domain/electric"
)

// candidates works out the changes that could clear a finding of node i,
// lightest first, or says why there are none. Fuse findings are
// fuseCandidates'.
func (p *proposer) candidates(c Check, i int) ([]candidate, string) {
	if i < 0 {
		return nil, "No remedy is worked out for a finding on the design as a whole."
	}
	switch c.Check {
	case CheckWireAmpacity, CheckWireDrop:
		return p.wireCandidates(i)
	case CheckFusePlacement:
		return p.placeFuse(i)
	case CheckConnectorRating:
		return p.connectorCandidates(i, c.Pointer)
	case CheckRegulatorCurrent:
		return p.regulatorCurrent(i)
	case CheckRegulatorThermal:
		return p.regulatorThermal(i)
	case CheckRegulatorHeadroom:
		return p.regulatorHeadroom(i)
	case CheckDriverVoltage:
		return p.driverVoltage(i)
	case CheckDriverCurrent:
		return p.driverCurrent(i)
	case CheckVoltageRange:
		return p.voltageRange(i)
	case CheckSourceCurrent:
		return p.sourceCurrent(i)
	case CheckSourceRuntime:
		return p.runtime(i)
	case CheckRegulatorHeat:
		return p.regulatorHeat(i)
	case CheckConnectorPolarity:
		return p.connectorPolarity(i)
	case CheckRailBackfeed:
		return p.railBackfeed(i)
	case CheckMotorStall:
		return p.motorStall(i)
	case CheckWireTemperature:
		return p.wireTemperature(i)
	}
	return nil, "No remedy is worked out for " + c.Check + " findings."
}

// twoDigits rounds x > 0 to two significant digits, up or down: a
// rating a part would need, said as a catalogue would.
func twoDigits(x float64, up bool) float64 {
	if !(x > 0) {
		return 0
	}
	step := math.Pow10(int(math.Floor(math.Log10(x))) - 1)
	if up {
		return clean(math.Ceil(x/step-1e-9) * step)
	}
	return clean(math.Floor(x/step+1e-9) * step)
}

// ratingFor is the least two-digit rating of at least need that ok
// accepts, the way the check compares it; 0 when none near it does.
func ratingFor(need float64, ok func(v float64) bool) float64 { return twoDigitsOK(need, true, ok) }

// limitFor is the greatest two-digit value of at most limit that ok
// accepts; 0 when none near it does.
func limitFor(limit float64, ok func(v float64) bool) float64 { return twoDigitsOK(limit, false, ok) }

func twoDigitsOK(x float64, up bool, ok func(v float64) bool) float64 {
	step := 1 - 1e-6
	if up {
		step = 1 + 1e-6
	}
	v := twoDigits(x, up)
	for range 3 {
		if v > 0 && ok(v) {
			return v
		}
		v = twoDigits(v*step, up)
	}
	return 0
}

func ptrF(x float64) *float64 { return &x }

// setField is an edit of one of the part's own number fields.
func setField(i int, name string, v float64, set func(n *domain.Node, v *float64)) edit {
	return edit{node: i, path: "/" + name, value: v, rank: v, part: true, set: func(n *domain.Node) { set(n, ptrF(v)) }}
}

// removeField is an edit that drops one of the part's own fields.
func removeField(i int, name string, clear func(n *domain.Node)) edit {
	return edit{node: i, path: "/" + name, part: true, set: clear}
}

// --- wires

// tableGauges are the conductor table's sizes, smallest first, read once
// a proposal.
func (p *proposer) tableGauges() []electric.Gauge {
	if p.gauges != nil {
		return p.gauges
	}
	var out []electric.Gauge
	for _, row := range p.ru.limits.Conductors.Rows {
		if g, err := electric.ParseGauge(row.Gauge); err == nil {
			out = append(out, g)
		}
	}
	slices.SortStableFunc(out, func(a, b electric.Gauge) int { return cmp.Compare(a.AreaMM2, b.AreaMM2) })
	p.gauges = out
	return out
}

// feedWith is how the feed to n would carry its load on wire g: the
// ampacity, the current and the drop as a share of its base; ok false
// when the table cannot rate g or a converter's feed would collapse.
func (p *proposer) feedWith(n *node, g electric.Gauge) (amp, run, share float64, ok bool) {
	f := n.feed
	amp, err := p.ru.limits.Conductors.Ampacity(g, f.insulationC, f.bundled)
	if err != nil {
		return 0, 0, 0, false
	}
	amp *= f.derating // the air around it and an enclosure take the same share of any size
	res := electric.LoopResistanceOhm(g, f.lengthM, p.r.ambient)
	run = n.run
	if n.switching() {
		vp := p.r.t.nodes[n.parent].outLow
		vin, fine := solveFeedV(vp, res, n.outputV*n.outRun/n.efficiency)
		if vp <= 0 || !fine {
			return amp, 0, 0, false
		}
		run = electric.SwitchingInputA(vin, n.outputV, n.outRun, n.efficiency)
	}
	if base := p.r.dropBase(n); base > 0 {
		share = 100 * run * res / base
	}
	return amp, run, share, true
}

// wireCandidates is the lightest wire of the table, of the feed's own
// system (AWG or metric) and thicker than it, that passes ampacity (as
// derated) and drop, and that the feed's own fuse, if it has one,
// protects: a new wire must suit the whole feed, not just the finding.
// A converter whose feed collapses must get its power through it too.
func (p *proposer) wireCandidates(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	u := p.ru.limits.utilisation()
	drop := p.ru.limits.VoltageDrop
	multiple := p.ru.limits.Fuses.MaxAmpacityMultiple.Value
	fuseA, fused := p.fuseAsProposed(i)
	for _, g := range p.tableGauges() {
		if g.Metric != n.feed.gauge.Metric || g.AreaMM2 <= n.feed.gauge.AreaMM2 {
			continue
		}
		amp, run, share, ok := p.feedWith(n, g)
		if !ok || run > u*amp || share > drop.NonCriticalPct.Value || (n.critical && share > drop.CriticalPct.Value) ||
			(fused && fuseA > multiple*amp) {
			continue
		}
		label := g.Label
		said := fmt.Sprintf("Use %s wire for the feed to %s instead of %s: %s A ampacity for its %s A (within %s), a %s %% drop",
			label, n.id, n.feed.gauge.Label, num(amp), num(run), pct(u), num(share))
		if fused {
			said += fmt.Sprintf(", and its %s A fuse protects it (at most %g × %s A)", num(fuseA), multiple, num(amp))
		}
		return []candidate{{
			change: said + ".",
			edits: []edit{{node: i, path: "/feed/wire/gauge", value: label, rank: g.AreaMM2,
				set: func(n *domain.Node) { n.Feed.Wire.Gauge = label }}},
			part: &PartNeed{Kind: "wire", AtLeast: map[string]float64{"area_mm2": math.Round(g.AreaMM2*1e4) / 1e4}},
		}}, ""
	}
	behind := ""
	if fused {
		behind = " behind its " + num(fuseA) + " A fuse"
	}
	return nil, fmt.Sprintf("No wire in the conductor table clears it: even the thickest the table lists for this feed is not enough "+
		"for %s A over %s m%s; shorten the run or split the load.", num(n.run), num(n.feed.lengthM), behind)
}

// fuseAsProposed is the rating of the fuse on node i's feed as the first
// fuse remedies leave it, and whether the feed has one.
func (p *proposer) fuseAsProposed(i int) (float64, bool) {
	if v, ok := p.firstValue(i, "/feed/fuse/rating_a"); ok {
		return v.(float64), true
	}
	if v, ok := p.firstValue(i, "/feed/fuse"); ok {
		return v.(domain.Fuse).RatingA, true
	}
	if fu := p.r.t.nodes[i].feed.fuse; fu != nil {
		return fu.ratingA, true
	}
	return 0, false
}

// protectedWith is protectedConductors with the wires gauges gives.
func (p *proposer) protectedWith(gauges map[int]electric.Gauge) ([]float64, []string) {
	t := p.r.t
	amp := make([]float64, len(t.nodes))
	for j := range t.nodes {
		if f := t.nodes[j].feed; f != nil {
			amp[j] = f.ampacity
			if g, ok := gauges[j]; ok {
				if a, err := p.ru.limits.Conductors.Ampacity(g, f.insulationC, f.bundled); err == nil {
					amp[j] = a * f.derating
				}
			}
		}
	}
	return t.protectedConductors(amp)
}

// firstGauges are the wires the proposal's first remedies give each feed:
// the thickest where two findings ask for one.
func (p *proposer) firstGauges() map[int]electric.Gauge {
	out := map[int]electric.Gauge{}
	for _, f := range p.findings {
		if f.chosen < 0 {
			continue
		}
		for _, e := range f.cands[f.chosen].edits {
			label, ok := e.value.(string)
			if !ok || e.path != "/feed/wire/gauge" {
				continue
			}
			g, err := electric.ParseGauge(label)
			if old, seen := out[e.node]; err == nil && (!seen || g.AreaMM2 > old.AreaMM2) {
				out[e.node] = g
			}
		}
	}
	return out
}

// --- fuses

// fuseCandidates sizes a fuse for the feed to node i against the wires as
// the proposal leaves them (gauges), for a missing fuse or a wrong one.
func (p *proposer) fuseCandidates(c Check, i int, gauges map[int]electric.Gauge, protAmp []float64, protID []string) ([]candidate, string) {
	if i < 0 {
		return nil, "No remedy is worked out for a finding on the design as a whole."
	}
	t := p.r.t
	n := &t.nodes[i]
	l := p.ru.limits.Fuses
	lo, hi := l.ContinuousLoadFactor.Value*n.run, l.MaxAmpacityMultiple.Value*protAmp[i]
	wire := "the wire to " + protID[i]
	if g, ok := gauges[p.index[protID[i]]]; ok {
		wire = "the " + g.Label + " wire proposed for the feed to " + protID[i]
	}
	old := n.feed.fuse
	var keep *electric.FuseFamily
	keepRating, fast := 0.0, false
	// A fuse placed "within" the distance may sit right at the source: a
	// new one, or one the placement remedy moves, is taken to, where a
	// short past it meets no wire at all.
	dist, hasDist := 0.0, false
	if old != nil {
		keep, keepRating, fast = old.family, old.ratingA, old.fast
		limit := l.MaxDistanceM.Value
		if old.sheathed {
			limit = l.MaxDistanceSheathedM.Value
		}
		if !t.nodes[n.parent].isSource() || (old.hasDist && old.distanceM <= limit) {
			dist, hasDist = old.distanceM, old.hasDist
		}
	}
	short := 0.0 // what it must break; 0 when the fault checks do not run
	if p.r.paths != nil {
		short, _ = p.r.shortAt(i, dist, hasDist)
	}
	fam, rating, ok := p.pickFuse(keep, keepRating, lo, hi, n.vHigh, short)
	if !ok {
		if hi < lo {
			return nil, fmt.Sprintf("No fuse can both carry %s A (%g × the %s A running current) and protect %s (at most %s A): "+
				"the wire must be thicker first.", num(lo), l.ContinuousLoadFactor.Value, num(n.run), wire, num(hi))
		}
		return nil, fmt.Sprintf("No stored fuse series has a rating from %s A to %s A rated for %s V DC that breaks the %s A "+
			"a short past it could draw.", num(lo), num(hi), num(n.vHigh), num(short))
	}
	speed := domain.FuseSlow
	if fast && !(n.hasMotor && rating < n.peak) {
		speed = domain.FuseFast
	}
	need := &PartNeed{Kind: "fuse", AtLeast: map[string]float64{"rating_a": lo, "rating_v": n.vHigh},
		AtMost: map[string]float64{"rating_a": hi}}
	why := fmt.Sprintf("it carries %s A (%g × %s A running) and protects %s (at most %s A), and its series is rated %s V DC "+
		"for the %s V circuit", num(lo), l.ContinuousLoadFactor.Value, num(n.run), wire, num(hi), num(fam.DCVoltageV), num(n.vHigh))
	if short > 0 {
		need.AtLeast["breaking_capacity_a"] = short
		why += fmt.Sprintf(" and breaks %s A, more than the %s A a short past it could draw", num(fam.BreakingCapacityFor(rating)),
			num(short))
	}
	if speed == domain.FuseSlow && n.hasMotor {
		why += fmt.Sprintf("; slow, so the %s A motor surge does not blow it", num(n.peak))
	}
	src := t.nodes[n.parent]
	if c.Check == CheckFuseMissing {
		dist := l.MaxDistanceM.Value
		fu := domain.Fuse{RatingA: rating, Speed: speed, Family: fam.Name, DistanceFromSourceM: ptrF(dist)}
		return []candidate{{
			change: fmt.Sprintf("Fit a %s A %s %s fuse on the feed to %s, within %s m of %s: %s.", num(rating), speed, fam.Name,
				n.id, num(dist), src.id, why),
			edits: []edit{{node: i, path: "/feed/fuse", value: fu, rank: rating,
				set: func(n *domain.Node) { f := fu; f.DistanceFromSourceM = ptrF(dist); n.Feed.Fuse = &f }}},
			part: need, local: true,
		}}, ""
	}
	edits := []edit{{node: i, path: "/feed/fuse/rating_a", value: rating, rank: rating,
		set: func(n *domain.Node) { n.Feed.Fuse.RatingA = rating }}}
	if old.family == nil || old.family.Name != fam.Name {
		name := fam.Name
		edits = append(edits, edit{node: i, path: "/feed/fuse/family", value: name, set: func(n *domain.Node) { n.Feed.Fuse.Family = name }})
	}
	if (speed == domain.FuseSlow) == fast {
		edits = append(edits, edit{node: i, path: "/feed/fuse/speed", value: speed, set: func(n *domain.Node) { n.Feed.Fuse.Speed = speed }})
	}
	// A stated voltage rating or breaking capacity was the old fuse's; the
	// series gives the new one's.
	if dn := p.doc.Nodes[i].Feed.Fuse; dn.VoltageRatingV != nil {
		edits = append(edits, edit{node: i, path: "/feed/fuse/voltage_rating_v", set: func(n *domain.Node) { n.Feed.Fuse.VoltageRatingV = nil }})
	}
	if dn := p.doc.Nodes[i].Feed.Fuse; dn.BreakingCapacityA != nil {
		edits = append(edits, edit{node: i, path: "/feed/fuse/breaking_capacity_a", set: func(n *domain.Node) { n.Feed.Fuse.BreakingCapacityA = nil }})
	}
	return []candidate{{
		change: fmt.Sprintf("Fit a %s A %s %s fuse on the feed to %s instead of the %s A one: %s.", num(rating), speed, fam.Name,
			n.id, num(old.ratingA), why),
		edits: edits, part: need, local: true,
	}}, ""
}

// pickFuse finds a standard rating from lo to hi in a stored series rated
// for the circuit's vHigh DC that breaks short amps on DC (a breaking
// capacity stated for AC only does not count): the fuse's own series
// first, keeping its rating where that is one of them, else the smallest
// that carries lo.
func (p *proposer) pickFuse(own *electric.FuseFamily, ownRating, lo, hi, vHigh, short float64) (electric.FuseFamily, float64, bool) {
	fams := p.ru.limits.Fuses.Families
	if own != nil {
		fams = append([]electric.FuseFamily{*own}, fams...)
	}
	interrupts := func(fam electric.FuseFamily, r float64) bool {
		return short == 0 || (!fam.BreakingCapacityAC && fam.BreakingCapacityFor(r) >= short)
	}
	for _, fam := range fams {
		if fam.DCVoltageV < vHigh {
			continue
		}
		if own != nil && fam.Name == own.Name && ownRating >= lo && ownRating <= hi &&
			electric.IsStandardRating(fam.RatingsA, ownRating) && interrupts(fam, ownRating) {
			return fam, ownRating, true
		}
		for _, r := range fam.RatingsA {
			if r >= lo && r <= hi && interrupts(fam, r) {
				return fam, r, true
			}
		}
	}
	return electric.FuseFamily{}, 0, false
}

func (p *proposer) placeFuse(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	fu := n.feed.fuse
	l := p.ru.limits.Fuses
	limit := l.MaxDistanceM.Value
	if fu.sheathed {
		limit = l.MaxDistanceSheathedM.Value
	}
	src := p.r.t.nodes[n.parent].id
	out := []candidate{{
		change: fmt.Sprintf("Place the fuse on the feed to %s within %s m of %s (distance_from_source_m %s).", n.id, num(limit), src, num(limit)),
		edits: []edit{{node: i, path: "/feed/fuse/distance_from_source_m", value: limit, rank: -limit,
			set: func(n *domain.Node) { n.Feed.Fuse.DistanceFromSourceM = ptrF(limit) }}},
		local: true,
	}}
	if sheathed := l.MaxDistanceSheathedM.Value; !fu.sheathed && fu.hasDist && fu.distanceM <= sheathed {
		out = append(out, candidate{
			change: fmt.Sprintf("Run the wire from %s to the fuse in a sheath or conduit: then %s m is within the %s m allowed.",
				src, num(fu.distanceM), num(sheathed)),
			edits: []edit{{node: i, path: "/feed/fuse/sheathed", value: true,
				set: func(n *domain.Node) { n.Feed.Fuse.Sheathed = true }}},
			local: true,
		})
	}
	return out, ""
}

// --- connectors

func (p *proposer) connectorCandidates(i int, ptr string) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	k, err := strconv.Atoi(ptr[strings.LastIndexByte(ptr, '/')+1:])
	if err != nil || k >= len(n.feed.connectors) {
		return nil, "The finding names no connector of the feed."
	}
	u := p.ru.limits.utilisation()
	needA := ratingFor(n.run/u, func(v float64) bool { return !(n.run > u*v) })
	needV := ratingFor(n.vHigh/u, func(v float64) bool { return !(n.vHigh > u*v) })
	need := &PartNeed{Kind: "connector", AtLeast: map[string]float64{"rating_a": needA, "rating_v": needV}}
	// The design rates its own pair of a family lower than the family:
	// it knows better, so that family is not offered again.
	own, skip := p.doc.Nodes[i].Feed.Connectors[k], ""
	if own.RatingA != nil || own.RatingV != nil {
		skip = own.Family
	}
	if fam, ok := p.connectorFamily(n, n.feed.connectors[k].fixesPolarity, skip); ok {
		c := domain.Connector{Family: fam.Family}
		return []candidate{{
			change: fmt.Sprintf("Use a %s connector pair on the feed to %s instead: rated %s A and %s V for %s A at up to %s V "+
				"(within %s of its rating).", fam.Family, n.id, num(fam.RatingA), num(fam.RatingV), num(n.run), num(n.vHigh), pct(u)),
			edits: []edit{{node: i, path: fmt.Sprintf("/feed/connectors/%d", k), value: c, rank: fam.RatingA,
				set: func(n *domain.Node) { n.Feed.Connectors[k] = c }}},
			part: need, local: true,
		}}, ""
	}
	c := domain.Connector{RatingA: ptrF(needA), RatingV: ptrF(needV)}
	if n.feed.connectors[k].fixesPolarity {
		c.FixesPolarity = boolPtr(true)
	}
	return []candidate{{
		change: fmt.Sprintf("Use a connector pair on the feed to %s rated at least %s A and %s V: no stored family is.", n.id,
			num(needA), num(needV)),
		edits: []edit{{node: i, path: fmt.Sprintf("/feed/connectors/%d", k), value: c, rank: needA,
			set: func(n *domain.Node) { n.Feed.Connectors[k] = c }}},
		part: need, local: true,
	}}, ""
}

// --- regulators and drivers

func topologyName(t topology) string {
	switch t {
	case topoBuck:
		return domain.TopologyBuck
	case topoBoost:
		return domain.TopologyBoost
	case topoBuckBoost:
		return domain.TopologyBuckBoost
	}
	return domain.TopologyLinear
}

// regulatorNeed is what any part taking regulator n's place must be: the
// same output, its input's high end, and at least its output rating.
func regulatorNeed(n *node, topo string) *PartNeed {
	return &PartNeed{Kind: "regulator", Topology: topo,
		AtLeast: map[string]float64{"output_v": n.outputV, "max_input_v": n.vHigh, "max_output_a": n.maxOutA},
		AtMost:  map[string]float64{"output_v": n.outputV}}
}

func (p *proposer) regulatorCurrent(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	u := p.ru.limits.utilisation()
	v := ratingFor(max(n.outPeak, n.outRun/u), func(v float64) bool { return !(n.outPeak > v) && !(n.outRun > u*v) })
	need := regulatorNeed(n, topologyName(n.topo))
	need.AtLeast["max_output_a"] = v
	return []candidate{{
		change: fmt.Sprintf("Use a regulator rated for at least %s A out (max_output_a) in place of %s: it delivers %s A and surges of "+
			"%s A, within %s of that rating.", num(v), n.id, num(n.outRun), num(n.outPeak), pct(u)),
		edits: []edit{setField(i, "max_output_a", v, func(n *domain.Node, v *float64) { n.MaxOutputA = v })},
		part:  need, local: true,
	}}, ""
}

// toSwitching makes regulator i a converter of topology topo, which
// holds its output from any input its feed can carry. The design's θJA
// was the old part's, so it goes, and the converter's heat is judged as a
// board's with no heat sink: where the limits' default efficiency sheds
// more than that, the converter must be more efficient, and says so.
func (p *proposer) toSwitching(i int, topo string, why string) (candidate, bool) {
	n := &p.r.t.nodes[i]
	eff := p.ru.limits.Regulators.SwitchingEfficiency.Value
	effSaid := "at " + pct(eff) + " efficiency (the limits' default)"
	limit := p.ru.limits.Regulators.NoHeatsinkMaxW.Value
	out, iq := n.outputV*n.outRun, n.vHigh*n.quiescentA
	if n.switching() {
		eff = n.efficiency
		effSaid = "at its " + pct(eff) + " efficiency"
	}
	var edits []edit
	if out*(1/eff-1)+iq > limit {
		need := ratingFor(out/(out+limit-iq), func(v float64) bool { return out*(1/v-1)+iq <= limit })
		if limit <= iq || !(need > 0) || need >= 1 {
			return candidate{}, false
		}
		eff, effSaid = need, "at "+pct(need)+" efficiency or better"
		edits = append(edits, setField(i, "efficiency", need, func(n *domain.Node, v *float64) { n.Efficiency = v }))
	}
	loss := electric.SwitchingLossW(n.outputV, n.outRun, eff)
	rank := 1.0
	if topo == domain.TopologyBuckBoost {
		rank = 2
	}
	edits = append(edits, edit{node: i, path: "/topology", value: topo, rank: rank, part: true, set: func(n *domain.Node) { n.Topology = topo }},
		removeField(i, "theta_ja_c_per_w", func(n *domain.Node) { n.ThetaJACPerW = nil }),
		removeField(i, "tj_max_c", func(n *domain.Node) { n.TjMaxC = nil }))
	if n.topo == topoLinear {
		edits = append(edits, removeField(i, "dropout_v", func(n *domain.Node) { n.DropoutV = nil }))
	} else {
		edits = append(edits, removeField(i, "min_input_v", func(n *domain.Node) { n.MinInputV = nil }))
	}
	kind := "a buck converter"
	if topo == domain.TopologyBuckBoost {
		kind = "a buck-boost converter"
	}
	need := regulatorNeed(n, topo)
	if len(edits) > 0 && edits[0].path == "/efficiency" {
		need.AtLeast["efficiency"] = eff
	}
	return candidate{
		change: fmt.Sprintf("Use %s in place of %s (%s): %s it sheds about %s W delivering %s A at %s V.", kind, n.id, why,
			effSaid, num(loss), num(n.outRun), num(n.outputV)),
		edits: edits, part: need,
	}, true
}

func (p *proposer) regulatorThermal(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	if n.switching() {
		return p.switchingThermal(i)
	}
	powerW, tj := p.r.junction(n)
	topo := domain.TopologyBuck
	if n.vLow < n.outputV {
		topo = domain.TopologyBuckBoost
	}
	var out []candidate
	if c, ok := p.toSwitching(i, topo, fmt.Sprintf("the linear one sheds %s W and its junction reaches %s °C", num(powerW), num(tj))); ok {
		out = append(out, c)
	}
	if c, ok := p.heatsinkFor(i, powerW); ok {
		out = append(out, c)
	}
	if len(out) == 0 {
		return nil, fmt.Sprintf("Neither a converter nor a heatsink keeps %s's heat in bounds: it sheds %s W.", n.id, num(powerW))
	}
	return out, ""
}

func (p *proposer) regulatorHeadroom(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	var out []candidate
	switch {
	case n.maxInputV > 0 && n.vHigh > n.maxInputV:
		v := ratingFor(n.vHigh, func(v float64) bool { return !(n.vHigh > v) })
		need := regulatorNeed(n, topologyName(n.topo))
		need.AtLeast["max_input_v"] = v
		out = append(out, candidate{
			change: fmt.Sprintf("Use a regulator rated for at least %s V in (max_input_v) in place of %s: a full source gives it %s V.",
				num(v), n.id, num(n.vHigh)),
			edits: []edit{setField(i, "max_input_v", v, func(n *domain.Node, v *float64) { n.MaxInputV = v })},
			part:  need, local: true,
		})
	case n.switching() && (n.collapsed || !p.r.t.converged):
		return p.wireCandidates(i)
	case n.topo == topoLinear:
		if d := limitFor(n.vLow-n.outputV, func(v float64) bool { return !(n.vLow < n.outputV+v) }); d > 0 && d < n.dropoutV {
			need := regulatorNeed(n, domain.TopologyLinear)
			need.AtMost["dropout_v"] = d
			out = append(out, candidate{
				change: fmt.Sprintf("Use a low-dropout regulator in place of %s, dropout_v at most %s V: its input falls to %s V, "+
					"and it must hold %s V.", n.id, num(d), num(n.vLow), num(n.outputV)),
				edits: []edit{setField(i, "dropout_v", d, func(n *domain.Node, v *float64) { n.DropoutV = v })},
				part:  need, local: false,
			})
			out[len(out)-1].edits[0].rank = -d
		}
		if c, ok := p.toSwitching(i, domain.TopologyBuckBoost, fmt.Sprintf("its input falls to %s V, below the %s V it needs",
			num(n.vLow), num(n.outputV+n.dropoutV))); ok {
			out = append(out, c)
		}
	default:
		lo := n.minWorkingInputV()
		if n.minInputV > 0 && n.vLow < n.minInputV && (n.topo != topoBuck || n.vLow >= n.outputV) {
			v := limitFor(n.vLow, func(v float64) bool { return !(n.vLow < v) })
			if v > 0 {
				need := regulatorNeed(n, topologyName(n.topo))
				need.AtMost["min_input_v"] = v
				out = append(out, candidate{
					change: fmt.Sprintf("Use a converter that works from %s V or less (min_input_v) in place of %s: its input falls to %s V.",
						num(v), n.id, num(n.vLow)),
					edits: []edit{setField(i, "min_input_v", v, func(n *domain.Node, v *float64) { n.MinInputV = v })},
					part:  need,
				})
				out[len(out)-1].edits[0].rank = -v
			}
		}
		if n.topo != topoBuckBoost {
			if c, ok := p.toSwitching(i, domain.TopologyBuckBoost, fmt.Sprintf("its input runs from %s V to %s V, and it needs "+
				"%s V or more to hold %s V", num(n.vLow), num(n.vHigh), num(max(lo, n.outputV)), num(n.outputV))); ok {
				out = append(out, c)
			}
		}
	}
	out = append(out, p.sourceCandidates(n.root, 1)...)
	if len(out) == 0 {
		return nil, "No single change of this regulator or its source clears it."
	}
	return out, ""
}

// driverNeed is what any driver taking driver n's place must be.
func driverNeed(n *node) *PartNeed {
	need := &PartNeed{Kind: "driver", AtLeast: map[string]float64{"max_input_v": n.maxInputV, "continuous_a": n.continuousA}}
	if n.peakRatingA > 0 {
		need.AtLeast["peak_a"] = n.peakRatingA
	}
	return need
}

func (p *proposer) driverVoltage(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	u := p.ru.limits.utilisation()
	v := ratingFor(n.vHigh/u, func(v float64) bool { return !(n.vHigh > u*v) })
	need := driverNeed(n)
	need.AtLeast["max_input_v"] = v
	out := []candidate{{
		change: fmt.Sprintf("Use a driver rated for at least %s V in (max_input_v) in place of %s: a full source gives it %s V, "+
			"within %s of that rating.", num(v), n.id, num(n.vHigh), pct(u)),
		edits: []edit{setField(i, "max_input_v", v, func(n *domain.Node, v *float64) { n.MaxInputV = v })},
		part:  need, local: true,
	}}
	return append(out, p.sourceCandidates(n.root, 1)...), ""
}

func (p *proposer) driverCurrent(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	u := p.ru.limits.utilisation()
	cont := ratingFor(n.outRun/u, func(v float64) bool { return !(n.outRun > u*v) })
	cont = max(cont, n.continuousA)
	need := driverNeed(n)
	need.AtLeast["continuous_a"] = cont
	edits := []edit{setField(i, "continuous_a", cont, func(n *domain.Node, v *float64) { n.ContinuousA = v })}
	said := fmt.Sprintf("%s A continuously", num(cont))
	if n.peakRatingA > 0 {
		peak := ratingFor(n.outPeak/u, func(v float64) bool { return !(n.outPeak > u*v) })
		peak = max(peak, n.peakRatingA, cont)
		need.AtLeast["peak_a"] = peak
		edits = append(edits, setField(i, "peak_a", peak, func(n *domain.Node, v *float64) { n.PeakA = v }))
		said += fmt.Sprintf(" and %s A peak", num(peak))
	}
	return []candidate{{
		change: fmt.Sprintf("Use a driver rated for at least %s in place of %s: it carries %s A and surges of %s A, within %s of "+
			"those ratings.", said, n.id, num(n.outRun), num(n.outPeak), pct(u)),
		edits: edits, part: need, local: true,
	}}, ""
}

// --- loads and sources

func (p *proposer) voltageRange(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	if !n.hasMaxV && !(n.hasMinV && n.minV > 0) {
		return nil, fmt.Sprintf("%s gives no min_v or max_v: take them from its datasheet or measure them; there is nothing to "+
			"change until they are known.", n.id)
	}
	w := p.window(n.root)
	if len(w.cands) == 0 {
		return nil, w.why
	}
	return w.cands, ""
}

// sourceCandidates are the first limit changes of the source's voltage.
func (p *proposer) sourceCandidates(root, limit int) []candidate {
	w := p.window(root)
	return w.cands[:min(limit, len(w.cands))]
}

// batteryEdits changes the number of strings of battery i to parallel,
// scaling a max_discharge_a the design or its component states with it.
func (p *proposer) batteryEdits(i, parallel int) []edit {
	n := &p.r.t.nodes[i]
	was := n.pack.Parallel
	edits := []edit{{node: i, path: "/parallel", value: parallel, rank: float64(parallel), part: true,
		set: func(n *domain.Node) { n.Parallel = &parallel }}}
	if dn := p.materialized(i); dn.MaxDischargeA != nil {
		v := *dn.MaxDischargeA * float64(parallel) / float64(was)
		edits = append(edits, setField(i, "max_discharge_a", v, func(n *domain.Node, v *float64) { n.MaxDischargeA = v }))
	}
	return edits
}

func (p *proposer) sourceCurrent(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	if n.kind == kindSupply {
		v := ratingFor(n.peak, func(v float64) bool { return !(n.peak > v) })
		return []candidate{{
			change: fmt.Sprintf("Use a supply rated for at least %s A (max_a) in place of %s: it delivers %s A and surges of %s A.",
				num(v), n.id, num(n.run), num(n.peak)),
			edits: []edit{setField(i, "max_a", v, func(n *domain.Node, v *float64) { n.MaxA = v })},
		}}, ""
	}
	pk := n.pack
	nd := &p.r.needs[p.r.slot[i]]
	limit := domain.MaxPackCells / pk.Series
	for par := pk.Parallel + 1; par <= limit; par++ {
		md := n.maxDischargeA * float64(par) / float64(pk.Parallel)
		sag := n.vNom - n.peak*float64(pk.Series)*pk.Chem.InternalOhm/float64(par)
		if n.run > md || n.peak > md || (!math.IsInf(nd.criticalV, 0) && sag < nd.criticalV) {
			continue
		}
		return []candidate{{
			change: fmt.Sprintf("Use %d strings of cells in parallel in %s instead of %d: it may then deliver %s A, for %s A running "+
				"and %s A surges.", par, n.id, pk.Parallel, num(md), num(n.run), num(n.peak)),
			edits: p.batteryEdits(i, par),
		}}, ""
	}
	return nil, fmt.Sprintf("Even %d strings in parallel would not let %s deliver %s A: the load is too much for this pack.",
		limit, n.id, num(n.peak))
}

func (p *proposer) runtime(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	pk := n.pack
	target := *p.doc.TargetRuntimeH
	var hours float64
	for _, rt := range p.rep.Runtime {
		if rt.Source == n.id && rt.Hours != nil {
			hours = *rt.Hours
		}
	}
	k := 1.0
	if pk.Chem.PeukertExponent > 1 && pk.Chem.RatedHours > 0 {
		k = pk.Chem.PeukertExponent
	}
	if !(hours > 0) {
		return nil, "The runtime is not known, so no capacity can be worked out for it."
	}
	// Runtime grows as capacity to the power k (Peukert; k = 1 without it).
	par := int(math.Ceil(float64(pk.Parallel)*math.Pow(target/hours, 1/k) - 1e-9))
	par = max(par, pk.Parallel+1)
	if par*pk.Series > domain.MaxPackCells {
		return nil, fmt.Sprintf("%s would need %d strings in parallel to last %s h, more cells than a design may hold.", n.id, par, num(target))
	}
	gain := math.Pow(float64(par)/float64(pk.Parallel), k)
	return []candidate{{
		change: fmt.Sprintf("Use %d strings of cells in parallel in %s instead of %d: %s Ah instead of %s Ah, about %s h at %s A "+
			"average, meeting the %s h target.", par, n.id, pk.Parallel, num(pk.CellCapacityAh*float64(par)), num(pk.CapacityAh()),
			num(hours*gain), num(n.avg), num(target)),
		edits: p.batteryEdits(i, par),
	}}, ""
}
