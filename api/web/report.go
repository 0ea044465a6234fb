package web

import (
	"fmt"
	"io"
	"slices"
	"time"

	"wattshelf/domain"
	"wattshelf/domain/review"
)

// ReportInput is everything the printable report shows. Rendering is a
// pure function of it: the handler only loads it.
type ReportInput struct {
	Report review.Report
	// Design is the document reviewed, or nil for a review stored before
	// reviews kept their document: the tree is then drawn from the report
	// alone, without connectors, fuse speeds, topologies or part numbers.
	Design     *domain.Design
	DesignName string
	ReviewedAt time.Time
	// Components are the shelf records the design's nodes name; they fill
	// what a node leaves out, as they did for the review.
	Components map[int64]domain.Component
	// ShareID addresses the downloads of the design and the full report;
	// DocumentKept says the review kept its document to download.
	ShareID      string
	DocumentKept bool
}

// A design of more nodes than maxDrawnNodes is shown as a summary: no
// tree diagram or table of operating points, and its findings other than
// passes, at most maxListedFindings of them; the design and the full
// report are offered as downloads. A 5,000-node page in full was 22 MB
// and took seconds to render (issue 15 item 1).
const (
	maxDrawnNodes     = 250
	maxListedFindings = 1000
	maxSummaryPlots   = 12
)

// reportPage is the report's view model.
type reportPage struct {
	DesignName    string
	Status        string
	Headline      string
	Counts        review.Counts
	LimitsVersion int
	EngineVersion string
	ReviewedAt    time.Time
	Tree          treeDiagram
	Plots         []dischargePlot
	Groups        []findingGroup
	Runtime       []runtimeRow
	Nodes         []review.NodeResult
	Cautions      []string
	Rules         map[string]review.Rule
	// OlderRules says the review was made by an older engine or under
	// limits that predate some checks (NotRun): it should be made again.
	OlderRules bool
	NotRun     []string
	// NoDocument says the tree lacks what only the document held.
	NoDocument   bool
	ShareID      string
	DocumentKept bool
	// Summary says the design is too large to draw; NodeCount is its size
	// and Unlisted the findings the summary leaves to the download.
	Summary   bool
	NodeCount int
	Unlisted  int
}

type findingGroup struct {
	Node   string
	Type   string
	Worst  string
	Checks []review.Check
}

type runtimeRow struct {
	Source      string
	Hours       *float64
	UsableShare float64
	LimitedBy   string
}

func newRuntimeRow(r review.RuntimeResult) runtimeRow {
	return runtimeRow{Source: r.Source, Hours: r.Hours, UsableShare: r.UsableShare, LimitedBy: r.LimitedBy}
}

func (v *views) renderReport(w io.Writer, in ReportInput) error {
	return v.report.ExecuteTemplate(w, "page", reportView(in))
}

func reportView(in ReportInput) reportPage {
	rep := in.Report
	page := reportPage{
		DesignName: in.DesignName, Status: string(rep.Status), Counts: rep.Counts,
		LimitsVersion: rep.LimitsVersion, EngineVersion: rep.EngineVersion, ReviewedAt: in.ReviewedAt,
		Nodes: rep.Nodes, Cautions: rep.Cautions, Rules: rep.Rules,
		OlderRules: rep.EngineVersion != review.EngineVersion || len(rep.NotRun) > 0, NotRun: rep.NotRun,
	}
	if page.DesignName == "" {
		page.DesignName = "Untitled design"
	}
	page.Headline = headline(rep)
	page.ShareID, page.DocumentKept, page.NodeCount = in.ShareID, in.DocumentKept, len(rep.Nodes)
	worst := worstByNode(rep.Checks)
	if page.NodeCount > maxDrawnNodes {
		return summaryView(page, rep, worst)
	}
	var nodes []domain.Node
	if in.Design != nil {
		nodes = resolveNodes(*in.Design, in.Components)
	} else {
		page.NoDocument = true
	}
	page.Plots = dischargePlots(rep)
	page.Tree = layoutTree(rep, nodes, worst)
	page.Groups = groupFindings(rep.Nodes, rep.Checks, worst)
	for _, r := range rep.Runtime {
		page.Runtime = append(page.Runtime, newRuntimeRow(r))
	}
	return page
}

// summaryView is the page of a design too large to draw: its verdict, its
// findings other than passes (worst first, up to maxListedFindings), the
// first few discharge plots and runtimes, and the cautions.
func summaryView(page reportPage, rep review.Report, worst map[string]review.Status) reportPage {
	page.Summary, page.Nodes = true, nil
	var findings []review.Check
	for _, c := range rep.Checks {
		if c.Status != review.Pass {
			findings = append(findings, c)
		}
	}
	slices.SortStableFunc(findings, func(a, b review.Check) int { return b.Status.Severity() - a.Status.Severity() })
	if len(findings) > maxListedFindings {
		page.Unlisted = len(findings) - maxListedFindings
		findings = findings[:maxListedFindings]
	}
	page.Groups = groupFindings(rep.Nodes, findings, worst)
	first := rep
	first.Runtime = rep.Runtime[:min(len(rep.Runtime), maxSummaryPlots)]
	page.Plots = dischargePlots(first)
	for _, r := range first.Runtime {
		page.Runtime = append(page.Runtime, newRuntimeRow(r))
	}
	return page
}

func headline(rep review.Report) string {
	switch rep.Status {
	case review.Pass:
		if len(rep.NotRun) > 0 {
			return fmt.Sprintf("Every check that was run passed, but %s not run under limits version %d: review again "+
				"under the current limits before you connect the battery.", domain.CountOf(len(rep.NotRun), "check was", "checks were"),
				rep.LimitsVersion)
		}
		if rep.Counts.Pass == 1 {
			return "The one check passed. Inspect the build before you connect the battery all the same."
		}
		return fmt.Sprintf("Every one of the %d checks passed. Inspect the build before you connect the battery all the same.", rep.Counts.Pass)
	case review.Warn:
		return fmt.Sprintf("No check failed, but %s before you connect the battery.", domain.CountOf(rep.Counts.Warn, "finding needs a look", "findings need a look"))
	case review.Fail:
		if rep.Counts.Fail == 1 {
			return "1 check failed. Do not connect the battery until it is put right."
		}
		return fmt.Sprintf("%d checks failed. Do not connect the battery until they are put right.", rep.Counts.Fail)
	case review.OutOfScope:
		return "This design includes mains or a source above the voltage these checks are written for. It is out of scope and can never pass here: read the cautions."
	}
	return "This review has no overall status."
}

// worstByNode is each node's worst finding; "" keys the whole-design checks.
func worstByNode(checks []review.Check) map[string]review.Status {
	worst := map[string]review.Status{}
	for _, c := range checks {
		if w, ok := worst[c.Node]; !ok || c.Status.Severity() > w.Severity() {
			worst[c.Node] = c.Status
		}
	}
	return worst
}

// groupFindings lists the checks per node in the design's order, worst
// first within a node, with the whole-design checks at the top.
func groupFindings(nodes []review.NodeResult, checks []review.Check, worst map[string]review.Status) []findingGroup {
	byNode := map[string][]review.Check{}
	for _, c := range checks {
		byNode[c.Node] = append(byNode[c.Node], c)
	}
	var groups []findingGroup
	add := func(id, typ string) {
		cs := byNode[id]
		if len(cs) == 0 {
			return
		}
		slices.SortStableFunc(cs, func(a, b review.Check) int { return b.Status.Severity() - a.Status.Severity() })
		groups = append(groups, findingGroup{Node: id, Type: typ, Worst: string(worst[id]), Checks: cs})
		delete(byNode, id)
	}
	add("", "")
	for _, n := range nodes {
		add(n.ID, n.Type)
	}
	// Checks on a node the document does not name would be an engine bug;
	// show them rather than lose them.
	rest := make([]string, 0, len(byNode))
	for id := range byNode {
		rest = append(rest, id)
	}
	slices.Sort(rest)
	for _, id := range rest {
		add(id, "")
	}
	return groups
}

// resolveNodes fills each node's topology from its component when the
// node leaves it out, as the review did: the tree names it.
func resolveNodes(d domain.Design, comps map[int64]domain.Component) []domain.Node {
	out := slices.Clone(d.Nodes)
	for i, n := range out {
		if n.ComponentID == nil || n.Topology != "" {
			continue
		}
		if c, ok := comps[*n.ComponentID]; ok {
			out[i].Topology = c.Electrical.Topology
		}
	}
	return out
}
