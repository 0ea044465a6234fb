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

type reviewer struct {
	t       *tree
	limits  *Limits
	notRun  []string    // checks the limits predate
	paths   []faultPath // for the fault checks; nil when none runs
	ambient float64
	checks  []Check
	spans   []textSpan // of each check's message in text
	nums    numbers
	text    strings.Builder // every message said so far, end to end
	// quiet reviews only say how each check came out: no messages and no
	// operating point in the report. Propose checks its changes so.
	quiet bool
	// kept for Propose, which works out remedies from them
	needs   []need
	slot    []int32
	protAmp []float64
	protID  []string
}

// Rules is a limits set that passed Validate, with what every review
// derives from it (the basis sentences) worked out once. A service keeps
// one per stored limits version: a version never changes once stored, so
// neither does its Rules. Safe for concurrent use.
type Rules struct {
	limits  Limits
	version int
	rules   map[string]Rule
	notRun  []string // checks the limits predate: not run, and said so
}

// Prepare validates a limits set stored as version and readies it for
// reviews. An unusable limits set is a plain error: it is the service's
// fault, not the member's.
//
// A set stored before some checks existed lacks their values: those are
// filled from the defaults so the set validates, and the checks are not
// run (each review says so).
func Prepare(limits Limits, version int) (*Rules, error) {
	filled, notRun := limits.WithNewDefaults()
	if err := filled.validateValues(); err != nil {
		// %v, not %w: the problems are in the limits, not in a document.
		return nil, fmt.Errorf("limits v%d cannot be used: %v", version, err)
	}
	return &Rules{limits: filled, version: version, rules: newRules(filled), notRun: notRun}, nil
}

// NotRun lists the checks the limits predate, which a review under them
// does not run.
func (ru *Rules) NotRun() []string { return ru.notRun }

// Version is the limits version the rules were prepared from.
func (ru *Rules) Version() int { return ru.version }

// Limits is the limits set the rules were prepared from.
func (ru *Rules) Limits() Limits { return ru.limits }

// Review checks a design against a limits set: Prepare, then Rules.Review.
func Review(doc domain.Design, limits Limits, limitsVersion int, components map[int64]domain.Component) (Report, error) {
	if err := doc.Validate(); err != nil {
		return Report{}, err
	}
	ru, err := Prepare(limits, limitsVersion)
	if err != nil {
		return Report{}, err
	}
	return ru.review(doc, components)
}

// Review checks a validated design against the rules. It fills nodes
// that name a component_id from components (the node's own fields win),
// solves the operating point and runs every
// check of section 7. A document that names a component that is not in
// components, or leaves out a field neither it nor its component gives,
// comes back as a *domain.ValidationError with JSON pointers.
//
// The cost is linear in the number of nodes, times the handful of steps a
// design with switching regulators needs to settle (at most maxSolveSteps).
func (ru *Rules) Review(valid domain.ValidDesign, components map[int64]domain.Component) (Report, error) {
	doc, err := valid.Design()
	if err != nil {
		return Report{}, err
	}
	return ru.review(doc, components)
}

func (ru *Rules) review(doc domain.Design, components map[int64]domain.Component) (Report, error) {
	var r reviewer // on the stack: a plain review keeps nothing of it
	return ru.run(doc, components, &r)
}

// run reviews a validated document into r, a zero reviewer or one with
// only quiet set, whose tree then holds the operating point. A quiet run
// leaves out the messages and the operating point: its report says only
// how each check came out.
func (ru *Rules) run(doc domain.Design, components map[int64]domain.Component, r *reviewer) (Report, error) {
	quiet := r.quiet
	limits := &ru.limits
	ambient := limits.Policy.DefaultAmbientC.Value
	if doc.AmbientC != nil {
		ambient = *doc.AmbientC
	}
	var heat *wireHeat
	if !slices.Contains(ru.notRun, CheckWireTemperature) {
		heat = &wireHeat{tableAmbientC: limits.Faults.TableAmbientC.Value, enclosedFactor: limits.Faults.EnclosedFactor.Value}
	}
	nodes, err := build(doc, limits, components, ambient, heat)
	if err != nil {
		return Report{}, err
	}
	t := newTree(nodes)
	t.solve()
	r.t, r.limits, r.ambient, r.notRun = t, limits, ambient, ru.notRun
	// A node gets about four and a half checks: its own, its feed's and
	// the fault checks' (a fuse's and a motor's), of about 100 bytes
	// each; a switching regulator one more for its heat.
	r.checks, r.spans = make([]Check, 0, 9*len(nodes)/2+int(t.nSwitching)+8), make([]textSpan, 0, 9*len(nodes)/2+int(t.nSwitching)+8)
	if !quiet {
		r.text.Grow(448*len(nodes) + 80*int(t.nSwitching) + 256)
	}
	rep := Report{
		Format:        ReportFormat,
		LimitsVersion: ru.version,
		EngineVersion: EngineVersion,
		Nodes:         make([]NodeResult, 0, len(nodes)),
		Feeds:         make([]FeedResult, 0, len(nodes)),
		Runtime:       []RuntimeResult{},
		Cautions:      Cautions(),
		NotRun:        ru.notRun,
	}
	if len(ru.notRun) > 0 {
		rep.Cautions = append(rep.Cautions, notRunCaution(ru.notRun, ru.version))
	}
	r.scope()

	needs, slot := r.brownouts()
	protAmp, protID := t.protectedConductors(nil)
	r.needs, r.slot, r.protAmp, r.protID = needs, slot, protAmp, protID
	rails := r.rails()
	heatRuns, polarityRuns := r.runs(CheckRegulatorHeat), r.runs(CheckConnectorPolarity)
	if r.runs(CheckFuseInterrupt) || r.runs(CheckMotorStall) {
		r.paths = r.faultPaths()
	}
	for i := range t.nodes {
		n := &t.nodes[i]
		switch n.kind {
		case kindBattery:
			nd := &needs[slot[i]]
			run := r.runtime(n, nd)
			rep.Runtime = append(rep.Runtime, run)
			r.sourceCurrent(n, nd.criticalV, nd.criticalID)
			if run.Hours != nil {
				r.sourceRuntime(n, *run.Hours, doc.TargetRuntimeH, run.LimitedBy)
			}
			if n.protection != nil {
				amp, id := r.minUnfusedAmpacity(i, protAmp, protID)
				r.batteryProtection(n, amp, id)
				if c := perStringCaution(n); c != "" {
					rep.Cautions = append(rep.Cautions, c)
				}
			}
		case kindSupply:
			r.sourceCurrent(n, math.Inf(-1), "")
		case kindRegulator:
			r.regulatorHeadroom(n)
			r.regulatorCurrent(n)
			switch {
			case n.thetaJA > 0:
				r.regulatorThermal(n)
			case heatRuns:
				r.regulatorHeat(n)
			}
		case kindDriver:
			r.driverChecks(n)
		case kindMotor, kindLoad:
			r.voltageRange(n)
			if n.kind == kindMotor && r.runs(CheckMotorStall) {
				r.motorStall(n, i)
			}
		}
		if rails != nil && (n.isSource() || n.kind == kindRegulator) {
			if s := rails[int32(i)]; s != nil {
				r.railBackfeed(n, s)
			}
		}
		if n.feed != nil {
			r.feedChecks(n, i, protAmp[i], protID[i])
			if polarityRuns {
				r.connectorPolarity(n)
			}
			if !quiet {
				rep.Feeds = append(rep.Feeds, r.feedResult(n))
			}
		}
		if !quiet {
			rep.Nodes = append(rep.Nodes, r.nodeResult(n))
		}
	}

	if !quiet {
		r.finishMessages()
	}
	rep.Checks = r.checks
	rep.Status = Pass
	// The report's rules are its checks' names, each once: a handful of
	// names over thousands of checks, so they are gathered in a short
	// list before they go in the map.
	var used [16]string
	names := used[:0]
	for _, c := range r.checks {
		if !slices.Contains(names, c.Check) {
			names = append(names, c.Check)
		}
		switch c.Status {
		case Pass:
			rep.Counts.Pass++
		case Warn:
			rep.Counts.Warn++
		case Fail:
			rep.Counts.Fail++
		case OutOfScope:
			rep.Counts.OutOfScope++
		}
		if c.Status.Severity() > rep.Status.Severity() {
			rep.Status = c.Status
		}
	}
	rep.Rules = make(map[string]Rule, len(names))
	for _, name := range names {
		rep.Rules[name] = ru.rules[name]
	}
	if err := rep.checkFinite(); err != nil {
		return Report{}, fmt.Errorf("review of %q: %w", doc.Name, err)
	}
	return rep, nil
}

// runs reports whether the limits hold what check needs; a check the
// limits predate is not run.
func (r *reviewer) runs(check string) bool { return !slices.Contains(r.notRun, check) }

func (r *reviewer) feedChecks(n *node, i int, protAmp float64, protID string) {
	if r.runs(CheckWireTemperature) {
		r.wireTemperature(n)
	}
	r.wireAmpacity(n)
	r.wireDrop(n)
	fromSource := r.t.nodes[n.parent].isSource()
	if fromSource {
		r.fuseMissing(n)
	}
	if n.feed.fuse != nil {
		r.fuseRating(n, protAmp, protID)
		if r.runs(CheckFuseInterrupt) {
			r.fuseInterrupt(n, i)
		}
		if fromSource {
			r.fusePlacement(n)
		}
	}
	for k, c := range n.feed.connectors {
		r.connectorRating(n, n.feedPtr()+"/connectors/"+strconv.Itoa(k), k, c)
	}
}

// need is what a battery's loads ask of it: the pack voltage at which the
// first load with a min_v browns out, and the same for critical loads.
type need struct {
	brownoutV, criticalV   float64 // -Inf: nothing asks
	brownoutID, criticalID string
	never                  []string // loads a full pack cannot satisfy: they fail voltage.range and are left out here
	loads                  []loadNeed
}

// loadNeed is the pack voltage one motor or load needs to keep its min_v;
// +Inf when none will do.
type loadNeed struct {
	id    string
	packV float64
}

// brownouts reads each load's min_v back through its path to its battery.
// A battery's need is needs[slot[i]] for battery i; other nodes have slot
// −1. Each battery's loads are a capped slice of one array, counted first.
func (r *reviewer) brownouts() (needs []need, slot []int32) {
	nodes := r.t.nodes
	slot = make([]int32, len(nodes))
	batteries := 0
	for i := range nodes {
		slot[i] = -1
		if nodes[i].kind == kindBattery {
			slot[i] = int32(batteries)
			batteries++
		}
	}
	needs = make([]need, batteries)
	asks := func(n *node) bool {
		return (n.kind == kindMotor || n.kind == kindLoad) && n.hasMinV && n.minV > 0 && slot[n.root] >= 0
	}
	count := make([]int, batteries)
	total := 0
	for i := range nodes {
		if n := &nodes[i]; asks(n) {
			count[slot[n.root]]++
			total++
		}
	}
	all := make([]loadNeed, total)
	for k := range needs {
		nd := &needs[k]
		nd.brownoutV, nd.criticalV = math.Inf(-1), math.Inf(-1)
		nd.loads, all = all[:0:count[k]], all[count[k]:]
	}
	for i := range nodes {
		n := &nodes[i]
		if !asks(n) {
			continue
		}
		v := n.path.packVFor(n.minV)
		nd := &needs[slot[n.root]]
		nd.loads = append(nd.loads, loadNeed{n.id, v})
		if v > nodes[n.root].pack.FullV() {
			nd.never = append(nd.never, n.id)
			continue
		}
		if v > nd.brownoutV {
			nd.brownoutV, nd.brownoutID = v, n.id
		}
		if n.critical && v > nd.criticalV {
			nd.criticalV, nd.criticalID = v, n.id
		}
	}
	return needs, slot
}

func (r *reviewer) runtime(n *node, nd *need) RuntimeResult {
	p := n.pack
	share := p.UsableShare(0)
	if nd.brownoutV > p.CutoffV() {
		share = p.UsableShare(nd.brownoutV)
	}
	res := RuntimeResult{Source: n.id, UsableShare: clean(share)}
	// A vanishing average current gives hours too large to print; the
	// runtime is then simply not a concern and is left out.
	if h := p.RuntimeH(n.avg, share); n.avg > 0 && !math.IsInf(h, 0) && !math.IsNaN(h) {
		h = clean(h)
		res.Hours = &h
	}
	if r.quiet { // the hours are all its check needs
		return res
	}
	if nd.brownoutV > p.CutoffV() {
		res.LimitedBy = fmt.Sprintf("brownout of %s at %s V", nd.brownoutID, num(nd.brownoutV))
	} else {
		res.LimitedBy = fmt.Sprintf("cell cutoff at %s V", num(p.CutoffV()))
	}
	if len(nd.never) > 0 {
		res.LimitedBy += fmt.Sprintf("; left out: %s, short of its min_v even from a full pack", joinIDs(nd.never))
	}
	res.Pack, res.Brownouts = packFacts(*p), brownoutList(*p, nd.loads, &r.nums)
	return res
}

func packFacts(p electric.Pack) PackFacts {
	s := float64(p.Series)
	curve := make([]PackPoint, len(p.Chem.Curve))
	for k, pt := range p.Chem.Curve {
		curve[k] = PackPoint{SOC: clean(pt.SOC), PackV: clean(pt.CellV * s)}
	}
	return PackFacts{
		Chemistry: p.Chem.Name, Series: p.Series, Parallel: p.Parallel, CapacityAh: clean(p.CapacityAh()),
		FullV: clean(p.FullV()), NominalV: clean(p.NominalV()), CutoffV: clean(p.CutoffV()),
		FullSOC: clean(p.SOCAtPackV(p.FullV())), Curve: curve,
	}
}

// brownoutList says, for each load that asks the pack for a voltage, when
// it browns out: the first to go (the highest voltage) first, loads that
// ask the same in design order. It sorts loads in place.
func brownoutList(p electric.Pack, loads []loadNeed, nums *numbers) []Brownout {
	sorted := loads
	slices.SortStableFunc(sorted, func(a, b loadNeed) int { return cmp.Compare(b.packV, a.packV) })
	out := make([]Brownout, len(sorted))
	for k, l := range sorted {
		b := Brownout{Node: l.id}
		if !math.IsInf(l.packV, 1) {
			b.PackV = nums.ptr(l.packV)
		}
		switch {
		case l.packV > p.FullV():
			b.Outcome = BrownoutAlways
		case l.packV <= p.CutoffV():
			b.Outcome = BrownoutNever
		default:
			b.Outcome = BrownoutPartway
			b.SOC = nums.ptr(p.SOCAtPackV(l.packV))
		}
		out[k] = b
	}
	return out
}

// protectedConductors finds, for each feed, the smallest ampacity among the
// conductors a fuse on it would protect: its own and every feed below it
// down to the next fuse or regulator. A non-nil ampacity stands in for
// the feeds' own (Propose asks with the wires it would change).
func (t *tree) protectedConductors(ampacity []float64) ([]float64, []string) {
	amp := make([]float64, len(t.nodes))
	id := make([]string, len(t.nodes))
	for k := len(t.order) - 1; k >= 0; k-- {
		i := int(t.order[k])
		n := &t.nodes[i]
		if n.feed == nil {
			continue
		}
		amp[i], id[i] = n.feed.ampacity, n.id
		if ampacity != nil {
			amp[i] = ampacity[i]
		}
		if n.kind == kindRegulator {
			continue
		}
		for _, c := range t.children(i) {
			if ch := &t.nodes[c]; ch.feed.fuse == nil && amp[c] < amp[i] {
				amp[i], id[i] = amp[c], id[c]
			}
		}
	}
	return amp, id
}

func (r *reviewer) nodeResult(n *node) NodeResult {
	res := NodeResult{
		ID: n.id, Type: n.typ,
		VLow: clean(n.vLow), VNominal: clean(n.vNom), VHigh: clean(n.vHigh),
		RunA: clean(n.run), PeakA: clean(n.peak), AvgA: clean(n.avg),
	}
	if n.parent >= 0 {
		res.Parent = r.t.nodes[n.parent].id
	}
	if n.kind == kindRegulator {
		res.Collapsed = n.switching() && (n.collapsed || !r.t.converged)
		res.OutVLow, res.OutVNominal, res.OutVHigh = r.nums.ptr(n.outLow), r.nums.ptr(n.outNom), r.nums.ptr(n.outHigh)
		if n.thetaJA > 0 {
			p, tj := r.junction(n)
			res.DissipationW, res.JunctionC = r.nums.ptr(p), r.nums.ptr(tj)
		} else {
			res.DissipationW = r.nums.ptr(heat(n))
		}
	}
	return res
}

func (r *reviewer) feedResult(n *node) FeedResult {
	f := n.feed
	dropV, share := r.dropPct(n)
	res := FeedResult{
		Node: n.id, From: f.from, Gauge: f.gauge.Label, LengthM: clean(f.lengthM),
		ResistanceOhm: clean(f.resistance), RunA: clean(n.run), PeakA: clean(n.peak),
		DropV: clean(dropV), DropPct: clean(share), AmpacityA: clean(f.ampacity),
	}
	if f.fuse != nil {
		res.FuseA = r.nums.ptr(f.fuse.ratingA)
	}
	return res
}

// numbers hands out pointers to cleaned numbers, the optional fields of a
// report, from shared blocks: an allocation per block, not per number. A
// full block is left to the pointers into it and a new one started.
type numbers struct{ block []float64 }

func (a *numbers) ptr(x float64) *float64 { return a.hold(clean(x)) }

// hold is ptr for a number that is cleaned later.
func (a *numbers) hold(x float64) *float64 {
	if len(a.block) == cap(a.block) {
		a.block = make([]float64, 0, 64)
	}
	a.block = append(a.block, x)
	return &a.block[len(a.block)-1]
}

// clean rounds a reported number to eight significant digits, finer than
// any input, so reports do not change with the last bits of float
// arithmetic, while a micro-ohm feed still reads as what it is.
// Non-finite values pass through for checkFinite to catch.
func clean(x float64) float64 {
	ax := math.Abs(x)
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) || ax > 1e12 || ax < 1e-12 {
		return x + 0 // + 0 turns −0 into 0
	}
	scale := math.Pow10(7 - decimalExponent(ax))
	return math.Round(x*scale)/scale + 0
}

// decimalExponent is floor(log10 ax) for ax from 1e-12 to 1e12, read off
// its binary exponent rather than computed with Log10: this runs for every
// number of every report. ax = 1.f × 2^e2 (ax is normal here), so
// floor(e2·log10 2) is the exponent or one short of it; 78913 / 2^18 is
// log10 2 closely enough for every e2 in range.
func decimalExponent(ax float64) int {
	e2 := int(math.Float64bits(ax)>>52&0x7ff) - 1023
	e10 := (e2 * 78913) >> 18
	if e10+1 <= 12 && ax >= math.Pow10(e10+1) {
		e10++
	}
	return e10
}

// checkFinite guards the promise that a report never holds NaN or ±Inf.
func (rep *Report) checkFinite() error {
	bad := func(xs ...float64) bool {
		for _, x := range xs {
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return true
			}
		}
		return false
	}
	badOpt := func(ps ...*float64) bool {
		for _, p := range ps {
			if p != nil && bad(*p) {
				return true
			}
		}
		return false
	}
	var where []string
	for _, c := range rep.Checks {
		if badOpt(c.Value, c.Limit, c.WarnAt) {
			where = append(where, c.Check+" of "+c.Node)
		}
	}
	for _, n := range rep.Nodes {
		if bad(n.VLow, n.VNominal, n.VHigh, n.RunA, n.PeakA, n.AvgA) ||
			badOpt(n.OutVLow, n.OutVNominal, n.OutVHigh, n.DissipationW, n.JunctionC) {
			where = append(where, "operating point of "+n.ID)
		}
	}
	for _, f := range rep.Feeds {
		if bad(f.LengthM, f.ResistanceOhm, f.RunA, f.PeakA, f.DropV, f.DropPct, f.AmpacityA) || badOpt(f.FuseA) {
			where = append(where, "feed to "+f.Node)
		}
	}
	for _, rt := range rep.Runtime {
		pk := rt.Pack
		if bad(rt.UsableShare, pk.CapacityAh, pk.FullV, pk.NominalV, pk.CutoffV, pk.FullSOC) || badOpt(rt.Hours) {
			where = append(where, "runtime of "+rt.Source)
		}
		for _, pt := range pk.Curve {
			if bad(pt.SOC, pt.PackV) {
				where = append(where, "discharge curve of "+rt.Source)
				break
			}
		}
		for _, b := range rt.Brownouts {
			if badOpt(b.PackV, b.SOC) {
				where = append(where, "brownout of "+b.Node)
			}
		}
	}
	if len(where) > 0 {
		return fmt.Errorf("non-finite numbers in the report: %v", where)
	}
	return nil
}
