package review

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strconv"

	"wattshelf/domain"
	"wattshelf/domain/electric"
)

// Remedies for the part hazards: a converter's heat, a reversible
// connector, a rail motors push energy back into, a lithium pack's
// protection.

// connectorFamily is the lightest stored family, by current rating, that
// carries n's feed within the utilisation threshold and states a voltage
// rating that does too; one that fixes polarity when keyed.
func (p *proposer) connectorFamily(n *node, keyed bool, skip string) (ConnectorFamily, bool) {
	u := p.ru.limits.utilisation()
	fams := slices.Clone(p.ru.limits.Connectors)
	slices.SortStableFunc(fams, func(a, b ConnectorFamily) int { return cmp.Compare(a.RatingA, b.RatingA) })
	for _, fam := range fams {
		fixes := fam.FixesPolarity != nil && *fam.FixesPolarity
		if fam.Family == skip || n.run > u*fam.RatingA || !(fam.RatingV > 0) || n.vHigh > u*fam.RatingV || (keyed && !fixes) {
			continue
		}
		return fam, true
	}
	return ConnectorFamily{}, false
}

// connectorPolarity replaces every connector of the feed to node i that
// can be mated the wrong way round with the lightest keyed family rated
// for the feed.
func (p *proposer) connectorPolarity(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	fam, ok := p.connectorFamily(n, true, "")
	if !ok {
		return nil, fmt.Sprintf("No stored connector family that mates one way only is rated for %s A at %s V: give %s "+
			"reverse-polarity protection (a series diode or FET) and state its reverse_protection_drop_v.", num(n.run),
			num(n.vHigh), n.id)
	}
	c := domain.Connector{Family: fam.Family}
	var edits []edit
	for k, cn := range n.feed.connectors {
		if cn.fixesPolarity {
			continue
		}
		edits = append(edits, edit{node: i, path: fmt.Sprintf("/feed/connectors/%d", k), value: c, rank: fam.RatingA,
			set: func(n *domain.Node) { n.Feed.Connectors[k] = c }})
	}
	u := p.ru.limits.utilisation()
	return []candidate{{
		change: fmt.Sprintf("Use %s connectors, which mate one way only, on the feed to %s: rated %s A and %s V for %s A at up "+
			"to %s V (within %s of their rating).", fam.Family, n.id, num(fam.RatingA), num(fam.RatingV), num(n.run), num(n.vHigh), pct(u)),
		edits: edits, local: true,
		part: &PartNeed{Kind: "connector", AtLeast: map[string]float64{
			"rating_a": ratingFor(n.run/u, func(v float64) bool { return !(n.run > u*v) }),
			"rating_v": ratingFor(n.vHigh/u, func(v float64) bool { return !(n.vHigh > u*v) })}},
	}}, ""
}

// converterLoss is a switching regulator's heat at efficiency eff, at its
// input high end (heat's formula).
func converterLoss(n *node, eff float64) float64 {
	return electric.SwitchingLossW(n.outHigh, n.outRun, eff) + n.vHigh*n.quiescentA
}

// efficiencyFor is the least two-digit efficiency at which a switching
// regulator sheds no more than limitW, or a candidate-less reason.
func (p *proposer) efficiencyFor(i int, limitW float64, why string) (candidate, bool) {
	n := &p.r.t.nodes[i]
	out := n.outHigh * n.outRun
	room := limitW - n.vHigh*n.quiescentA
	if !(out > 0) || !(room > 0) {
		return candidate{}, false
	}
	eff := ratingFor(out/(out+room), func(v float64) bool { return converterLoss(n, v) <= limitW })
	if !(eff > n.efficiency) || eff >= 1 {
		return candidate{}, false
	}
	need := regulatorNeed(n, topologyName(n.topo))
	need.AtLeast["efficiency"] = eff
	return candidate{
		change: fmt.Sprintf("Use a converter of at least %s efficiency in place of %s: delivering %s W, it then sheds %s W "+
			"instead of %s W%s.", pct(eff), n.id, num(out), num(converterLoss(n, eff)), num(converterLoss(n, n.efficiency)), why),
		edits: []edit{setField(i, "efficiency", eff, func(n *domain.Node, v *float64) { n.Efficiency = v })},
		part:  need,
	}, true
}

// heatsinkFor is a θJA that keeps regulator i's junction, shedding powerW,
// under its limit less the thermal margin.
func (p *proposer) heatsinkFor(i int, powerW float64) (candidate, bool) {
	n := &p.r.t.nodes[i]
	ceiling := n.tjMaxC - p.ru.limits.Policy.ThermalMarginC.Value
	if !(powerW > 0) || !(ceiling > p.r.ambient) {
		return candidate{}, false
	}
	theta := limitFor((ceiling-p.r.ambient)/powerW, func(v float64) bool { return p.r.ambient+powerW*v < ceiling })
	if theta < 0.1 || (n.thetaJA > 0 && theta >= n.thetaJA) {
		return candidate{}, false
	}
	tj := p.r.ambient + powerW*theta
	e := setField(i, "theta_ja_c_per_w", theta, func(n *domain.Node, v *float64) { n.ThetaJACPerW = v })
	e.rank = -theta // the lower θJA is the stronger change
	return candidate{
		change: fmt.Sprintf("Mount %s on a heatsink that brings θJA to %s °C/W or less: shedding %s W, its junction stays at %s °C, "+
			"%s °C under its %s °C limit.", n.id, num(theta), num(powerW), num(tj), num(n.tjMaxC-tj), num(n.tjMaxC)),
		edits: []edit{e}, local: true,
	}, true
}

// regulatorHeat is a more efficient converter, or a heatsink whose θJA
// the design then states, for a converter that sheds too much heat.
func (p *proposer) regulatorHeat(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	limit := p.ru.limits.Regulators.NoHeatsinkMaxW.Value
	var out []candidate
	if c, ok := p.efficiencyFor(i, limit, fmt.Sprintf(", within the %s W a board with no heat sink sheds", num(limit))); ok {
		out = append(out, c)
	}
	if c, ok := p.heatsinkFor(i, heat(n)); ok {
		out = append(out, c)
	}
	if len(out) == 0 {
		return nil, fmt.Sprintf("No converter efficiency below 100 %% brings %s's heat under %s W: it needs a heat sink "+
			"(state its theta_ja_c_per_w) or a lighter load.", n.id, num(limit))
	}
	return out, ""
}

// switchingThermal is regulatorThermal's remedy for a converter that
// states its θJA: a more efficient one, or a better heatsink.
func (p *proposer) switchingThermal(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	ceiling := n.tjMaxC - p.ru.limits.Policy.ThermalMarginC.Value
	var out []candidate
	if limitW := (ceiling - p.r.ambient) / n.thetaJA; limitW > 0 {
		// Just under the power that reaches the ceiling: the check wants
		// the junction below it.
		if c, ok := p.efficiencyFor(i, limitW*(1-1e-9), fmt.Sprintf(", keeping its junction under %s °C", num(ceiling))); ok {
			out = append(out, c)
		}
	}
	if c, ok := p.heatsinkFor(i, heat(n)); ok {
		out = append(out, c)
	}
	if len(out) == 0 {
		return nil, fmt.Sprintf("No better converter or heatsink keeps %s's junction under %s °C at %s °C ambient.", n.id,
			num(ceiling), num(p.r.ambient))
	}
	return out, ""
}

// railBackfeed is a clamp on the rail node i makes, for the energy its
// motors push back: about 10 % above the rail's high end so it does not
// conduct in use (common practice for a TVS stand-off, from memory), and
// below the lowest maximum of the parts on the rail. A supply or
// converter that sinks current is the other way.
func (p *proposer) railBackfeed(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	if p.rails == nil {
		p.rails = p.r.rails()
	}
	s := p.rails[int32(i)]
	if s == nil {
		return nil, "No motor on this rail was found to push energy back."
	}
	var out []candidate
	clamp := twoDigits(1.1*n.outHigh, true)
	if clamp > s.lowestMax {
		clamp = limitFor(s.lowestMax, func(v float64) bool { return v > n.outHigh && v <= s.lowestMax })
	}
	if clamp > n.outHigh {
		below := "no part on it states a maximum voltage"
		if !math.IsInf(s.lowestMax, 1) {
			below = "below the " + num(s.lowestMax) + " V the lowest-rated part on it takes"
		}
		e := setField(i, "clamp_v", clamp, func(n *domain.Node, v *float64) { n.ClampV = v })
		e.rank = -clamp
		out = append(out, candidate{
			change: fmt.Sprintf("Fit a clamp on %s's rail (a TVS diode, zener or braking resistor) that takes the energy %s push "+
				"back at %s V: above the rail's %s V, %s.", n.id, s.motorText(), num(clamp), num(n.outHigh), below),
			edits: []edit{e}, local: true,
		})
	}
	if n.kind == kindSupply || n.switching() {
		kind := "a supply"
		if n.switching() {
			kind = "a converter (synchronous, in forced PWM)"
		}
		out = append(out, candidate{
			change: fmt.Sprintf("Or use %s that sinks current in place of %s, so what %s push back is taken.", kind, n.id, s.motorText()),
			edits: []edit{{node: i, path: "/sinks_current", value: true, part: true,
				set: func(n *domain.Node) { n.SinksCurrent = true }}},
			local: true,
		})
	}
	if len(out) == 0 {
		return nil, fmt.Sprintf("No clamp voltage lies above %s's %s V rail and within what the parts on it take: run the "+
			"motors from a battery.", n.id, num(n.outHigh))
	}
	return out, ""
}

// batteryProtection fuses the unfused feed from battery i whose wire the
// protection circuit's trip would not protect (the trip finding); a pack
// that states no protection circuit gets none: only the pack or its board
// can say its figures.
func (p *proposer) batteryProtection(c Check, i int, gauges map[int]electric.Gauge, protAmp []float64, protID []string) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	if len(n.protection.missing()) > 0 {
		return nil, fmt.Sprintf("State the protection circuit of %s (%s): the pack or its protection board says them; "+
			"if it has none, fit a board made for %d %s cells in series.", n.id, joinIDs(n.protection.missing()), n.pack.Series,
			n.pack.Chem.Name)
	}
	weakest := -1
	for _, k := range p.r.t.children(i) {
		ch := int(k)
		if p.r.t.nodes[ch].feed.fuse == nil && (weakest < 0 || protAmp[ch] < protAmp[weakest]) {
			weakest = ch
		}
	}
	if weakest < 0 {
		return nil, "Every feed from the pack is fused already."
	}
	cands, why := p.fuseCandidates(Check{Check: CheckFuseMissing}, weakest, gauges, protAmp, protID)
	for k := range cands {
		cands[k].change += fmt.Sprintf(" Then the fuse, not %s's %s A trip, protects that wire.", n.id, num(n.protection.tripA))
	}
	return cands, why
}

// motorStall stops or carries a jammed motor's stall current: a current
// limit on its driver no higher than the driver carries continuously and
// the tightest wire on its path takes, else the lightest wire that takes
// the jam on that feed.
func (p *proposer) motorStall(i int) ([]candidate, string) {
	t := p.r.t
	n := &t.nodes[i]
	if p.r.paths == nil {
		return nil, "The fault checks did not run."
	}
	fp := &p.r.paths[i]
	stall := n.stallA * n.vHigh / n.ratedV
	extra := max(stall-n.run, 0)
	w := &t.nodes[fp.spareAt]
	var out []candidate
	if fp.driver >= 0 {
		d := &t.nodes[fp.driver]
		// A driver the proposal already replaces with a stronger one is
		// held to that one's continuous rating.
		cont, with := d.continuousA, ""
		if v, ok := p.firstValue(int(fp.driver), "/continuous_a"); ok {
			cont, with = v.(float64), " (the driver proposed for its own finding)"
		}
		// Held at lim, the driver passes lim and the jam adds lim − its
		// running output to every feed on the way.
		ok := func(v float64) bool { return v >= d.outRun && v <= cont && w.run+max(v-d.outRun, 0) <= w.feed.ampacity }
		if lim := limitFor(min(cont, d.outRun+w.feed.ampacity-w.run), ok); lim > 0 {
			e := setField(int(fp.driver), "current_limit_a", lim, func(n *domain.Node, v *float64) { n.CurrentLimitA = v })
			e.rank = -lim
			need := driverNeed(d)
			need.AtMost = map[string]float64{"current_limit_a": lim}
			out = append(out, candidate{
				change: fmt.Sprintf("Use a driver in place of %s that holds its output to %s A or less (current_limit_a): a jammed %s "+
					"then draws no more than that, within its %s A continuous rating%s and the %s A of the feed to %s.", d.id,
					num(lim), n.id, num(cont), with, num(w.feed.ampacity), w.id),
				edits: []edit{e}, part: need,
			})
		}
	}
	u := p.ru.limits.utilisation()
	wireA := w.run + extra
	for _, g := range p.tableGauges() {
		if g.Metric != w.feed.gauge.Metric || g.AreaMM2 <= w.feed.gauge.AreaMM2 {
			continue
		}
		amp, _, _, fine := p.feedWith(w, g)
		if !fine || wireA > amp {
			continue
		}
		if d := fp.driver; d >= 0 && (t.nodes[d].peakRatingA > 0 && t.nodes[d].outRun+extra > t.nodes[d].peakRatingA ||
			t.nodes[d].outRun+extra > t.nodes[d].continuousA) {
			break // the driver cannot carry the jam either: a wire alone does not clear it
		}
		label := g.Label
		out = append(out, candidate{
			change: fmt.Sprintf("Use %s wire for the feed to %s instead of %s: %s A ampacity, enough for the %s A it carries if %s "+
				"jams (%s A in use, within %s).", label, w.id, w.feed.gauge.Label, num(amp), num(wireA), n.id, num(w.run), pct(u)),
			edits: []edit{{node: int(fp.spareAt), path: "/feed/wire/gauge", value: label, rank: g.AreaMM2,
				set: func(n *domain.Node) { n.Feed.Wire.Gauge = label }}},
			part: &PartNeed{Kind: "wire", AtLeast: map[string]float64{"area_mm2": math.Round(g.AreaMM2*1e4) / 1e4}},
		})
		break
	}
	if len(out) == 0 {
		return nil, fmt.Sprintf("No driver current limit or thicker wire alone stops or carries the %s A a jammed %s draws: "+
			"fit a fuse that opens at it.", num(stall), n.id)
	}
	return out, ""
}

// wireTemperature is wire whose insulation is rated above the air around
// it: the lowest column of the conductor table that is, and that still
// carries the feed within the utilisation threshold once derated.
func (p *proposer) wireTemperature(i int) ([]candidate, string) {
	n := &p.r.t.nodes[i]
	f := n.feed
	u := p.ru.limits.utilisation()
	fl := p.ru.limits.Faults
	heat := wireHeat{tableAmbientC: fl.TableAmbientC.Value, enclosedFactor: fl.EnclosedFactor.Value}
	var cols []float64 // the insulation columns of the conductor table
	for _, row := range p.ru.limits.Conductors.Rows {
		for k := range row.Ampacity {
			if c, err := strconv.ParseFloat(k, 64); err == nil && !slices.Contains(cols, c) {
				cols = append(cols, c)
			}
		}
	}
	slices.Sort(cols)
	for _, col := range cols {
		if col <= f.insulationC || col <= p.r.ambient {
			continue
		}
		table, err := p.ru.limits.Conductors.Ampacity(f.gauge, col, f.bundled)
		amp := table * heat.factor(col, p.r.ambient, f.enclosed)
		if err != nil || n.run > u*amp {
			continue
		}
		return []candidate{{
			change: fmt.Sprintf("Use %s wire with insulation rated %s °C for the feed to %s: in %s °C air it keeps %s A of "+
				"ampacity for its %s A.", f.gauge.Label, num(col), n.id, num(p.r.ambient), num(amp), num(n.run)),
			edits: []edit{{node: i, path: "/feed/wire/insulation_c", value: col, rank: col,
				set: func(n *domain.Node) { n.Feed.Wire.InsulationC = ptrF(col) }}},
			part: &PartNeed{Kind: "wire", AtLeast: map[string]float64{"area_mm2": math.Round(f.gauge.AreaMM2*1e4) / 1e4}},
		}}, ""
	}
	return nil, fmt.Sprintf("No insulation in the conductor table is rated far enough above %s °C for the feed to %s: keep "+
		"the wire out of the heat.", num(p.r.ambient), n.id)
}
