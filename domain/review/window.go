package review

import (
	"fmt"
	"math"
	"strconv"

	"wattshelf/domain"
	"wattshelf/domain/electric"
)

// sourceWindow is what a source's voltage could change to so that every
// part whose input follows it stays inside its window from full to
// cutoff: candidates (the pack's own chemistry first, then the others in
// the limits; a supply's voltage), or why there are none.
type sourceWindow struct {
	cands []candidate
	why   string
}

// window works out the source window of the tree under root once.
func (p *proposer) window(root int) *sourceWindow {
	if w, ok := p.windows[root]; ok {
		return w
	}
	w := p.workWindow(root)
	p.windows[root] = w
	return w
}

// level is what a check of a part may come to under a changed source
// voltage: a motor or load must pass, so its window is what the change is
// for; any other part must do no worse than it does now.
func (p *proposer) level(check, id, pointer string) Status {
	if b, ok := p.base[checkKey{check, id, pointer}]; ok && b.status != Pass {
		return b.status
	}
	return Pass
}

// lowNeed is the least source voltage at the low end (a battery's
// cutoff) that keeps every part under root working, read back through
// the feed drops and regulators of the operating point, and the part that
// asks it. Parts no source voltage can satisfy (a regulator on the way
// holds them too low) are not the source's to fix and are left out, and
// so is a regulator that drops out now.
func (p *proposer) lowNeed(root int) (float64, string) {
	t := p.r.t
	need, by := 0.0, ""
	for i := range t.nodes {
		n := &t.nodes[i]
		if n.root != root || i == root {
			continue
		}
		var v float64
		switch {
		case (n.kind == kindMotor || n.kind == kindLoad) && n.hasMinV:
			v = n.minV
		case n.kind == kindRegulator && p.level(CheckRegulatorHeadroom, n.id, "") != Pass:
		case n.kind == kindRegulator && n.topo == topoLinear:
			v = n.outputV + n.dropoutV
		case n.kind == kindRegulator:
			v = n.minWorkingInputV()
		}
		if !(v > 0) {
			continue
		}
		if at := n.path.packVFor(v); !math.IsInf(at, 1) && at > need {
			need, by = at, n.id
		}
	}
	return need, by
}

// ceilings are, per node, the highest input it may see under a changed
// source voltage (maxIn) and, for a regulator, the junction temperature
// it must stay under (tj, with a θJA) or the heat it may shed (heatW, a
// converter without one), by level.
type ceilings struct{ maxIn, tj, heatW []float64 }

func (p *proposer) ceilings(root int) ceilings {
	t := p.r.t
	u := p.ru.limits.utilisation()
	inf := math.Inf(1)
	c := ceilings{maxIn: make([]float64, len(t.nodes)), tj: make([]float64, len(t.nodes)), heatW: make([]float64, len(t.nodes))}
	for i := range t.nodes {
		n := &t.nodes[i]
		c.maxIn[i], c.tj[i], c.heatW[i] = inf, inf, inf
		if n.root != root || i == root {
			continue
		}
		limitTo := func(limit float64) { c.maxIn[i] = min(c.maxIn[i], limit) }
		switch n.kind {
		case kindMotor, kindLoad:
			if n.hasMaxV {
				limitTo(n.maxV)
			}
		case kindRegulator:
			if n.maxInputV > 0 && p.level(CheckRegulatorHeadroom, n.id, "") != Fail {
				limitTo(n.maxInputV)
			}
			switch {
			case n.thetaJA > 0 && p.level(CheckRegulatorThermal, n.id, "") == Pass:
				c.tj[i] = n.tjMaxC - p.ru.limits.Policy.ThermalMarginC.Value
			case n.thetaJA > 0 && p.level(CheckRegulatorThermal, n.id, "") == Warn:
				c.tj[i] = n.tjMaxC
			case n.switching() && p.level(CheckRegulatorHeat, n.id, "") == Pass:
				c.heatW[i] = p.ru.limits.Regulators.NoHeatsinkMaxW.Value
			}
		case kindDriver:
			switch p.level(CheckDriverVoltage, n.id, "") {
			case Pass:
				limitTo(u * n.maxInputV)
			case Warn:
				limitTo(n.maxInputV)
			}
		}
		for k, cn := range n.feed.connectors {
			if !(cn.ratingV > 0) {
				continue
			}
			switch p.level(CheckConnectorRating, n.id, n.feedPtr()+"/connectors/"+strconv.Itoa(k)) {
			case Pass:
				limitTo(u * cn.ratingV)
			case Warn:
				limitTo(cn.ratingV)
			}
		}
		// Past the fuse's DC rating both its rating and its interrupt
		// checks fail: bound by it unless both fail already.
		if fu := n.feed.fuse; fu != nil && fu.voltageV > 0 && (p.level(CheckFuseRating, n.id, "") != Fail ||
			p.level(CheckFuseInterrupt, n.id, "") != Fail) {
			limitTo(fu.voltageV)
		}
	}
	return c
}

// highOK reports whether a source whose high end is vFull keeps every
// part under root within its ceilings and the scope. Parts marked in
// ignore are not asked; with collect, every part that fails is marked
// instead. It returns the first part that fails.
func (p *proposer) highOK(root int, vFull float64, c ceilings, ignore []bool, collect bool) (bool, int) {
	t := p.r.t
	if vFull > p.ru.limits.Policy.InScopeMaxV.Value {
		return false, root
	}
	hi := make([]float64, len(t.nodes))
	ok, first := true, -1
	for _, k := range t.order {
		i := int(k)
		n := &t.nodes[i]
		if n.root != root {
			continue
		}
		in := vFull
		if i != root {
			in = hi[n.parent]
		}
		hi[i] = in
		if n.kind == kindRegulator {
			hi[i] = n.regulate(in)
		}
		over := in > c.maxIn[i]
		if !over && n.kind == kindRegulator && (!math.IsInf(c.tj[i], 1) || !math.IsInf(c.heatW[i], 1)) {
			// The regulator's heat at this input, as junction and heat work it out.
			heat := max(electric.LinearDissipationW(in, hi[i], n.outRun, n.quiescentA), 0)
			if n.switching() {
				heat = electric.SwitchingLossW(hi[i], n.outRun, n.efficiency) + in*n.quiescentA
			}
			over = heat > c.heatW[i] || electric.JunctionTempC(p.r.ambient, heat, n.thetaJA) >= c.tj[i]
		}
		if i == root || !over {
			continue
		}
		if collect {
			ignore[i] = true
		} else if !ignore[i] && ok {
			ok, first = false, i
		}
	}
	return ok, first
}

func (p *proposer) workWindow(root int) *sourceWindow {
	src := &p.r.t.nodes[root]
	low, lowID := p.lowNeed(root)
	if src.kind == kindSupply {
		return p.supplyWindow(root, low, lowID)
	}
	w := &sourceWindow{}
	pk := src.pack
	chems := []electric.Chemistry{pk.Chem}
	for _, c := range p.ru.limits.Chemistries {
		if c.Name != pk.Chem.Name {
			chems = append(chems, c)
		}
	}
	ignore := make([]bool, len(p.r.t.nodes))
	c := p.ceilings(root)
	for k, chem := range chems {
		sLow, sHigh, culprit := p.seriesRange(root, chem, low, c, ignore)
		if sLow > sHigh {
			if k == 0 {
				w.why = p.noSeries(src, chem, low, lowID, sLow, culprit)
			}
			continue
		}
		if k == 0 {
			if pk.Series >= sLow && pk.Series <= sHigh {
				w.why = fmt.Sprintf("The %d cells of %s already suit every part whose input follows the pack (%d–%d would): "+
					"the finding comes from the wiring or a part on the way, not the pack's voltage.", pk.Series, src.id, sLow, sHigh)
				return w
			}
			s := min(max(pk.Series, sLow), sHigh)
			w.cands = append(w.cands, candidate{
				change: fmt.Sprintf("Use %d %s cells in series in %s instead of %d (%s–%s V from cutoff to full): any of %d–%d keeps "+
					"every part whose input follows the pack inside its window over the whole discharge.", s, chem.Name, src.id,
					pk.Series, num(float64(s)*chem.CutoffV), num(float64(s)*chem.FullV), sLow, sHigh),
				edits: []edit{{node: root, path: "/series", value: s, rank: float64(s), part: true,
					set: func(n *domain.Node) { n.Series = &s }}},
			})
			continue
		}
		s, name := sLow, chem.Name
		edits := []edit{
			{node: root, path: "/chemistry", value: name, part: true, set: func(n *domain.Node) { n.Chemistry = name }},
			{node: root, path: "/series", value: s, rank: float64(s), part: true, set: func(n *domain.Node) { n.Series = &s }},
			// The cell values and the discharge limit were the old cells'.
			removeField(root, "cell_full_v", func(n *domain.Node) { n.CellFullV = nil }),
			removeField(root, "cell_nominal_v", func(n *domain.Node) { n.CellNominalV = nil }),
			removeField(root, "cell_cutoff_v", func(n *domain.Node) { n.CellCutoffV = nil }),
			removeField(root, "cell_internal_ohm", func(n *domain.Node) { n.CellInternalOhm = nil }),
			removeField(root, "max_discharge_a", func(n *domain.Node) { n.MaxDischargeA = nil }),
		}
		w.cands = append(w.cands, candidate{
			change: fmt.Sprintf("Or make %s a pack of %d %s cells in series (%s–%s V from cutoff to full): any of %d–%d keeps every "+
				"part whose input follows the pack inside its window. The cell capacity stays %s mAh: check the runtime with the "+
				"cells you use.", src.id, s, name, num(float64(s)*chem.CutoffV), num(float64(s)*chem.FullV), sLow, sHigh,
				num(pk.CellCapacityAh*1000)),
			edits: edits,
		})
	}
	return w
}

// seriesRange is the range of series counts of chem that keep every part
// under root in its window: enough for low at the cutoff, and no more
// than every part stands at full charge, inside the scope and the cell
// limit. Parts that even one cell is too much for are not the pack's to
// fix and are left out. An empty range (low > high) comes with the part
// that stands no more.
func (p *proposer) seriesRange(root int, chem electric.Chemistry, low float64, c ceilings, ignore []bool) (sLow, sHigh, culprit int) {
	src := &p.r.t.nodes[root]
	clear(ignore)
	p.highOK(root, chem.FullV, c, ignore, true)
	limit := min(domain.MaxPackCells/src.pack.Parallel, int(math.Floor(p.ru.limits.Policy.InScopeMaxV.Value/chem.FullV+1e-9)))
	sLow = max(1, int(math.Ceil(low/chem.CutoffV-1e-9)))
	if sLow > limit {
		return sLow, limit, root
	}
	if ok, first := p.highOK(root, float64(sLow)*chem.FullV, c, ignore, false); !ok {
		return sLow, sLow - 1, first
	}
	lo, hi := sLow, limit // highOK holds at lo; find the last count it holds for
	for lo < hi {
		mid := (lo + hi + 1) / 2
		if ok, _ := p.highOK(root, float64(mid)*chem.FullV, c, ignore, false); ok {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	return sLow, lo, -1
}

func (p *proposer) noSeries(src *node, chem electric.Chemistry, low float64, lowID string, sLow, culprit int) string {
	if culprit == src.root || culprit < 0 {
		return fmt.Sprintf("No pack of %s cells keeps every part in its window within the %s V these rules cover: %s needs %s V "+
			"or more from the pack at its cutoff.", chem.Name, num(p.ru.limits.Policy.InScopeMaxV.Value), lowID, num(low))
	}
	return fmt.Sprintf("No series count of %s cells keeps every part in its window: %s needs %s V or more from the pack at its "+
		"cutoff (%d cells or more), and %s cannot take what %d cells give when full. Power one of them through a regulator.",
		chem.Name, lowID, num(low), sLow, p.r.t.nodes[culprit].id, sLow)
}

// supplyWindow is the range of voltages a supply at root could give.
func (p *proposer) supplyWindow(root int, low float64, lowID string) *sourceWindow {
	src := &p.r.t.nodes[root]
	ignore := make([]bool, len(p.r.t.nodes))
	c := p.ceilings(root)
	floor := max(low, 0.1)
	p.highOK(root, floor, c, ignore, true)
	lo, hi := floor, p.ru.limits.Policy.InScopeMaxV.Value
	if ok, _ := p.highOK(root, hi, c, ignore, false); !ok {
		if ok, first := p.highOK(root, lo, c, ignore, false); !ok {
			return &sourceWindow{why: fmt.Sprintf("No supply voltage keeps every part in its window: %s needs %s V or more, "+
				"and %s cannot take that.", lowID, num(low), p.r.t.nodes[first].id)}
		}
		for range 40 { // to well under a millivolt
			mid := (lo + hi) / 2
			if ok, _ := p.highOK(root, mid, c, ignore, false); ok {
				lo = mid
			} else {
				hi = mid
			}
		}
		hi = lo
	}
	v := src.outputV
	switch {
	case v < floor:
		v = math.Ceil(floor*10-1e-9) / 10
	case v > hi:
		// The search stops a hair under the ceiling: take the tenth at it
		// when the ceiling itself is allowed.
		v = math.Floor(hi*10+1e-6) / 10
		if ok, _ := p.highOK(root, v, c, ignore, false); !ok {
			v -= 0.1
		}
	default:
		return &sourceWindow{why: fmt.Sprintf("The %s V of %s already suits every part whose input follows it (%s–%s V "+
			"would): the finding comes from the wiring or a part on the way.", num(src.outputV), src.id, num(floor), num(hi))}
	}
	if ok, _ := p.highOK(root, v, c, ignore, false); v < floor || !ok {
		return &sourceWindow{why: fmt.Sprintf("No supply voltage in tenths of a volt lies from %s V to %s V.", num(floor), num(hi))}
	}
	return &sourceWindow{cands: []candidate{{
		change: fmt.Sprintf("Use a %s V supply in place of %s (%s V): anything from %s V to %s V keeps every part whose input "+
			"follows it inside its window.", num(v), src.id, num(src.outputV), num(floor), num(hi)),
		edits: []edit{setField(root, "output_v", v, func(n *domain.Node, v *float64) { n.OutputV = v })},
	}}}
}
