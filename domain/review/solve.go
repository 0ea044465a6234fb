package review

import (
	"math"

	"wattshelf/domain/electric"
)

// Fixed-point settings for switching regulators, whose input current
// depends on the voltage their feed leaves them. Each step costs one pass
// over the tree; a sane design settles in a handful.
const (
	maxSolveSteps  = 100
	solveTolerance = 1e-9 // relative change of any switching input current
)

// tree holds the nodes in an order where every parent comes before its
// children, and each node's children.
type tree struct {
	nodes      []node
	order      []int32 // breadth first from the roots
	childStart []int32 // children of i are child[childStart[i]:childStart[i+1]]
	child      []int32
	// per node, what the solver's next pass must work out again: an
	// input of its currents (staleI) or of its voltages (staleV) moved in
	// the pass before. Kept apart from the nodes, so a pass that skips
	// most of them reads a few cache lines, not every node.
	marks      []int32
	nSwitching int32 // switching regulators: each gets a heat check of its own
	converged  bool
}

const (
	staleI = 1 << iota
	staleV
)

func newTree(nodes []node) *tree {
	t := &tree{nodes: nodes}
	n := len(nodes)
	t.childStart = make([]int32, n+1)
	for i := range nodes {
		if p := nodes[i].parent; p >= 0 {
			t.childStart[p+1]++
		}
		if nodes[i].switching() {
			t.nSwitching++
		}
	}
	for i := 0; i < n; i++ {
		t.childStart[i+1] += t.childStart[i]
	}
	t.child = make([]int32, t.childStart[n])
	fillAt := make([]int32, n)
	copy(fillAt, t.childStart[:n])
	for i := range nodes {
		if p := nodes[i].parent; p >= 0 {
			t.child[fillAt[p]] = int32(i)
			fillAt[p]++
		}
	}
	t.marks = fillAt // done with: the solver's marks take its place
	t.order = make([]int32, 0, n)
	for i := range nodes {
		if nodes[i].parent < 0 {
			nodes[i].root = i
			t.order = append(t.order, int32(i))
		}
	}
	for k := 0; k < len(t.order); k++ {
		i := t.order[k]
		for _, c := range t.children(int(i)) {
			nodes[c].root = nodes[i].root
			t.order = append(t.order, c)
		}
	}
	return t
}

func (t *tree) children(i int) []int32 { return t.child[t.childStart[i]:t.childStart[i+1]] }

// solve finds the operating point: currents flow up from
// the leaves, voltages flow down from the roots. Without switching
// regulators one pass each way is exact; with them the two passes repeat
// until no switching input current moves, at most maxSolveSteps times.
// A pass works out again only the nodes whose inputs moved in the pass
// before: the others would come out bit for bit as they are, so a design
// where one regulator takes many steps costs its own path per step, not
// the whole tree.
func (t *tree) solve() {
	for i := range t.marks {
		t.marks[i] = staleI | staleV
	}
	t.voltages()
	for step := 1; ; step++ {
		moved := t.currents()
		t.voltages()
		if t.nSwitching == 0 || moved <= solveTolerance {
			t.converged = true
			break
		}
		if step == maxSolveSteps {
			break
		}
	}
	t.paths()
}

// currents sets the run, peak and average current of every stale node
// from its children, leaves first, and returns the largest relative
// change of a switching regulator's input current. A node whose currents
// change makes its parent's stale, and its own voltages (run sets its
// feed's drop).
func (t *tree) currents() float64 {
	moved, marks := 0.0, t.marks
	for k := len(t.order) - 1; k >= 0; k-- {
		i := int(t.order[k])
		if marks[i]&staleI == 0 {
			continue
		}
		marks[i] &^= staleI
		n := &t.nodes[i]
		run, peak, avg, motor := n.run, n.peak, n.avg, n.hasMotor
		n.outRun, n.outPeak, n.outAvg, n.hasMotor = 0, 0, 0, n.kind == kindMotor
		for _, c := range t.children(i) {
			ch := &t.nodes[c]
			n.outRun += ch.run
			n.outPeak += ch.peak
			n.outAvg += ch.avg
			n.hasMotor = n.hasMotor || ch.hasMotor
		}
		switch n.kind {
		case kindLoad:
			n.run, n.peak, n.avg = n.currentA, max(n.peakA, n.currentA), n.currentA*n.duty
		case kindMotor:
			// Surge: the stall current at the highest voltage it can see.
			n.run = n.runningA
			n.peak = max(n.stallA*n.vHigh/n.ratedV, n.run)
			n.avg = n.run * n.duty
		case kindDriver:
			n.run, n.peak, n.avg = n.outRun+n.quiescentA, n.outPeak+n.quiescentA, n.outAvg+n.quiescentA
		case kindRegulator:
			if n.topo == topoLinear {
				n.run, n.peak, n.avg = n.outRun+n.quiescentA, n.outPeak+n.quiescentA, n.outAvg+n.quiescentA
				break
			}
			before := n.run
			t.switchingCurrents(n)
			if d := math.Abs(n.run-before) / max(n.run, before, 1e-12); d > moved {
				moved = d
			}
		default: // sources deliver what their children draw
			n.run, n.peak, n.avg = n.outRun, n.outPeak, n.outAvg
		}
		// != holds for NaN too: a current that is not a number stays stale.
		if n.run != run || n.peak != peak || n.avg != avg || n.hasMotor != motor {
			marks[i] |= staleV
			if n.parent >= 0 {
				marks[n.parent] |= staleI
			}
		}
	}
	return moved
}

// switchingCurrents sets a switching regulator's input currents: output
// power over efficiency and input voltage, V_out·I_out / (η·V_in), at its
// lowest input for run and peak and at its nominal input for the average.
// The lowest input is where the feed's drop, caused by this very current,
// leaves it: V_in = V_p − I·R with I = P/(η·V_in), so
// V_in = (V_p + √(V_p² − 4·R·P/η)) / 2. Without a real root the feed
// cannot carry the power at all; the regulator is marked collapsed and
// draws the most the feed can deliver, V_p/(2R), at V_p/2.
func (t *tree) switchingCurrents(n *node) {
	vp := t.nodes[n.parent].outLow - n.revDropV
	r := n.feed.resistance
	powerIn := n.outputV * n.outRun / n.efficiency
	n.collapsed = false
	if vp <= 0 {
		// Nothing reaches it at the low end (a regulator above has dropped
		// out): it is off, and its headroom check says so.
		n.run, n.peak, n.avg = 0, 0, 0
		return
	}
	vin, ok := solveFeedV(vp, r, powerIn)
	if !ok {
		n.collapsed = true
		n.run = vp / (2 * r)
		n.peak, n.avg = n.run, n.run
		return
	}
	n.run = electric.SwitchingInputA(vin, n.outputV, n.outRun, n.efficiency)
	n.peak = max(electric.SwitchingInputA(vin, n.outputV, n.outPeak, n.efficiency), n.run)
	// The nominal input is at least the low one; before the first pass
	// has set it, the low one stands in.
	n.avg = electric.SwitchingInputA(max(n.vNom, vin), n.outputV, n.outAvg, n.efficiency)
}

// solveFeedV is the voltage left at the end of a feed of resistance r from
// vp > 0 when the far end draws constant power powerIn; false when the
// feed cannot deliver that power at any voltage.
func solveFeedV(vp, r, powerIn float64) (float64, bool) {
	if powerIn <= 0 {
		return vp, true
	}
	disc := vp*vp - 4*r*powerIn
	if disc < 0 {
		return 0, false
	}
	return (vp + math.Sqrt(disc)) / 2, true
}

// voltages sets the input and output range of every stale node from its
// parent's, roots first: the low and nominal ends lose run·R on the way,
// the high end is the no-load voltage. A motor or switching regulator
// whose range changes makes its own currents stale, and a node whose
// output changes its children's voltages.
func (t *tree) voltages() {
	marks := t.marks
	for _, i := range t.order {
		if marks[i]&staleV == 0 {
			continue
		}
		marks[i] &^= staleV
		n := &t.nodes[i]
		was := [6]float64{n.vLow, n.vNom, n.vHigh, n.outLow, n.outNom, n.outHigh}
		switch {
		case n.kind == kindBattery:
			n.vLow, n.vNom, n.vHigh = n.pack.CutoffV(), n.pack.NominalV(), n.pack.FullV()
		case n.kind == kindSupply:
			n.vLow, n.vNom, n.vHigh = n.outputV, n.outputV, n.outputV
		default:
			p := &t.nodes[n.parent]
			// A reverse-polarity diode or FET loses its drop at the low and
			// nominal ends; the high end, at no load, is taken without it.
			drop := n.run*n.feed.resistance + n.revDropV
			n.vLow, n.vNom, n.vHigh = max(p.outLow-drop, 0), max(p.outNom-drop, 0), p.outHigh
		}
		switch n.kind {
		case kindRegulator:
			n.outLow, n.outNom, n.outHigh = n.regulate(n.vLow), n.regulate(n.vNom), n.regulate(n.vHigh)
		default: // sources and drivers pass their voltage on
			n.outLow, n.outNom, n.outHigh = n.vLow, n.vNom, n.vHigh
		}
		// Only a motor's surge and a switching regulator's draw follow
		// voltages; every other node's currents follow its children's.
		if (n.kind == kindMotor || n.switching()) && was != [6]float64{n.vLow, n.vNom, n.vHigh, n.outLow, n.outNom, n.outHigh} {
			marks[i] |= staleI
		}
		if was[3] != n.outLow || was[4] != n.outNom || was[5] != n.outHigh {
			for _, c := range t.children(int(i)) {
				marks[c] |= staleV
				if t.nodes[c].switching() { // it reads its parent's low end itself
					marks[c] |= staleI
				}
			}
		}
	}
}

// regulate is a regulator's output at input vin. A linear one follows
// vin − dropout below its setting; a switching one is off below its stated
// minimum input, a buck follows its input below its setting, a boost
// passes an input above its setting through.
func (n *node) regulate(vin float64) float64 {
	if n.topo == topoLinear {
		return electric.LinearOutputV(vin, n.outputV, n.dropoutV)
	}
	if vin <= 0 || (n.minInputV > 0 && vin < n.minInputV) {
		return 0
	}
	switch n.topo {
	case topoBuck:
		return min(n.outputV, vin)
	case topoBoost:
		return max(n.outputV, vin)
	}
	return n.outputV
}

// pathMap is a node's low-end input voltage as a function of its battery's
// voltage V, with the feed drops of the operating point: 0 below threshold
// (a regulator on the way is off), else max(0, min(ceiling, V − shift)), or
// the constant ceiling when flat (a regulator on the way holds it). Reading
// it backwards says at what pack voltage a load browns out.
type pathMap struct {
	threshold float64
	ceiling   float64
	shift     float64
	flat      bool
	dead      bool // never on at any pack voltage
}

func (t *tree) paths() {
	for _, i := range t.order {
		n := &t.nodes[i]
		if n.parent < 0 {
			n.path = pathMap{ceiling: math.Inf(1)}
			continue
		}
		m := t.nodes[n.parent].outPath()
		drop := n.run*n.feed.resistance + n.revDropV
		m.ceiling -= drop
		if !m.flat {
			m.shift += drop
		}
		n.path = m
	}
}

// outPath is the map of what n passes to its children.
func (n *node) outPath() pathMap {
	m := n.path
	if n.kind != kindRegulator {
		return m
	}
	if n.topo == topoLinear {
		m.ceiling = min(n.outputV, m.ceiling-n.dropoutV)
		if !m.flat {
			m.shift += n.dropoutV
		}
		return m
	}
	if n.minInputV > 0 {
		on := m.packVFor(n.minInputV)
		if math.IsInf(on, 1) {
			m.dead = true
		}
		m.threshold = max(m.threshold, on)
	}
	if n.topo == topoBuck {
		m.ceiling = min(n.outputV, m.ceiling)
		return m
	}
	m.flat, m.ceiling = true, n.outputV
	return m
}

// packVFor is the lowest battery voltage at which the mapped input reaches
// v; +Inf when it never does. Callers pass v > 0.
func (m pathMap) packVFor(v float64) float64 {
	switch {
	case m.dead || m.ceiling < v:
		return math.Inf(1)
	case m.flat:
		return m.threshold
	}
	return max(m.threshold, v+m.shift)
}
