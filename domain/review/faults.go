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
	n := &r.t.nodes[i]
	fp := &r.paths[i]
	src := &r.t.nodes[fp.from]
	if int(fp.from) == n.parent {
		if fu := n.feed.fuse; fu.hasDist && n.feed.lengthM > 0 {
			loopOhm = n.feed.resistance * min(fu.distanceM, n.feed.lengthM) / n.feed.lengthM
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

// fuseName is "the 5 A blade fuse", or "the 5 A fuse" without a family.
func fuseName(fu *fuse) string {
	if fu.family != nil {
		return "the " + num(fu.ratingA) + " A " + fu.family.Name + " fuse"
	}
	return "the " + num(fu.ratingA) + " A fuse"
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
			also := ""
			switch {
			case fu.voltageV == 0:
				also = " Nor has it a known DC voltage rating."
			case fu.voltageV < n.vHigh:
				also = " Its " + num(fu.voltageV) + " V DC rating is below the circuit's too."
			}
			return fmt.Sprintf("A short just past %s on the feed to %s could draw %s A (%s), more than the %s A it can "+
				"break: it can arc across and keep burning. Use a fuse whose datasheet gives a breaking capacity above "+
				"that at %s V DC.%s", fuseName(fu), n.id, num(amps), r.shortCause(i, loopOhm), num(breaking), num(n.vHigh), also)
		case c.what == "voltage":
			return fmt.Sprintf("%s on the feed to %s is rated %s V DC, below the %s V the circuit reaches: it may not put "+
				"out its own arc when it blows. Use a fuse rated for at least %s V DC.", capital(fuseName(fu)), n.id,
				num(fu.voltageV), num(n.vHigh), num(n.vHigh))
		case c.what == "breaking unknown":
			return fmt.Sprintf("%s on the feed to %s names no family and no breaking_capacity_a, so nothing says it can "+
				"break the %s A a short past it could draw (%s). Give breaking_capacity_a from its datasheet.",
				capital(fuseName(fu)), n.id, num(amps), r.shortCause(i, loopOhm))
		case c.what == "breaking ac":
			return fmt.Sprintf("A short past %s on the feed to %s could draw %s A (%s). The family's breaking capacity, "+
				"%s A, is stated for AC only, an upper bound on what it breaks on DC: only the fuse's datasheet can confirm "+
				"it; give breaking_capacity_a from it.", fuseName(fu), n.id, num(amps), r.shortCause(i, loopOhm),
				num(breaking))
		}
		why := "it gives no voltage_rating_v and names no family"
		if fu.family != nil {
			why = "the " + fu.family.Name + " family has no DC rating"
			if fu.family.MaxVoltageV > 0 {
				why += " (its " + num(fu.family.MaxVoltageV) + " V is for AC)"
			}
		}
		return fmt.Sprintf("%s on the feed to %s has no known DC voltage rating: %s. The circuit reaches %s V DC; give "+
			"voltage_rating_v from the fuse's datasheet.", capital(fuseName(fu)), n.id, why, num(n.vHigh))
	})
}

// shortCause says where a prospective short current comes from.
func (r *reviewer) shortCause(i int, loopOhm float64) string {
	src := &r.t.nodes[r.paths[i].from]
	switch {
	case src.kind == kindBattery:
		return fmt.Sprintf("%s's %s V over its %s Ω and %s Ω of wire", src.id, num(src.pack.FullV()),
			num(src.pack.InternalOhm()), num(loopOhm))
	case src.currentLimitA > 0:
		return src.id + "'s stated current limit"
	}
	rated := src.maxA
	if src.kind == kindRegulator {
		rated = src.maxOutA
	}
	return fmt.Sprintf("%s states no current_limit_a: %s × its %s A", src.id,
		num(r.limits.Faults.UnstatedLimitMultiple.Value), num(rated))
}

func capital(s string) string { return strings.ToUpper(s[:1]) + s[1:] }

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
	var gate electric.ClearingGate
	var fz *node
	gated, through := false, 0.0
	if fp.fuse >= 0 {
		fz = &nodes[fp.fuse]
		through = fz.run + extra
		if fam := fz.feed.fuse.family; fam != nil {
			gate, gated = fam.Gate(speedOf(fz.feed.fuse))
		}
	}
	opens := 0.0
	if gated {
		opens = gate.Multiple * fz.feed.fuse.ratingA
	}
	if gated && through >= opens {
		conds := append(room[:0], below("cleared", Fail, through, opens, "A"))
		r.emit(CheckMotorStall, n.id, conds, func(cond, bool) string {
			return r.say(txt("If "), txt(n.id), txt(" jams it draws "), val(held), txt(" A; "), txt(fuseName(fz.feed.fuse)),
				txt(" on the feed to "), txt(fz.id), txt(" then carries "), val(through), txt(" A, past the "), val(opens),
				txt(" A ("), val(gate.Multiple), txt(" × its rating) that opens it within "), val(gate.WithinS), txt(" s."))
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
		jam := fmt.Sprintf("If %s jams it draws %s A (its stall current at %s V)", n.id, num(stall), num(n.vHigh))
		if limited {
			jam = fmt.Sprintf("If %s jams, %s holds its output to its %s A current limit, so it draws %s A", n.id, drv.id,
				num(drv.currentLimitA), num(held))
		}
		switch {
		case passed && drv != nil:
			return fmt.Sprintf("%s for as long as the jam lasts: %s carries %s A, within its continuous_a of %s A, and the "+
				"tightest wire, the feed to %s, %s A of its %s A ampacity.", jam, drv.id, num(drvOut), num(drv.continuousA),
				w.id, num(wireA), num(w.feed.ampacity))
		case passed:
			return fmt.Sprintf("%s for as long as the jam lasts: the tightest wire on its path, the feed to %s, carries %s A "+
				"of its %s A ampacity.", jam, w.id, num(wireA), num(w.feed.ampacity))
		case c.what == "driver peak":
			return fmt.Sprintf("%s, and %s must pass %s A, above its peak_a of %s A, until something stops it: %s. Fit a "+
				"driver that limits its current (current_limit_a) or is rated for the stall, or a fuse that opens at it.",
				jam, drv.id, num(drvOut), num(drv.peakRatingA), r.stallFuseText(fz, gated, gate, through))
		case c.what == "driver continuous":
			return fmt.Sprintf("%s, and %s must pass %s A, above its continuous_a of %s A, for as long as the jam lasts: "+
				"%s. Fit a driver that limits its current (current_limit_a) to what it carries continuously, or a fuse "+
				"that opens at the stall.", jam, drv.id, num(drvOut), num(drv.continuousA),
				r.stallFuseText(fz, gated, gate, through))
		}
		return fmt.Sprintf("%s, and the %s feed to %s then carries %s A, above its ampacity of %s A, for as long as the jam "+
			"lasts: %s. Use thicker wire, or a fuse or driver current limit that stops the stall.", jam, w.feed.gauge.Label,
			w.id, num(wireA), num(w.feed.ampacity), r.stallFuseText(fz, gated, gate, through))
	})
}

// stallFuseText says why the fuse above a jammed motor does not stop it.
func (r *reviewer) stallFuseText(fz *node, gated bool, gate electric.ClearingGate, through float64) string {
	switch {
	case fz == nil:
		return "no fuse on its path stops it"
	case fz.feed.fuse.family == nil:
		return fuseName(fz.feed.fuse) + " on the feed to " + fz.id + " names no family, so when it would open is unknown"
	case !gated:
		return "the limits store no " + speedOf(fz.feed.fuse) + " opening gate for the " + fz.feed.fuse.family.Name + " family"
	}
	return fmt.Sprintf("%s (%s) on the feed to %s sees %s A, short of the %s A (%s × its rating) that opens it within %s s",
		fuseName(fz.feed.fuse), speedOf(fz.feed.fuse), fz.id, num(through), num(gate.Multiple*fz.feed.fuse.ratingA),
		num(gate.Multiple), num(gate.WithinS))
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
		where := " in " + num(r.ambient) + " °C air"
		if f.enclosed {
			where += ", inside a closed box,"
		}
		if passed {
			return fmt.Sprintf("The %s feed to %s, its insulation rated %s °C,%s keeps %s of its %s A table ampacity: "+
				"%s A, which its ampacity and fuse checks use.", f.gauge.Label, n.id, num(f.insulationC), where,
				pct(f.derating), num(f.tableAmp), num(f.ampacity))
		}
		return fmt.Sprintf("The %s feed to %s runs%s at or above the %s °C its insulation is rated for: it can carry no "+
			"current safely. Use wire with insulation rated well above the air around it, or keep it out of the heat.",
			f.gauge.Label, n.id, where, num(f.insulationC))
	})
}
