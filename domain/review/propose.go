package review

import (
	"fmt"
	"reflect"
	"slices"
	"strings"

	"github.com/go-json-experiment/json"
	"github.com/go-json-experiment/json/jsontext"

	"wattshelf/domain"
	"wattshelf/domain/electric"
)

// Rounds of checking changes by reviewing the changed design. The first
// rounds settle the proposal, one remedy per finding; the later ones try
// the other remedies of each finding, one of each per round.
const (
	maxProposalRounds    = 4
	maxAlternativeRounds = 5
)

// edit is one change to one node of a design: a member at path below the
// node's pointer set to value, or removed when value is nil.
type edit struct {
	node  int
	path  string // "/feed/wire/gauge", "/series"
	value any
	// rank orders two edits of one path: the higher stays (a thicker
	// wire, a larger rating). A removal beats any value.
	rank float64
	// part marks a change to the part's own ratings: a node that names a
	// component takes all its values into the document first, so the
	// proposed document no longer claims the shelf part has them.
	part bool
	set  func(n *domain.Node)
}

// candidate is a remedy before it is proven: its change in words, its
// edits and the part it calls for. A local candidate changes only ratings
// that no operating point depends on, so it can worsen only its own
// node's checks.
type candidate struct {
	change string
	edits  []edit
	part   *PartNeed
	local  bool
}

type checkKey struct{ check, node, pointer string }

// baseCheck is how a check came out in the original review, and the slot
// that holds how it comes out in a changed one when it was a finding (-1:
// it was not).
type baseCheck struct {
	status Status
	slot   int
}

func keyOf(c Check) checkKey { return checkKey{c.Check, c.Node, c.Pointer} }

// finding is a warn or fail check of the original review and what is
// tried for it.
type finding struct {
	check    int // index in the report's checks
	node     int // -1: not a node's
	cands    []candidate
	noRemedy string
	chosen   int    // the candidate in the proposal, -1 for none
	slot     int    // where a changed review's status of its check goes
	proven   []bool // per candidate: cleared its finding in a review with no check made worse
	tried    []bool
}

// Propose reviews a design and works out, for each warn and fail finding,
// the changes that clear it, lightest first, each with its RFC 6902 patch
// and the part it calls for. It applies the first of each to the design
// and reviews that again: a remedy is offered only when such a review
// cleared its finding and made no check worse (no pass became warn or
// fail, no warn became fail). A finding without one says why in NoRemedy.
//
// It takes a validated document, as Review does.
// A design out of scope gets no remedies and no proposed design: mains and
// the scope are not for a proposal to change. Proposed is nil too when no
// remedy could be offered.
//
// The cost is a review, then one quiet review (no messages) per round:
// one or two to settle the proposal, and one per further remedy offered
// for the finding that has the most.
func (ru *Rules) Propose(valid domain.ValidDesign, components map[int64]domain.Component) (Proposal, error) {
	doc, err := valid.Design()
	if err != nil {
		return Proposal{}, err
	}
	r := &reviewer{}
	rep, err := ru.run(doc, components, r)
	if err != nil {
		return Proposal{}, err
	}
	if rep.Status == OutOfScope {
		for i := range rep.Checks {
			if c := &rep.Checks[i]; c.Status == Warn || c.Status == Fail {
				c.NoRemedy = "The design is out of scope (mains, or a source above the voltage these rules cover): " +
					"no change is proposed for it."
			}
		}
		return Proposal{Report: rep}, nil
	}
	p := newProposer(ru, doc, components, r, rep)
	if len(p.findings) == 0 {
		return Proposal{Report: rep}, nil
	}
	p.generate()
	proposed, status, err := p.settle()
	if err == nil {
		proposed, status, err = p.tryAlternatives(proposed, status)
	}
	if err != nil {
		return Proposal{}, err
	}
	applied := p.offer()
	prop := Proposal{Report: p.rep}
	if applied {
		prop.Proposed, prop.ProposedStatus = &proposed, status
	}
	return prop, nil
}

type proposer struct {
	ru       *Rules
	doc      domain.Design
	comps    map[int64]domain.Component
	r        *reviewer // of the original review, whose tree holds its operating point
	rep      Report
	base     map[checkKey]baseCheck
	index    map[string]int
	findings []finding
	windows  map[int]*sourceWindow // per source, worked out when a finding asks
	rails    map[int32]*railSum    // the rails with motors, when a finding asks
	gauges   []electric.Gauge      // the conductor table's sizes, smallest first
	firsts   map[member][]editAt   // the first candidates' edits by the member they set
	slots    int                   // the findings' distinct checks
}

// member is one member of one node, as an edit names it.
type member struct {
	node int
	path string
}

// editAt is edit j of finding k's first candidate.
type editAt struct{ k, j int }

func newProposer(ru *Rules, doc domain.Design, comps map[int64]domain.Component, r *reviewer, rep Report) *proposer {
	p := &proposer{ru: ru, doc: doc, comps: comps, r: r, rep: rep, base: make(map[checkKey]baseCheck, len(rep.Checks)),
		index: make(map[string]int, len(doc.Nodes)), windows: map[int]*sourceWindow{}, firsts: map[member][]editAt{}}
	for i, n := range r.t.nodes {
		p.index[n.id] = i
	}
	for i, c := range rep.Checks {
		key := keyOf(c)
		b, seen := p.base[key]
		if !seen {
			b.slot = -1
		}
		b.status = c.Status
		if c.Status == Warn || c.Status == Fail {
			if b.slot < 0 {
				b.slot = p.slots
				p.slots++
			}
			node := -1
			if j, ok := p.index[c.Node]; ok && c.Node != "" {
				node = j
			}
			p.findings = append(p.findings, finding{check: i, node: node, chosen: -1, slot: b.slot})
		}
		p.base[key] = b
	}
	return p
}

// Stages of working out remedies, as one finding's remedy depends on
// another's: a fuse is sized first against the wires as they are (a
// lighter fuse beats a thicker wire); the parts' ratings next; then the
// wires, which must suit the fuse as proposed, and a jammed motor, which
// a driver's proposed rating may hold. A fuse that no rating fits the
// wire it has is sized last, against the wires as proposed.
const (
	stageFuse = iota
	stageParts
	stageWires
)

func stageOf(check string) int {
	switch check {
	case CheckFuseRating, CheckFuseMissing, CheckFuseInterrupt, CheckBatteryProtection:
		return stageFuse
	case CheckWireAmpacity, CheckWireDrop, CheckWireTemperature, CheckRegulatorHeadroom, CheckMotorStall:
		return stageWires
	}
	return stageParts
}

// generate works out the candidates of every finding, stage by stage.
func (p *proposer) generate() {
	none := map[int]electric.Gauge{}
	protAmp, protID := p.r.protAmp, p.r.protID
	for stage := stageFuse; stage <= stageWires; stage++ {
		for k := range p.findings {
			f := &p.findings[k]
			c := p.rep.Checks[f.check]
			if stageOf(c.Check) != stage {
				continue
			}
			if stage == stageFuse {
				f.cands, f.noRemedy = p.fuseFinding(c, f.node, none, protAmp, protID)
			} else {
				f.cands, f.noRemedy = p.candidates(c, f.node)
			}
			p.initTries(k)
		}
	}
	var again []int
	for k := range p.findings {
		if f := &p.findings[k]; stageOf(p.rep.Checks[f.check].Check) == stageFuse && len(f.cands) == 0 {
			again = append(again, k)
		}
	}
	if len(again) == 0 {
		return
	}
	gauges := p.firstGauges()
	protAmp, protID = p.protectedWith(gauges)
	for _, k := range again {
		f := &p.findings[k]
		f.cands, f.noRemedy = p.fuseFinding(p.rep.Checks[f.check], f.node, gauges, protAmp, protID)
		p.initTries(k)
	}
}

// fuseFinding works out a fuse finding's candidates against the wires
// gauges gives (none: as they are).
func (p *proposer) fuseFinding(c Check, i int, gauges map[int]electric.Gauge, protAmp []float64, protID []string) ([]candidate, string) {
	if c.Check == CheckBatteryProtection {
		return p.batteryProtection(c, i, gauges, protAmp, protID)
	}
	return p.fuseCandidates(c, i, gauges, protAmp, protID)
}

// firstValue is the value the first remedies so far give a member of node
// i (the strongest, where two do), and whether any does. It is asked
// while the remedies are worked out, when each finding with candidates
// has its first chosen.
func (p *proposer) firstValue(i int, path string) (any, bool) {
	var best *edit
	for _, at := range p.firsts[member{i, path}] {
		f := &p.findings[at.k]
		if f.chosen != 0 {
			continue
		}
		if e := &f.cands[0].edits[at.j]; best == nil || e.rank > best.rank {
			best = e
		}
	}
	if best == nil {
		return nil, false
	}
	return best.value, true
}

// initTries starts finding k on its first candidate and files that
// candidate's edits under the members they set, in finding order, for
// firstValue. It runs once for a finding with candidates.
func (p *proposer) initTries(k int) {
	f := &p.findings[k]
	f.proven, f.tried = make([]bool, len(f.cands)), make([]bool, len(f.cands))
	if len(f.cands) == 0 {
		return
	}
	f.chosen = 0
	for j, e := range f.cands[0].edits {
		m := member{e.node, e.path}
		list := p.firsts[m]
		// after every entry of a finding up to k, so that ties go as
		// they would scanning the findings in order
		at, _ := slices.BinarySearchFunc(list, k+1, func(a editAt, k int) int { return a.k - k })
		p.firsts[m] = slices.Insert(list, at, editAt{k, j})
	}
}

// outcome is what a review of a changed design says of the changes in
// play: the findings whose remedy did not clear them, the checks made
// worse, and the findings blamed for those.
type outcome struct {
	status Status
	open   []int
	worse  []Check
	blamed []int
}

func (o outcome) clean() bool { return len(o.open) == 0 && len(o.worse) == 0 }

// check reviews the design with the candidates pick names applied.
func (p *proposer) check(pick func(k int) int) (domain.Design, outcome, error) {
	design := p.apply(pick)
	rep, err := p.recheck(design)
	if err != nil {
		return domain.Design{}, outcome{}, err
	}
	o := outcome{status: rep.Status}
	// One look-up per check: whether it came out worse, and where a
	// finding's check now stands (absent: it is gone, which clears it).
	now, present := make([]Status, p.slots), make([]bool, p.slots)
	for _, c := range rep.Checks {
		b, ok := p.base[keyOf(c)]
		was := Pass // a check the original did not have counts as passed there
		if ok {
			was = b.status
		}
		if c.Status.Severity() > was.Severity() {
			o.worse = append(o.worse, c)
		}
		if ok && b.slot >= 0 {
			now[b.slot], present[b.slot] = c.Status, true
		}
	}
	for k := range p.findings {
		if f := &p.findings[k]; pick(k) >= 0 && present[f.slot] && now[f.slot] != Pass {
			o.open = append(o.open, k)
		}
	}
	o.blamed = p.blame(o.worse, pick)
	return design, o, nil
}

// settle reviews the design with each finding's chosen remedy applied
// until that review clears every chosen finding and worsens nothing: an
// uncleared finding moves to its next remedy, and a check made worse
// drops the remedies that can have worsened it. Past maxProposalRounds
// the trees still in trouble lose their remedies that change the
// operating point, then all of them: a tree without changes reviews as
// it did, so that ends it.
func (p *proposer) settle() (domain.Design, Status, error) {
	for round := 1; ; round++ {
		if !slices.ContainsFunc(p.findings, func(f finding) bool { return f.chosen >= 0 }) {
			return p.doc, p.rep.Status, nil // nothing to change: the original review stands
		}
		design, o, err := p.check(p.chosen)
		if err != nil {
			return domain.Design{}, "", err
		}
		if o.clean() {
			for k := range p.findings {
				if f := &p.findings[k]; f.chosen >= 0 {
					f.tried[f.chosen], f.proven[f.chosen] = true, true
				}
			}
			return design, o.status, nil
		}
		if round >= maxProposalRounds {
			// Dropping only what moves the operating point may drop
			// nothing; reviewing the same design again would say the same,
			// so everything in trouble goes at once.
			if !p.dropInTrouble(o, round > maxProposalRounds) {
				p.dropInTrouble(o, true)
			}
			continue
		}
		moved := slices.Concat(o.open, o.blamed)
		slices.Sort(moved)
		for _, k := range slices.Compact(moved) {
			f := &p.findings[k]
			f.tried[f.chosen] = true
			// A rating worked out at the original operating point may
			// only have fallen short because another change moved it:
			// it is tried again on its own later.
			if f.cands[f.chosen].local && !slices.Contains(o.blamed, k) && p.movedTree(k) {
				f.tried[f.chosen] = false
			}
			p.next(f)
		}
	}
}

// movedTree reports whether a remedy other than finding k's that changes
// the operating point is in play in k's tree.
func (p *proposer) movedTree(k int) bool {
	root := p.r.t.nodes[p.findings[k].node].root
	for j := range p.findings {
		f := &p.findings[j]
		if j == k || f.chosen < 0 || f.cands[f.chosen].local {
			continue
		}
		for _, e := range f.cands[f.chosen].edits {
			if p.r.t.nodes[e.node].root == root {
				return true
			}
		}
	}
	return false
}

// dropInTrouble takes the remedies that change the operating point (all
// of them, with every) out of each tree with an open finding or a worse
// check; a worse check of the whole design puts every tree in trouble.
// It says whether it dropped any.
func (p *proposer) dropInTrouble(o outcome, every bool) bool {
	trouble := map[int]bool{}
	for _, k := range o.open {
		trouble[p.r.t.nodes[p.findings[k].node].root] = true
	}
	all, dropped := false, false
	for _, w := range o.worse {
		if i, ok := p.index[w.Node]; ok && w.Node != "" {
			trouble[p.r.t.nodes[i].root] = true
		} else {
			all = true
		}
	}
	for k := range p.findings {
		f := &p.findings[k]
		if f.chosen < 0 || (f.cands[f.chosen].local && !every) {
			continue
		}
		if all || trouble[p.r.t.nodes[f.cands[f.chosen].edits[0].node].root] {
			f.tried[f.chosen] = true
			f.chosen = -1
			dropped = true
		}
	}
	return dropped
}

// next moves a finding to its next untried candidate, or to none.
func (p *proposer) next(f *finding) {
	for c := f.chosen + 1; c < len(f.cands); c++ {
		if !f.tried[c] {
			f.chosen = c
			return
		}
	}
	f.chosen = -1
}

// tryAlternatives reviews, round by round, each finding's next untried
// remedy in place of its chosen one, and proves those that clear their
// finding without being blamed for a worse check. A finding the proposal
// had no remedy for takes the one proven for it; the proposal is then
// reviewed once more, and keeps them only if that review is clean.
func (p *proposer) tryAlternatives(settled domain.Design, status Status) (domain.Design, Status, error) {
	var promoted []int
	for round := 0; round < maxAlternativeRounds; round++ {
		trial := make([]int, len(p.findings))
		more := false
		for k := range p.findings {
			f := &p.findings[k]
			trial[k] = f.chosen
			for c := range f.cands {
				if !f.tried[c] {
					trial[k] = c
					f.tried[c] = true
					more = true
					break
				}
			}
		}
		if !more {
			break
		}
		_, o, err := p.check(func(k int) int { return trial[k] })
		if err != nil {
			return domain.Design{}, "", err
		}
		for k := range p.findings {
			f := &p.findings[k]
			if trial[k] < 0 || trial[k] == f.chosen || slices.Contains(o.blamed, k) || slices.Contains(o.open, k) {
				continue
			}
			f.proven[trial[k]] = true
			if f.chosen < 0 {
				f.chosen = trial[k]
				promoted = append(promoted, k)
			}
		}
	}
	if len(promoted) == 0 {
		return settled, status, nil
	}
	design, o, err := p.check(p.chosen)
	if err != nil {
		return domain.Design{}, "", err
	}
	if o.clean() {
		return design, o.status, nil
	}
	// The proposal goes back to the settled one: a finding it leaves open
	// offers nothing, whatever a round proved for it.
	for _, k := range promoted {
		f := &p.findings[k]
		clear(f.proven)
		f.chosen = -1
	}
	return settled, status, nil
}

// chosen is the candidate each finding has in the proposal.
func (p *proposer) chosen(k int) int { return p.findings[k].chosen }

// offer writes the proven remedies, and why there are none, into the
// report; it says whether the proposal applies any.
func (p *proposer) offer() bool {
	applied := false
	for k := range p.findings {
		f := &p.findings[k]
		c := &p.rep.Checks[f.check]
		// The one the proposal applies first, then the others lightest first.
		order := make([]int, 0, len(f.cands))
		if f.chosen >= 0 {
			order = append(order, f.chosen)
		}
		for i := range f.cands {
			if f.proven[i] && i != f.chosen {
				order = append(order, i)
			}
		}
		for _, i := range order {
			cand := &f.cands[i]
			c.Remedies = append(c.Remedies, Remedy{Change: cand.change, Patch: p.patch(cand.edits), Part: cand.part})
		}
		switch {
		case f.chosen >= 0:
			applied = true
		case len(f.cands) == 0:
			c.NoRemedy = f.noRemedy
		case len(c.Remedies) == 0:
			changes := make([]string, len(f.cands))
			for i, cand := range f.cands {
				changes[i] = strings.TrimSuffix(cand.change, ".")
			}
			c.NoRemedy = "No single change clears it without making another check worse; tried: " + strings.Join(changes, "; ") + "."
		}
	}
	return applied
}

// recheck reviews a changed design quietly.
func (p *proposer) recheck(d domain.Design) (Report, error) {
	rep, err := p.ru.run(d, p.comps, &reviewer{quiet: true})
	if err != nil {
		return Report{}, fmt.Errorf("review a proposed change: %w", err)
	}
	return rep, nil
}

// sweep is how far a remedy that is not local moves the operating point:
// 1 a wire, 2 a part that draws differently, 3 a source.
func (p *proposer) sweep(c *candidate) int {
	most := 0
	for _, e := range c.edits {
		w := 2
		switch {
		case p.r.t.nodes[e.node].parent < 0:
			w = 3
		case strings.HasPrefix(e.path, "/feed/wire/"):
			w = 1
		}
		most = max(most, w)
	}
	return most
}

// blame lists the findings whose remedy (as pick says) can have made one
// of the worse checks worse: a local remedy only its own node's checks,
// any other every check in its tree. Where a local remedy on the very
// node can explain a worse check, only it is blamed; else, of the others
// in its tree, those that move the operating point farthest (a source
// before a part, a part before a wire): a thicker wire seldom worsens
// anything, and blaming it with a changed pack would throw it away.
func (p *proposer) blame(worse []Check, pick func(k int) int) []int {
	if len(worse) == 0 {
		return nil
	}
	type suspect struct{ k, sweep int }
	local := map[int][]int{}    // by node
	tree := map[int][]suspect{} // by root
	var all []int
	for k := range p.findings {
		c := pick(k)
		if c < 0 {
			continue
		}
		all = append(all, k)
		cand := &p.findings[k].cands[c]
		if cand.local {
			for _, e := range cand.edits {
				if l := local[e.node]; len(l) == 0 || l[len(l)-1] != k {
					local[e.node] = append(l, k)
				}
			}
			continue
		}
		root := p.r.t.nodes[cand.edits[0].node].root
		tree[root] = append(tree[root], suspect{k, p.sweep(cand)})
	}
	var out []int
	for _, w := range worse {
		at, ok := p.index[w.Node]
		switch {
		case !ok || w.Node == "":
			// A design-wide check: every remedy in play can have moved it.
			out = append(out, all...)
		case len(local[at]) > 0:
			out = append(out, local[at]...)
		default:
			suspects := tree[p.r.t.nodes[at].root]
			most := 0
			for _, s := range suspects {
				most = max(most, s.sweep)
			}
			for _, s := range suspects {
				if s.sweep == most {
					out = append(out, s.k)
				}
			}
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}

// apply returns the design with the candidates pick names applied; -1
// applies none. Two edits of one member are merged: a removal wins, else
// the higher rank. Only the nodes it changes are copied.
func (p *proposer) apply(pick func(k int) int) domain.Design {
	type slot struct {
		node int
		path string
	}
	won := map[slot]edit{}
	var order []slot
	for k := range p.findings {
		c := pick(k)
		if c < 0 {
			continue
		}
		for _, e := range p.findings[k].cands[c].edits {
			s := slot{e.node, e.path}
			old, seen := won[s]
			switch {
			case !seen:
				order = append(order, s)
				won[s] = e
			case old.value == nil:
			case e.value == nil || e.rank > old.rank:
				won[s] = e
			}
		}
	}
	d := p.doc
	if len(order) == 0 {
		return d
	}
	d.Nodes = slices.Clone(p.doc.Nodes)
	slices.SortFunc(order, func(a, b slot) int {
		if a.node != b.node {
			return a.node - b.node
		}
		return strings.Compare(a.path, b.path)
	})
	for k, s := range order {
		n := &d.Nodes[s.node]
		if k == 0 || order[k-1].node != s.node {
			part := false
			for _, t := range order[k:] {
				if t.node != s.node {
					break
				}
				part = part || won[t].part
			}
			if part {
				*n = p.materialized(s.node)
			}
			copyFeed(n)
		}
		won[s].set(n)
	}
	return d
}

// materialized is a node of the original document as it stands once a
// change of its part's ratings takes every value its component gave it
// into the document and drops the component's name.
func (p *proposer) materialized(i int) domain.Node {
	n := p.doc.Nodes[i]
	if n.ComponentID == nil {
		return n
	}
	if c, ok := p.comps[*n.ComponentID]; ok {
		n = c.FillNode(n)
	}
	n.ComponentID = nil
	return n
}

// copyFeed gives a node its own copy of its feed, so edits leave the
// original document alone.
func copyFeed(n *domain.Node) {
	if n.Feed == nil {
		return
	}
	f := *n.Feed
	if f.Wire != nil {
		w := *f.Wire
		f.Wire = &w
	}
	if f.Fuse != nil {
		fu := *f.Fuse
		f.Fuse = &fu
	}
	f.Connectors = slices.Clone(f.Connectors)
	n.Feed = &f
}

// patch is a candidate's edits as RFC 6902 operations on the original
// document: "add" sets a member whether or not it was there, "remove"
// drops one that was. A node whose part changes first loses its
// component_id and gains every value its component gave it.
func (p *proposer) patch(edits []edit) []PatchOp {
	var ops []PatchOp
	sorted := slices.Clone(edits)
	slices.SortStableFunc(sorted, func(a, b edit) int {
		if a.node != b.node {
			return a.node - b.node
		}
		return strings.Compare(a.path, b.path)
	})
	var node domain.Node // the node being patched, to see which members it has
	for i, e := range sorted {
		ptr := p.r.t.nodes[e.node].ptr
		if i == 0 || sorted[i-1].node != e.node {
			var more []PatchOp
			node, more = p.nodeBefore(e.node, sorted)
			ops = append(ops, more...)
		}
		if e.value == nil {
			if hasMember(node, e.path) {
				ops = append(ops, PatchOp{Op: "remove", Path: ptr + e.path})
			}
			continue
		}
		ops = append(ops, PatchOp{Op: "add", Path: ptr + e.path, Value: mustJSON(e.value)})
	}
	return ops
}

// nodeBefore is node i as the edits of a patch find it, and the
// operations that take its component's values into the document first
// when an edit changes the part: remove its component_id, add what the
// component gave it (except what the edits set or remove anyway).
func (p *proposer) nodeBefore(i int, edits []edit) (domain.Node, []PatchOp) {
	orig := p.doc.Nodes[i]
	if orig.ComponentID == nil || !slices.ContainsFunc(edits, func(e edit) bool { return e.node == i && e.part }) {
		return orig, nil
	}
	n := p.materialized(i)
	ptr := p.r.t.nodes[i].ptr
	ops := []PatchOp{{Op: "remove", Path: ptr + "/component_id"}}
	was, now := reflect.ValueOf(orig.Ratings), reflect.ValueOf(n.Ratings)
	for _, fd := range domain.FieldsOf(reflect.TypeFor[domain.Ratings]()) {
		v := now.FieldByIndex(fd.Index)
		if v.IsZero() || !was.FieldByIndex(fd.Index).IsZero() ||
			slices.ContainsFunc(edits, func(e edit) bool { return e.node == i && e.path == "/"+fd.Name }) {
			continue
		}
		ops = append(ops, PatchOp{Op: "add", Path: ptr + "/" + fd.Name, Value: mustJSON(v.Interface())})
	}
	return n, ops
}

// hasMember reports whether node n has the member a removal names: one
// of its ratings ("/dropout_v"), or its fuse's voltage rating.
func hasMember(n domain.Node, path string) bool {
	if path == "/feed/fuse/voltage_rating_v" {
		return n.Feed != nil && n.Feed.Fuse != nil && n.Feed.Fuse.VoltageRatingV != nil
	}
	v := reflect.ValueOf(n.Ratings)
	for _, fd := range domain.FieldsOf(reflect.TypeFor[domain.Ratings]()) {
		if "/"+fd.Name == path {
			return !v.FieldByIndex(fd.Index).IsZero()
		}
	}
	panic("a remedy removes " + path + ", which hasMember does not know") // the remedies name only these
}

func mustJSON(v any) jsontext.Value {
	b, err := json.Marshal(v, json.Deterministic(true))
	if err != nil {
		panic(fmt.Sprintf("a remedy's value does not encode: %v", err)) // plain values and design structs always do
	}
	return b
}
