package web

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"wattshelf/domain"
	"wattshelf/domain/review"
)

// Power tree geometry, in SVG user units (CSS pixels on screen).
const (
	boxW     = 236
	boxH     = 126
	colGap   = 180 // room for a feed's labels
	rowGap   = 26
	treePad  = 16
	lineStep = 16
	maxIDLen = 28
)

// treeDiagram is the power tree: sources on the left, every node a box,
// every feed an elbow line carrying its labels.
type treeDiagram struct {
	Width, Height int
	Nodes         []treeBox
	Links         []treeLink
	// Outline is the same tree laid out top to bottom, each node under
	// its parent and indented by its depth, for paper: the diagram,
	// shrunk to a page's width, would print its labels too small to read.
	Outline []outlineEntry
}

// outlineEntry is a node of the printed outline: its box's texts and the
// labels of the feed that reaches it.
type outlineEntry struct {
	Indent int // the depth, up to maxOutlineIndent: a long chain still fits the page
	Box    *treeBox
	From   string // the node that feeds it
	Feed   string // the feed's labels
	Status string
}

const maxOutlineIndent = 8

type treeBox struct {
	ID     string
	Box    svgRect
	Name   svgText
	Kind   svgText
	Lines  []svgText
	Status string
	Symbol svgRect
	Word   svgText
	Title  string // the full text, for a tooltip and screen readers
}

type treeLink struct {
	Path   string
	Labels []svgText
	Fuse   *svgRect
}

type svgText struct {
	X, Y int
	Text string
}

type svgRect struct{ X, Y, W, H int }

// X2 and Y2 are the far edges, for templates that cannot add.
func (r svgRect) X2() int { return r.X + r.W }
func (r svgRect) Y2() int { return r.Y + r.H }

// layoutTree places the report's nodes: depth gives the column, leaves
// take rows in report order and a parent sits level with the middle of its
// children. docNodes, when the reviewed document is known, add what only
// it holds: topology, part number, fuse speed and connectors.
func layoutTree(rep review.Report, docNodes []domain.Node, worst map[string]review.Status) treeDiagram {
	nodes := rep.Nodes
	index := make(map[string]int, len(nodes))
	for i, n := range nodes {
		index[n.ID] = i
	}
	doc := make(map[string]domain.Node, len(docNodes))
	for _, n := range docNodes {
		doc[n.ID] = n
	}
	feeds := make(map[string]review.FeedResult, len(rep.Feeds))
	for _, f := range rep.Feeds {
		feeds[f.Node] = f
	}
	parent := make([]int, len(nodes))
	children := make([][]int, len(nodes))
	var roots []int
	for i, n := range nodes {
		p, ok := index[n.Parent]
		if n.Parent == "" || !ok || p == i {
			parent[i] = -1
			roots = append(roots, i)
			continue
		}
		parent[i] = p
		children[p] = append(children[p], i)
	}

	depth := make([]int, len(nodes))
	row := make([]float64, len(nodes))
	placed := make([]bool, len(nodes))
	nextRow := 0
	maxDepth := 0
	var order []int // pre-order, each node after its parent
	// place is iterative: a design may hold thousands of nodes in one chain.
	place := func(root int) {
		type frame struct{ node, next int }
		stack := []frame{{root, 0}}
		placed[root] = true
		order = append(order, root)
		for len(stack) > 0 {
			top := &stack[len(stack)-1]
			n := top.node
			if top.next < len(children[n]) {
				c := children[n][top.next]
				top.next++
				if !placed[c] {
					placed[c] = true
					order = append(order, c)
					depth[c] = depth[n] + 1
					maxDepth = max(maxDepth, depth[c])
					stack = append(stack, frame{c, 0})
				}
				continue
			}
			stack = stack[:len(stack)-1]
			first, last := -1, -1
			for _, c := range children[n] {
				if depth[c] == depth[n]+1 {
					if first < 0 {
						first = c
					}
					last = c
				}
			}
			if first < 0 {
				row[n] = float64(nextRow)
				nextRow++
			} else {
				row[n] = (row[first] + row[last]) / 2
			}
		}
	}
	for _, r := range roots {
		place(r)
	}
	// A cycle would leave nodes unplaced; the engine cannot report one, but
	// every node must still be drawn.
	for i := range nodes {
		if !placed[i] {
			place(i)
		}
	}

	d := treeDiagram{
		Width:  2*treePad + (maxDepth+1)*boxW + maxDepth*colGap,
		Height: 2*treePad + max(nextRow, 1)*boxH + max(nextRow-1, 0)*rowGap,
	}
	feedLabels := make([][]string, len(nodes)) // of the feed reaching each node
	pos := func(i int) (int, int) {
		return treePad + depth[i]*(boxW+colGap), treePad + int(row[i]*float64(boxH+rowGap)+0.5)
	}
	for i, n := range nodes {
		x, y := pos(i)
		status := "none"
		if s, ok := worst[n.ID]; ok {
			status = string(s)
		}
		dn, known := doc[n.ID]
		lines := boxLines(n, dn, known)
		b := treeBox{ID: n.ID, Box: svgRect{X: x, Y: y, W: boxW, H: boxH}, Status: status,
			Name:   svgText{X: x + 10, Y: y + 20, Text: lines[0]},
			Kind:   svgText{X: x + 10, Y: y + 37, Text: lines[1]},
			Symbol: svgRect{X: x + 10, Y: y + boxH - 25, W: 17, H: 17},
			Word:   svgText{X: x + 32, Y: y + boxH - 11, Text: statusOf(status).Word},
			Title:  n.ID + " (" + n.Type + "): " + strings.Join(lines[1:], "; ") + "; worst finding: " + statusOf(status).Word}
		for k, line := range lines[2:] {
			b.Lines = append(b.Lines, svgText{X: x + 10, Y: y + 56 + k*17, Text: line})
		}
		d.Nodes = append(d.Nodes, b)
		p := parent[i]
		if p < 0 || depth[i] != depth[p]+1 {
			continue
		}
		px, py := pos(p)
		var feed *domain.Feed
		if known {
			feed = dn.Feed
		}
		link := feedLink(px, py, x, y, feeds[n.ID], feed)
		d.Links = append(d.Links, link)
		for _, l := range link.Labels {
			feedLabels[i] = append(feedLabels[i], l.Text)
		}
	}
	for _, i := range order {
		e := outlineEntry{Indent: min(depth[i], maxOutlineIndent), Box: &d.Nodes[i], Status: d.Nodes[i].Status,
			Feed: strings.Join(feedLabels[i], "; ")}
		if parent[i] >= 0 {
			e.From = nodes[parent[i]].ID
		}
		d.Outline = append(d.Outline, e)
	}
	return d
}

// boxLines are the texts in a node's box: its name, its type, the voltage
// window at its input and the currents it draws.
func boxLines(r review.NodeResult, dn domain.Node, known bool) []string {
	kind := r.Type
	if known && dn.Topology != "" && r.Type == domain.NodeRegulator {
		kind += ", " + strings.ReplaceAll(dn.Topology, "_", "-")
	}
	if known && dn.ComponentID != nil {
		kind += fmt.Sprintf(" · part #%d", *dn.ComponentID)
	}
	lines := []string{shorten(r.ID, maxIDLen), kind,
		fmt.Sprintf("%s–%s V, nominal %s V", formatNumber(r.VLow), formatNumber(r.VHigh), formatNumber(r.VNominal)),
		fmt.Sprintf("run %s A · peak %s A", formatNumber(r.RunA), formatNumber(r.PeakA))}
	if r.OutVLow != nil && r.OutVHigh != nil {
		return append(lines, fmt.Sprintf("avg %s A · out %s–%s V", formatNumber(r.AvgA), formatNumber(*r.OutVLow), formatNumber(*r.OutVHigh)))
	}
	return append(lines, fmt.Sprintf("avg %s A", formatNumber(r.AvgA)))
}

// feedLink draws the elbow from the parent's right edge to the child's
// left edge, labels above its last stretch, and a fuse symbol on it. The
// report gives the wire, fuse rating and drop; the document, when known,
// adds the fuse's speed and the connectors.
func feedLink(px, py, cx, cy int, f review.FeedResult, doc *domain.Feed) treeLink {
	startY, endY := py+boxH/2, cy+boxH/2
	midX := px + boxW + 24
	l := treeLink{Path: fmt.Sprintf("M%d %dH%dV%dH%d", px+boxW, startY, midX, endY, cx)}
	var labels []string
	if f.Node != "" {
		labels = append(labels, fmt.Sprintf("%s · %s m", f.Gauge, formatNumber(f.LengthM)))
	}
	if f.FuseA != nil {
		text := "fuse " + formatNumber(*f.FuseA) + " A"
		if doc != nil && doc.Fuse != nil {
			speed := doc.Fuse.Speed
			if speed == "" {
				speed = domain.FuseSlow
			}
			text += " " + speed
		}
		labels = append(labels, text)
		l.Fuse = &svgRect{X: cx - 34, Y: endY - 5, W: 22, H: 10}
	} else if f.Node != "" {
		labels = append(labels, "no fuse")
	}
	if doc != nil {
		for _, c := range doc.Connectors {
			text := c.Family
			if text == "" {
				text = "connector"
			}
			if c.RatingA != nil {
				text += " " + formatNumber(*c.RatingA) + " A"
			}
			labels = append(labels, shorten(text, 24))
		}
	}
	if f.Node != "" {
		labels = append(labels, "drop "+formatDrop(f.DropV, f.DropPct))
	}
	// Stack the labels upwards from just above the line.
	for k := range labels {
		l.Labels = append(l.Labels, svgText{X: midX + 8, Y: endY - 9 - (len(labels)-1-k)*lineStep, Text: labels[k]})
	}
	return l
}

// formatDrop gives a feed's voltage drop in volts or millivolts, with its
// share to two decimals: "9.5 mV (0.07 %)", "0.42 V (3.5 %)".
func formatDrop(v, pct float64) string {
	amount := formatNumber(v) + " V"
	if math.Abs(v) < 0.1 {
		amount = formatNumber(math.Round(v*1e4)/10) + " mV"
	}
	share := strconv.FormatFloat(pct, 'f', 2, 64)
	if math.Abs(pct) >= 10 {
		share = strconv.FormatFloat(pct, 'f', 1, 64)
	}
	return amount + " (" + share + " %)"
}

func shorten(s string, n int) string {
	if utf8.RuneCountInString(s) <= n {
		return s
	}
	r := []rune(s)
	return string(r[:n-1]) + "…"
}
