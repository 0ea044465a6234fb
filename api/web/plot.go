package web

import (
	"fmt"
	"math"
	"slices"
	"strings"

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

// dischargePlots draws one plot per battery, from what the report says
// about its pack and its loads' brownouts.
func dischargePlots(rep review.Report) []dischargePlot {
	plots := make([]dischargePlot, 0, len(rep.Runtime))
	for _, r := range rep.Runtime {
		if len(r.Pack.Curve) < 2 {
			plots = append(plots, dischargePlot{Source: r.Source,
				Notes: []string{"This review was stored before reports carried the pack's discharge curve; review the design again to plot it."}})
			continue
		}
		plots = append(plots, plotBattery(r))
	}
	return plots
}

func plotBattery(r review.RuntimeResult) dischargePlot {
	pack := r.Pack
	row := newRuntimeRow(r)
	p := dischargePlot{Source: r.Source, Chemistry: pack.Chemistry, Width: plotW, Height: plotH, Runtime: &row,
		Frame: svgRect{X: plotLeft, Y: plotTop, W: plotW - plotLeft - plotRight, H: plotH - plotTop - plotBottom}}

	vMin, vMax := pack.CutoffV, pack.FullV
	for _, pt := range pack.Curve {
		vMin, vMax = min(vMin, pt.PackV), max(vMax, pt.PackV)
	}
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
	for k := len(pack.Curve) - 1; k >= 0; k-- {
		pt := pack.Curve[k]
		cmd := "L"
		if k == len(pack.Curve)-1 {
			cmd = "M"
		}
		fmt.Fprintf(&d, "%s%d %d", cmd, x(1-pt.SOC), y(pt.PackV))
	}
	p.Curve = d.String()

	labels := []plotLine{{Class: "cutoff", Y: y(pack.CutoffV),
		Label: svgText{Text: "cutoff " + formatNumber(pack.CutoffV) + " V"}}}
	for _, b := range r.Brownouts {
		switch {
		case b.Outcome == review.BrownoutPartway && b.PackV != nil:
			labels = append(labels, plotLine{Class: "brownout", Y: y(*b.PackV),
				Label: svgText{Text: b.Node + " browns out " + formatNumber(*b.PackV) + " V"}})
		case b.Outcome == review.BrownoutAlways:
			p.Notes = append(p.Notes, fmt.Sprintf("%s needs more than a full pack gives: it browns out at any charge.", b.Node))
		case b.Outcome == review.BrownoutNever && b.PackV != nil:
			p.Notes = append(p.Notes, fmt.Sprintf("%s keeps working down to the cutoff (it browns out only below %s V).",
				b.Node, formatNumber(*b.PackV)))
		}
	}
	spreadLabels(labels, f.Y, f.Y+f.H)
	for k := range labels {
		labels[k].Label.X = f.X + f.W + 8
	}
	p.Lines = labels

	if r.UsableShare > 0 {
		start := 1 - pack.FullSOC
		end := min(start+r.UsableShare, 1)
		p.Usable = &svgRect{X: x(start), Y: f.Y, W: x(end) - x(start), H: f.H}
		ex := x(end)
		p.EndX = &ex
		text := "runs out here"
		if r.Hours != nil {
			text = "runtime " + formatNumber(*r.Hours) + " h"
		}
		p.EndLabel = svgText{X: ex, Y: f.Y - 6, Text: text}
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
