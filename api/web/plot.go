package web

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"wattshelf/domain"
	"wattshelf/domain/electric"
	"wattshelf/domain/review"
)

// Discharge plot geometry, in SVG user units.
const (
	plotW      = 720
	plotH      = 380
	plotLeft   = 64
	plotRight  = 200 // room for the line labels
	plotTop    = 26
	plotBottom = 56
)

// dischargePlot is one battery's pack voltage against the share of its
// capacity used, with the cutoff, every load's brownout voltage and the
// point where the runtime ends.
type dischargePlot struct {
	Source    string
	Chemistry string
	Width     int
	Height    int
	Frame     svgRect
	Curve     string
	Usable    *svgRect
	XTicks    []svgTick
	YTicks    []svgTick
	Lines     []plotLine
	EndX      *int
	EndLabel  svgText
	Notes     []string
	Runtime   *runtimeRow
}

type svgTick struct {
	Pos   int
	Label string
}

type plotLine struct {
	Class string
	Y     int
	Label svgText
}

// dischargePlots draws one plot per battery whose chemistry curve is known.
func dischargePlots(nodes []domain.Node, rep review.Report, chems []electric.Chemistry) []dischargePlot {
	var plots []dischargePlot
	brownouts := brownoutVoltages(nodes, rep)
	for _, n := range nodes {
		if n.Type != domain.NodeBattery {
			continue
		}
		i := slices.IndexFunc(chems, func(c electric.Chemistry) bool { return c.Name == n.Chemistry })
		if i < 0 {
			plots = append(plots, dischargePlot{Source: n.ID, Chemistry: n.Chemistry,
				Notes: []string{"No discharge curve is stored for this chemistry, so no plot can be drawn."}})
			continue
		}
		plots = append(plots, plotBattery(n, chems[i], brownouts[n.ID], rep))
	}
	return plots
}

func plotBattery(n domain.Node, chem electric.Chemistry, loads []brownout, rep review.Report) dischargePlot {
	series := 1
	if n.Series != nil && *n.Series > 0 {
		series = *n.Series
	}
	if n.CellFullV != nil {
		chem.FullV = *n.CellFullV
	}
	if n.CellCutoffV != nil {
		chem.CutoffV = *n.CellCutoffV
	}
	pack := electric.Pack{Chem: chem, Series: series, Parallel: 1, CellCapacityAh: 1}
	p := dischargePlot{Source: n.ID, Chemistry: chem.Name, Width: plotW, Height: plotH,
		Frame: svgRect{X: plotLeft, Y: plotTop, W: plotW - plotLeft - plotRight, H: plotH - plotTop - plotBottom}}

	s := float64(series)
	vMin, vMax := math.Inf(1), math.Inf(-1)
	for _, pt := range chem.Curve {
		vMin, vMax = min(vMin, pt.CellV*s), max(vMax, pt.CellV*s)
	}
	vMin, vMax = min(vMin, pack.CutoffV()), max(vMax, pack.FullV())

	step := niceStep((vMax - vMin) / 5)
	lo, hi := math.Floor(vMin/step)*step, math.Ceil(vMax/step)*step
	if hi <= lo {
		hi = lo + step
	}
	f := p.Frame
	x := func(used float64) int { return f.X + int(math.Round(used*float64(f.W))) }
	y := func(v float64) int { return f.Y + int(math.Round((hi-v)/(hi-lo)*float64(f.H))) }

	for k := 0; k <= 5; k++ {
		used := float64(k) / 5
		p.XTicks = append(p.XTicks, svgTick{Pos: x(used), Label: fmt.Sprintf("%d %%", k*20)})
	}
	for v := lo; v <= hi+step/2; v += step {
		p.YTicks = append(p.YTicks, svgTick{Pos: y(v), Label: formatNumber(v) + " V"})
	}

	// The curve runs from empty to full; the plot reads from full (left) to
	// empty (right), as the pack is used.
	var d strings.Builder
	for k := len(chem.Curve) - 1; k >= 0; k-- {
		pt := chem.Curve[k]
		cmd := "L"
		if k == len(chem.Curve)-1 {
			cmd = "M"
		}
		fmt.Fprintf(&d, "%s%d %d", cmd, x(1-pt.SOC), y(pt.CellV*s))
	}
	p.Curve = d.String()

	labels := []plotLine{{Class: "cutoff", Y: y(pack.CutoffV()),
		Label: svgText{Text: "cutoff " + formatNumber(pack.CutoffV()) + " V"}}}
	for _, b := range loads {
		if b.packV > pack.FullV() {
			p.Notes = append(p.Notes, fmt.Sprintf("%s needs more than a full pack gives: it browns out at any charge.", b.node))
			continue
		}
		if b.packV <= pack.CutoffV() {
			p.Notes = append(p.Notes, fmt.Sprintf("%s keeps working down to the cutoff (it browns out only below %s V).",
				b.node, formatNumber(b.packV)))
			continue
		}
		labels = append(labels, plotLine{Class: "brownout", Y: y(b.packV),
			Label: svgText{Text: b.node + " browns out " + formatNumber(b.packV) + " V"}})
	}
	spreadLabels(labels, f.Y, f.Y+f.H)
	for k := range labels {
		labels[k].Label.X = f.X + f.W + 8
	}
	p.Lines = labels

	for _, r := range rep.Runtime {
		if r.Source != n.ID {
			continue
		}
		row := runtimeRow(r)
		p.Runtime = &row
		start := 1 - pack.SOCAtPackV(pack.FullV())
		end := min(start+r.UsableShare, 1)
		if r.UsableShare > 0 {
			p.Usable = &svgRect{X: x(start), Y: f.Y, W: x(end) - x(start), H: f.H}
			ex := x(end)
			p.EndX = &ex
			text := "runs out here"
			if r.Hours != nil {
				text = "runtime " + formatNumber(*r.Hours) + " h"
			}
			p.EndLabel = svgText{X: ex, Y: f.Y - 6, Text: text}
		}
	}
	return p
}

// spreadLabels nudges line labels apart so none overprints another,
// keeping their order by height.
func spreadLabels(lines []plotLine, top, bottom int) {
	const gap = 15
	idx := make([]int, len(lines))
	for k := range idx {
		idx[k] = k
		lines[k].Label.Y = lines[k].Y + 4
	}
	slices.SortFunc(idx, func(a, b int) int { return lines[a].Y - lines[b].Y })
	for k := 1; k < len(idx); k++ {
		prev, cur := &lines[idx[k-1]].Label, &lines[idx[k]].Label
		cur.Y = max(cur.Y, prev.Y+gap)
	}
	for k := len(idx) - 1; k >= 0; k-- {
		cur := &lines[idx[k]].Label
		limit := bottom + 4
		if k < len(idx)-1 {
			limit = lines[idx[k+1]].Label.Y - gap
		}
		cur.Y = max(min(cur.Y, limit), top)
	}
}

// niceStep rounds a raw axis step up to 1, 2 or 5 times a power of ten.
func niceStep(raw float64) float64 {
	if !(raw > 0) {
		return 1
	}
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 5, 10} {
		if raw <= m*mag {
			return m * mag
		}
	}
	return 10 * mag
}

// brownout is the pack voltage below which a load's input falls under its
// min_v.
type brownout struct {
	node  string
	packV float64
}

// brownoutVoltages reads each motor's and load's min_v back up its path to
// its battery, through the feed drops of the operating point and the
// regulators on the way (DESIGN section 6): a feed or driver shifts the
// voltage by its drop, a linear regulator caps it at output_v and shifts
// it by its dropout, a buck caps it, a boost or buck-boost holds it flat
// above its min_input_v. Keyed by battery id, highest voltage first.
func brownoutVoltages(nodes []domain.Node, rep review.Report) map[string][]brownout {
	index := make(map[string]int, len(nodes))
	for i, n := range nodes {
		index[n.ID] = i
	}
	drop := make(map[string]float64, len(rep.Feeds))
	for _, f := range rep.Feeds {
		drop[f.Node] = f.DropV
	}
	out := map[string][]brownout{}
	for _, n := range nodes {
		if (n.Type != domain.NodeMotor && n.Type != domain.NodeLoad) || n.MinV == nil || *n.MinV <= 0 {
			continue
		}
		path := []int{index[n.ID]}
		for len(path) <= len(nodes) {
			last := nodes[path[len(path)-1]]
			if last.Feed == nil {
				break
			}
			p, ok := index[last.Feed.From]
			if !ok {
				break
			}
			path = append(path, p)
		}
		root := nodes[path[len(path)-1]]
		if root.Type != domain.NodeBattery || len(path) > len(nodes) {
			continue
		}
		// Walk down from the battery, building the map from pack voltage
		// to this node's input, then read it backwards at min_v.
		m := pathMap{ceiling: math.Inf(1)}
		for k := len(path) - 2; k >= 0; k-- {
			parent, child := nodes[path[k+1]], nodes[path[k]]
			m = m.through(parent)
			d := drop[child.ID]
			m.ceiling -= d
			if !m.flat {
				m.shift += d
			}
		}
		out[root.ID] = append(out[root.ID], brownout{node: n.ID, packV: m.packVFor(*n.MinV)})
	}
	for id := range out {
		slices.SortStableFunc(out[id], func(a, b brownout) int {
			return -cmpFloat(a.packV, b.packV)
		})
	}
	return out
}

// pathMap is a node's input voltage as a function of pack voltage V:
// off below threshold, else min(ceiling, V − shift), or the ceiling alone
// when a regulator on the way holds it flat.
type pathMap struct {
	threshold, ceiling, shift float64
	flat, dead                bool
}

// through is the map of what node n passes to its children.
func (m pathMap) through(n domain.Node) pathMap {
	if n.Type != domain.NodeRegulator || n.OutputV == nil {
		return m
	}
	out := *n.OutputV
	switch n.Topology {
	case domain.TopologyLinear:
		dropout := 0.0
		if n.DropoutV != nil {
			dropout = *n.DropoutV
		}
		m.ceiling = min(out, m.ceiling-dropout)
		if !m.flat {
			m.shift += dropout
		}
		return m
	}
	if n.MinInputV != nil && *n.MinInputV > 0 {
		on := m.packVFor(*n.MinInputV)
		m.dead = m.dead || math.IsInf(on, 1)
		m.threshold = max(m.threshold, on)
	}
	if n.Topology == domain.TopologyBuck {
		m.ceiling = min(out, m.ceiling)
		return m
	}
	m.flat, m.ceiling = true, out
	return m
}

// packVFor is the lowest pack voltage at which the input reaches v; +Inf
// when it never does.
func (m pathMap) packVFor(v float64) float64 {
	switch {
	case m.dead || m.ceiling < v:
		return math.Inf(1)
	case m.flat:
		return m.threshold
	}
	return max(m.threshold, v+m.shift)
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}
