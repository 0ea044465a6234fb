package review

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"wattshelf/domain"
	"wattshelf/domain/electric"
)

// The fault checks: what a build does when something goes wrong, not in
// normal use. fuse.interrupt asks whether each fuse can break the current a
// short just past it would draw, at the circuit's voltage; motor.stall
// whether a jammed motor's stall current is carried, cleared or limited;
// wire.temperature derates each wire for the air around it.

// FaultLimits are the values of the fault checks beside the fuse
// families' fault figures.
type FaultLimits struct {
	// UnstatedLimitMultiple: a supply or regulator that states no current
	// limit is taken to drive this many times its rated current into a
	// short.
	UnstatedLimitMultiple Sourced `json:"unstated_limit_multiple"`
	// TableAmbientC is the air temperature the conductor table holds at.
	TableAmbientC Sourced `json:"table_ambient_c"`
	// EnclosedFactor derates a wire run inside a closed box.
	EnclosedFactor Sourced `json:"enclosed_factor"`
}

func defaultFaultLimits() FaultLimits {
	return FaultLimits{
		UnstatedLimitMultiple: Sourced{10, "common practice, from memory: a supply or regulator without a stated current " +
			"limit drives many times its rating into a short until its output capacitors empty or its protection acts; " +
			"10 × its rated current stands in"},
		TableAmbientC: Sourced{30, "33 CFR 183.425 Table 5: its ampacities hold at 30 °C ambient"},
		EnclosedFactor: Sourced{0.8, "common practice, from memory: a wire inside a closed box sheds its heat into still " +
			"air; take 80 % of the ampacity the table gives"},
	}
}

// faultNeeds are what the fault checks (prospective short-circuit current,
// locked rotor, ampacity at temperature) need from a limits set.
func faultNeeds() []limitsNeed {
	return []limitsNeed{
		{check: CheckFuseInterrupt, missing: missingFuseFigures, fill: fillFuseFigures},
		{check: CheckMotorStall, missing: missingClearing, fill: fillClearing},
		{check: CheckWireTemperature, missing: missingWireHeat, fill: fillWireHeat},
	}
}

func familyPtr(i int) string { return "/fuses/families/" + strconv.Itoa(i) }

// missingFuseFigures: a family without a fault_source predates the fault
// figures (a DC rating of 0 is a legitimate "none published", so only the
// source tells them apart).
func missingFuseFigures(l *Limits) []string {
	var out []string
	for i, f := range l.Fuses.Families {
		if f.FaultSource != "" {
			continue
		}
		ptr := familyPtr(i)
		if f.BreakingCapacityA == 0 {
			out = append(out, ptr+"/breaking_capacity_a")
		}
		if f.DCVoltageV == 0 {
			out = append(out, ptr+"/dc_voltage_v")
		}
		out = append(out, ptr+"/fault_source")
	}
	if l.Faults.UnstatedLimitMultiple.Source == "" {
		out = append(out, "/faults/unstated_limit_multiple")
	}
	return out
}

// cautiousFamily stands in for the fault figures of a family the defaults
// do not have: the weakest published breaking capacity and no DC rating,
// so a fuse of it never passes unseen.
func cautiousFamily() electric.FuseFamily {
	return electric.FuseFamily{
		BreakingCapacityA: 35, BreakingCapacityMultiple: 10, BreakingCapacityAC: true,
		FaultSource: "filled in when the fault checks were added: these limits stored no fault figures for this family, " +
			"so the weakest published ones stand in (IEC 60127-2 low breaking capacity, 35 A or 10 × rating at AC, and " +
			"no DC rating; from memory); replace them from the family's datasheet",
		Clearing: []electric.ClearingGate{
			{Speed: domain.FuseFast, Multiple: 10, WithinS: 1, Source: cautiousGate},
			{Speed: domain.FuseSlow, Multiple: 10, WithinS: 1, Source: cautiousGate},
		},
	}
}

const cautiousGate = "filled in when the fault checks were added: these limits stored no clearing gate for this " +
	"family, so only a current of 10 × its rating counts as opening it within 1 s (cautious, not from a standard); " +
	"replace it from the family's time/current curve"

// defaultFamily is the defaults' family called name, or the cautious one.
func defaultFamily(defaults *Limits, name string) electric.FuseFamily {
	if f, ok := defaults.fuseFamily(name); ok {
		return f
	}
	return cautiousFamily()
}

func fillFuseFigures(l *Limits, defaults *Limits) {
	for i := range l.Fuses.Families {
		f := &l.Fuses.Families[i]
		if f.FaultSource != "" {
			continue
		}
		d := defaultFamily(defaults, f.Name)
		if f.BreakingCapacityA == 0 {
			f.BreakingCapacityA, f.BreakingCapacityMultiple, f.BreakingCapacityAC =
				d.BreakingCapacityA, d.BreakingCapacityMultiple, d.BreakingCapacityAC
		}
		if f.DCVoltageV == 0 {
			f.DCVoltageV = d.DCVoltageV
		}
		f.FaultSource = d.FaultSource
	}
	if l.Faults.UnstatedLimitMultiple.Source == "" {
		l.Faults.UnstatedLimitMultiple = defaults.Faults.UnstatedLimitMultiple
	}
}

func missingClearing(l *Limits) []string {
	var out []string
	for i, f := range l.Fuses.Families {
		if len(f.Clearing) == 0 {
			out = append(out, familyPtr(i)+"/clearing")
		}
	}
	return out
}

func fillClearing(l *Limits, defaults *Limits) {
	for i := range l.Fuses.Families {
		f := &l.Fuses.Families[i]
		if len(f.Clearing) == 0 {
			f.Clearing = slices.Clone(defaultFamily(defaults, f.Name).Clearing)
		}
	}
}

func missingWireHeat(l *Limits) []string {
	var out []string
	if l.Faults.TableAmbientC.Source == "" {
		out = append(out, "/faults/table_ambient_c")
	}
	if l.Faults.EnclosedFactor.Source == "" {
		out = append(out, "/faults/enclosed_factor")
	}
	return out
}

func fillWireHeat(l *Limits, defaults *Limits) {
	if l.Faults.TableAmbientC.Source == "" {
		l.Faults.TableAmbientC = defaults.Faults.TableAmbientC
	}
	if l.Faults.EnclosedFactor.Source == "" {
		l.Faults.EnclosedFactor = defaults.Faults.EnclosedFactor
	}
}

// maxBreakingA bounds a stored breaking capacity: bolt-down fuses break
// tens of kiloamps, nothing on a bench a million.
const maxBreakingA = 1e6

// validateFaultValues checks the fault figures of a limits set whose
// missing values have been filled.
func (l Limits) validateFaultValues(p *domain.Problems) {
	for i, f := range l.Fuses.Families {
		ptr := familyPtr(i)
		if !(f.DCVoltageV >= 0 && f.DCVoltageV <= domain.MaxVoltageV) {
			p.Add(ptr+"/dc_voltage_v", "must be 0 (no DC rating published) or up to %d V", domain.MaxVoltageV)
		}
		if !(f.BreakingCapacityA > 0 && f.BreakingCapacityA <= maxBreakingA) {
			p.Add(ptr+"/breaking_capacity_a", "must be above 0 and at most %g A", maxBreakingA)
		}
		if !(f.BreakingCapacityMultiple >= 0 && f.BreakingCapacityMultiple <= 1000) {
			p.Add(ptr+"/breaking_capacity_multiple", "must be 0 (none) or up to 1000 × the rating")
		}
		if strings.TrimSpace(f.FaultSource) == "" {
			p.Add(ptr+"/fault_source", "is required: name the standard or datasheet, or write \"common practice\" or \"from memory\"")
		}
		if len(f.Clearing) == 0 {
			p.Add(ptr+"/clearing", "needs at least one gate (speed, multiple, within_s, source)")
		}
		var speeds []string
		for j, g := range f.Clearing {
			gp := ptr + "/clearing/" + strconv.Itoa(j)
			switch {
			case g.Speed != domain.FuseFast && g.Speed != domain.FuseSlow:
				p.Add(gp+"/speed", "must be %q or %q", domain.FuseFast, domain.FuseSlow)
			case slices.Contains(speeds, g.Speed):
				p.Add(gp+"/speed", "repeats %q: one gate per speed", g.Speed)
			}
			speeds = append(speeds, g.Speed)
			if !(g.Multiple > 1 && g.Multiple <= 1000) {
				p.Add(gp+"/multiple", "must be above 1 (no fuse opens at its rating) and at most 1000")
			}
			if !(g.WithinS > 0 && g.WithinS <= 3600) {
				p.Add(gp+"/within_s", "must be above 0 and at most 3600 s")
			}
			if strings.TrimSpace(g.Source) == "" {
				p.Add(gp+"/source", "is required")
			}
		}
	}
	checkSourced(p, "/faults/unstated_limit_multiple", l.Faults.UnstatedLimitMultiple, 1, 1000)
	checkSourced(p, "/faults/table_ambient_c", l.Faults.TableAmbientC, domain.MinTemperatureC, domain.MaxAmbientC)
	checkSourced(p, "/faults/enclosed_factor", l.Faults.EnclosedFactor, 0.01, 1)
}

// faultRules are the rules of the fault checks.
func faultRules(l Limits) map[string]Rule {
	fl := l.Faults
	standards := familyStandards(l)
	return map[string]Rule{
		CheckFuseInterrupt: {Basis: fmt.Sprintf("a short just past the fuse draws V_full / (R_internal + R_wire) from a battery, "+
			"or a supply's or regulator's current_limit_a, else %g × its rated current (%s); the fuse's breaking capacity (its "+
			"own or its family's) must exceed it, and its DC voltage rating reach the circuit's high end; an AC-only figure or "+
			"no DC rating warns", fl.UnstatedLimitMultiple.Value, cite(fl.UnstatedLimitMultiple.Source)),
			Source: "Ohm's law; " + standards + "; " + cite(fl.UnstatedLimitMultiple.Source)},
		CheckMotorStall: {Basis: "a jammed motor draws stall_a × V_high / rated_v until something stops it: the first fuse " +
			"above must reach its family's opening gate for its speed, or a driver hold it to current_limit_a; else its " +
			"driver must carry it (fail past peak_a, warn past continuous_a) and every wire on its path within its ampacity",
			Source: standards + "; the part's datasheet"},
		CheckWireTemperature: {Basis: fmt.Sprintf("the conductor table holds at %g °C (%s); in warmer air the ampacity "+
			"is scaled by √((T_ins − T_amb) / (T_ins − %g)) (NFPA 70 310.15(B) ambient correction, from memory), and by %g "+
			"inside a closed box (%s); fail with the air at or above the insulation's rating", fl.TableAmbientC.Value,
			cite(fl.TableAmbientC.Source), fl.TableAmbientC.Value, fl.EnclosedFactor.Value, cite(fl.EnclosedFactor.Source)),
			Source: cites(fl.TableAmbientC.Source, fl.EnclosedFactor.Source) + "; NFPA 70 310.15(B), from memory"},
	}
}

// familyStandards names the standards of the stored fuse families once
// each, saying so when their fault figures are partly from memory.
func familyStandards(l Limits) string {
	var names []string
	memory := false
	for _, f := range l.Fuses.Families {
		if f.Standard != "" && !slices.Contains(names, f.Standard) {
			names = append(names, f.Standard)
		}
		memory = memory || strings.Contains(f.FaultSource, "from memory")
		for _, g := range f.Clearing {
			memory = memory || strings.Contains(g.Source, "from memory")
		}
	}
	s := "the limits' fuse families"
	if len(names) > 0 {
		s += " (" + strings.Join(names, ", ") + ")"
	}
	if memory {
		s += ", partly from memory"
	}
	return s
}

// wireHeat derates ampacities for the air around a wire.
type wireHeat struct{ tableAmbientC, enclosedFactor float64 }

func (h *wireHeat) factor(insulationC, ambientC float64, enclosed bool) float64 {
	f := electric.AmbientDerating(insulationC, ambientC, h.tableAmbientC)
	if enclosed {
		f *= h.enclosedFactor
	}
	return f
}

// faultPath is what a fault at a node meets between it and the part a
// fault there draws from: the source at the root, or the nearest regulator
// above (a short below a regulator draws from its output, and a stall
// below it is the regulator's to carry, which regulator.current checks).
type faultPath struct {
	from    int32   // the source or regulator
	loopOhm float64 // the wire from it to this node's input, out and back
	fuse    int32   // the nearest node at or below from whose feed is fused, this one included; -1: none
	driver  int32   // the nearest driver above this node and below from; -1: none
	spare   float64 // the least spare ampacity (ampacity − run) of the feeds from `from` down to this node
	spareAt int32   // whose feed that is; -1 at a root
}

// faultPaths works out every node's faultPath in one pass from the roots.
func (r *reviewer) faultPaths() []faultPath {
	nodes := r.t.nodes
	paths := make([]faultPath, len(nodes))
	for _, i := range r.t.order {
		n := &nodes[i]
		fp := &paths[i]
		if n.parent < 0 {
			*fp = faultPath{from: i, fuse: -1, driver: -1, spare: math.Inf(1), spareAt: -1}
			continue
		}
		p := &nodes[n.parent]
		if p.isSource() || p.kind == kindRegulator {
			*fp = faultPath{from: int32(n.parent), fuse: -1, driver: -1, spare: math.Inf(1), spareAt: -1}
		} else {
			*fp = paths[n.parent]
			if p.kind == kindDriver {
				fp.driver = int32(n.parent)
			}
		}
		fp.loopOhm += n.feed.resistance
		if n.feed.fuse != nil {
			fp.fuse = i
		}
		if s := n.feed.ampacity - n.run; s < fp.spare {
			fp.spare, fp.spareAt = s, i
		}
	}
	return paths
}

// prospectiveShort is the current a short just past the fuse on node i's
// feed would draw. The wire counted is the conservative least: everything
// between the fault's source and this feed, and of this feed only the
// distance_from_source_m before the fuse, on a feed straight from it.
func (r *reviewer) prospectiveShort(i int) (amps, loopOhm float64) {
	fu := r.t.nodes[i].feed.fuse
	return r.shortAt(i, fu.distanceM, fu.hasDist)
}

// shortAt is prospectiveShort for a fuse distM along node i's feed, or,
// without hasDist, at its very start (Propose asks it of a fuse it would
// fit).
func (r *reviewer) shortAt(i int, distM float64, hasDist bool) (amps, loopOhm float64) {
	n := &r.t.nodes[i]
	fp := &r.paths[i]
	src := &r.t.nodes[fp.from]
	if int(fp.from) == n.parent {
		if hasDist && n.feed.lengthM > 0 {
			loopOhm = n.feed.resistance * min(distM, n.feed.lengthM) / n.feed.lengthM
		}
	} else {
		loopOhm = r.paths[n.parent].loopOhm
	}
	switch {
	case src.kind == kindBattery:
		return electric.ProspectiveShortA(src.pack.FullV(), src.pack.InternalOhm(), loopOhm), loopOhm
	case src.currentLimitA > 0:
		return src.currentLimitA, loopOhm
	case src.kind == kindSupply:
		return src.maxA * r.limits.Faults.UnstatedLimitMultiple.Value, loopOhm
	}
	return src.maxOutA * r.limits.Faults.UnstatedLimitMultiple.Value, loopOhm
}

// The messages of the fault checks are written with say, failing ones
// too: a large build can fail them on every fuse and motor (a big pack
// behind blade fuses), and fmt would box every number of every sentence.

// sayFuse writes "the 5.00 A blade fuse", or "the 5.00 A fuse" without a
// family; "The …" when it opens a sentence.
func (r *reviewer) sayFuse(fu *fuse, opens bool) {
	the := "the "
	if opens {
		the = "The "
	}
	if fu.family != nil {
		r.say(txt(the), val(fu.ratingA), txt(" A "), txt(fu.family.Name), txt(" fuse"))
		return
	}
	r.say(txt(the), val(fu.ratingA), txt(" A fuse"))
}

func (r *reviewer) fuseInterrupt(n *node, i int) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	fu := n.feed.fuse
	amps, loopOhm := r.prospectiveShort(i)
	breaking, acOnly := fu.breakingA, false
	if breaking == 0 && fu.family != nil {
		breaking, acOnly = fu.family.BreakingCapacityFor(fu.ratingA), fu.family.BreakingCapacityAC
	}
	conds := room[:0]
	if breaking > 0 {
		conds = append(conds, above("breaking", Fail, amps, breaking, "A"))
	}
	if fu.voltageV > 0 {
		conds = append(conds, below("voltage", Fail, fu.voltageV, n.vHigh, "V"))
	}
	switch {
	case breaking == 0:
		conds = append(conds, unknown("breaking unknown", Warn, amps, "A"))
	case acOnly:
		conds = append(conds, flagged("breaking ac", Warn, true, amps, breaking, "A"))
	}
	if fu.voltageV == 0 {
		conds = append(conds, unknown("voltage unknown", Warn, n.vHigh, "V"))
	}
	r.emit(CheckFuseInterrupt, n.id, conds, func(c cond, passed bool) string {
		switch {
		case passed:
			return r.say(txt("The "), val(fu.ratingA), txt(" A fuse on the feed to "), txt(n.id), txt(" can break the "), val(amps),
				txt(" A a short past it could draw (up to "), val(breaking), txt(" A), and its "), val(fu.voltageV),
				txt(" V DC rating covers the "), val(n.vHigh), txt(" V circuit."))
		case c.what == "breaking":
			r.say(txt("A short just past "))
			r.sayFuse(fu, false)
			r.say(txt(" on the feed to "), txt(n.id), txt(" could draw "), val(amps), txt(" A ("))
			r.sayShortCause(i, loopOhm)
			r.say(txt("), more than the "), val(breaking), txt(" A it can break: it can arc across and keep burning. Use a fuse "+
				"whose datasheet gives a breaking capacity above that at "), val(n.vHigh), txt(" V DC."))
			switch {
			case fu.voltageV == 0:
				r.say(txt(" Nor has it a known DC voltage rating."))
			case fu.voltageV < n.vHigh:
				r.say(txt(" Its "), val(fu.voltageV), txt(" V DC rating is below the circuit's too."))
			}
			return ""
		case c.what == "voltage":
			r.sayFuse(fu, true)
			return r.say(txt(" on the feed to "), txt(n.id), txt(" is rated "), val(fu.voltageV), txt(" V DC, below the "),
				val(n.vHigh), txt(" V the circuit reaches: it may not put out its own arc when it blows. Use a fuse rated for "+
					"at least "), val(n.vHigh), txt(" V DC."))
		case c.what == "breaking unknown":
			r.sayFuse(fu, true)
			r.say(txt(" on the feed to "), txt(n.id), txt(" names no family and no breaking_capacity_a, so nothing says it can "+
				"break the "), val(amps), txt(" A a short past it could draw ("))
			r.sayShortCause(i, loopOhm)
			return r.say(txt("). Give breaking_capacity_a from its datasheet."))
		case c.what == "breaking ac":
			r.say(txt("A short past "))
			r.sayFuse(fu, false)
			r.say(txt(" on the feed to "), txt(n.id), txt(" could draw "), val(amps), txt(" A ("))
			r.sayShortCause(i, loopOhm)
			return r.say(txt("). The family's breaking capacity, "), val(breaking), txt(" A, is stated for AC only, an upper "+
				"bound on what it breaks on DC: only the fuse's datasheet can confirm it; give breaking_capacity_a from it."))
		}
		r.sayFuse(fu, true)
		r.say(txt(" on the feed to "), txt(n.id), txt(" has no known DC voltage rating: "))
		switch {
		case fu.family == nil:
			r.say(txt("it gives no voltage_rating_v and names no family"))
		case fu.family.MaxVoltageV > 0:
			r.say(txt("the "), txt(fu.family.Name), txt(" family has no DC rating (its "), val(fu.family.MaxVoltageV),
				txt(" V is for AC)"))
		default:
			r.say(txt("the "), txt(fu.family.Name), txt(" family has no DC rating"))
		}
		return r.say(txt(". The circuit reaches "), val(n.vHigh), txt(" V DC; give voltage_rating_v from the fuse's datasheet."))
	})
}

// sayShortCause says where a prospective short current comes from.
func (r *reviewer) sayShortCause(i int, loopOhm float64) {
	src := &r.t.nodes[r.paths[i].from]
	switch {
	case src.kind == kindBattery:
		r.say(txt(src.id), txt("'s "), val(src.pack.FullV()), txt(" V over its "), val(src.pack.InternalOhm()), txt(" Ω and "),
			val(loopOhm), txt(" Ω of wire"))
		return
	case src.currentLimitA > 0:
		r.say(txt(src.id), txt("'s stated current limit"))
		return
	}
	rated := src.maxA
	if src.kind == kindRegulator {
		rated = src.maxOutA
	}
	r.say(txt(src.id), txt(" states no current_limit_a: "), val(r.limits.Faults.UnstatedLimitMultiple.Value), txt(" × its "),
		val(rated), txt(" A"))
}

func speedOf(fu *fuse) string {
	if fu.fast {
		return domain.FuseFast
	}
	return domain.FuseSlow
}

// motorStall follows a jammed motor's stall current up its path. extra is
// what the jam adds to every feed between the motor and the part the
// fault draws from: the stall current over the running current, or less
// where a driver holds its output to a stated limit.
func (r *reviewer) motorStall(n *node, i int) {
	var room [6]cond // a check has at most five conditions: they stay on the stack
	nodes := r.t.nodes
	fp := &r.paths[i]
	stall := n.stallA * n.vHigh / n.ratedV
	extra := max(stall-n.run, 0)
	var drv *node
	limited := false
	if fp.driver >= 0 {
		drv = &nodes[fp.driver]
		if lim := drv.currentLimitA; lim > 0 && drv.outRun+extra > lim {
			extra, limited = max(lim-drv.outRun, 0), true
		}
	}
	held := n.run + extra
	// The first fuse above, and whether the jam reaches its family's gate.
	st := stallFuse{}
	if fp.fuse >= 0 {
		st.at = &nodes[fp.fuse]
		st.through = st.at.run + extra
		if fam := st.at.feed.fuse.family; fam != nil {
			st.gate, st.gated = fam.Gate(speedOf(st.at.feed.fuse))
			st.opens = st.gate.Multiple * st.at.feed.fuse.ratingA
		}
	}
	if st.gated && st.through >= st.opens {
		conds := append(room[:0], below("cleared", Fail, st.through, st.opens, "A"))
		r.emit(CheckMotorStall, n.id, conds, func(cond, bool) string {
			r.say(txt("If "), txt(n.id), txt(" jams it draws "), val(held), txt(" A; "))
			r.sayFuse(st.at.feed.fuse, false)
			return r.say(txt(" on the feed to "), txt(st.at.id), txt(" then carries "), val(st.through), txt(" A, past the "),
				val(st.opens), txt(" A ("), val(st.gate.Multiple), txt(" × its rating) that opens it within "), val(st.gate.WithinS),
				txt(" s."))
		})
		return
	}
	conds := room[:0]
	var drvOut float64
	if drv != nil {
		drvOut = drv.outRun + extra
		if drv.peakRatingA > 0 {
			conds = append(conds, above("driver peak", Fail, drvOut, drv.peakRatingA, "A"))
		}
		conds = append(conds, above("driver continuous", Warn, drvOut, drv.continuousA, "A"))
	}
	w := &nodes[fp.spareAt]
	wireA := w.run + extra
	conds = append(conds, above("wire", Fail, wireA, w.feed.ampacity, "A"))
	r.emit(CheckMotorStall, n.id, conds, func(c cond, passed bool) string {
		if limited {
			r.say(txt("If "), txt(n.id), txt(" jams, "), txt(drv.id), txt(" holds its output to its "), val(drv.currentLimitA),
				txt(" A current limit, so it draws "), val(held), txt(" A"))
		} else {
			r.say(txt("If "), txt(n.id), txt(" jams it draws "), val(stall), txt(" A (its stall current at "), val(n.vHigh), txt(" V)"))
		}
		switch {
		case passed && drv != nil:
			return r.say(txt(" for as long as the jam lasts: "), txt(drv.id), txt(" carries "), val(drvOut),
				txt(" A, within its continuous_a of "), val(drv.continuousA), txt(" A, and the tightest wire, the feed to "),
				txt(w.id), txt(", "), val(wireA), txt(" A of its "), val(w.feed.ampacity), txt(" A ampacity."))
		case passed:
			return r.say(txt(" for as long as the jam lasts: the tightest wire on its path, the feed to "), txt(w.id),
				txt(", carries "), val(wireA), txt(" A of its "), val(w.feed.ampacity), txt(" A ampacity."))
		case c.what == "driver peak":
			r.say(txt(", and "), txt(drv.id), txt(" must pass "), val(drvOut), txt(" A, above its peak_a of "), val(drv.peakRatingA),
				txt(" A, until something stops it: "))
			r.sayStallFuse(&st)
			return r.say(txt(". Fit a driver that limits its current (current_limit_a) or is rated for the stall, or a fuse " +
				"that opens at it."))
		case c.what == "driver continuous":
			r.say(txt(", and "), txt(drv.id), txt(" must pass "), val(drvOut), txt(" A, above its continuous_a of "),
				val(drv.continuousA), txt(" A, for as long as the jam lasts: "))
			r.sayStallFuse(&st)
			return r.say(txt(". Fit a driver that limits its current (current_limit_a) to what it carries continuously, " +
				"or a fuse that opens at the stall."))
		}
		r.say(txt(", and the "), txt(w.feed.gauge.Label), txt(" feed to "), txt(w.id), txt(" then carries "), val(wireA),
			txt(" A, above its ampacity of "), val(w.feed.ampacity), txt(" A, for as long as the jam lasts: "))
		r.sayStallFuse(&st)
		return r.say(txt(". Use thicker wire, or a fuse or driver current limit that stops the stall."))
	})
}

// stallFuse is the first fuse above a jammed motor: at is the node whose
// feed it is on (nil: none), through what it carries in the jam, and
// gated whether its family stores a gate for its speed, which opens it
// at opens amps.
type stallFuse struct {
	at             *node
	through, opens float64
	gate           electric.ClearingGate
	gated          bool
}

// sayStallFuse says why the fuse above a jammed motor does not stop it.
func (r *reviewer) sayStallFuse(st *stallFuse) {
	switch {
	case st.at == nil:
		r.say(txt("no fuse on its path stops it"))
		return
	case st.at.feed.fuse.family == nil:
		r.sayFuse(st.at.feed.fuse, false)
		r.say(txt(" on the feed to "), txt(st.at.id), txt(" names no family, so when it would open is unknown"))
		return
	case !st.gated:
		r.say(txt("the limits store no "), txt(speedOf(st.at.feed.fuse)), txt(" opening gate for the "),
			txt(st.at.feed.fuse.family.Name), txt(" family"))
		return
	}
	r.sayFuse(st.at.feed.fuse, false)
	r.say(txt(" ("), txt(speedOf(st.at.feed.fuse)), txt(") on the feed to "), txt(st.at.id), txt(" sees "), val(st.through),
		txt(" A, short of the "), val(st.opens), txt(" A ("), val(st.gate.Multiple), txt(" × its rating) that opens it within "),
		val(st.gate.WithinS), txt(" s"))
}

// wireTemperature says what the air around a feed's wire leaves of its
// ampacity, where it takes any: above the table's ambient, in a box, or
// at the insulation's rating.
func (r *reviewer) wireTemperature(n *node) {
	f := n.feed
	if r.ambient <= r.limits.Faults.TableAmbientC.Value && !f.enclosed && r.ambient < f.insulationC {
		return
	}
	var room [6]cond // a check has at most five conditions: they stay on the stack
	conds := append(room[:0], atLeast("insulation", Fail, r.ambient, f.insulationC, "°C"))
	r.emit(CheckWireTemperature, n.id, conds, func(c cond, passed bool) string {
		r.say(txt("The "), txt(f.gauge.Label), txt(" feed to "), txt(n.id))
		if passed {
			r.say(txt(", its insulation rated "), val(f.insulationC), txt(" °C, in "), val(r.ambient), txt(" °C air"))
			if f.enclosed {
				r.say(txt(", inside a closed box,"))
			}
			return r.say(txt(" keeps "), txt(pct(f.derating)), txt(" of its "), val(f.tableAmp), txt(" A table ampacity: "),
				val(f.ampacity), txt(" A, which its ampacity and fuse checks use."))
		}
		r.say(txt(" runs in "), val(r.ambient), txt(" °C air"))
		if f.enclosed {
			r.say(txt(", inside a closed box,"))
		}
		return r.say(txt(" at or above the "), val(f.insulationC), txt(" °C its insulation is rated for: it can carry no "+
			"current safely. Use wire with insulation rated well above the air around it, or keep it out of the heat."))
	})
}
