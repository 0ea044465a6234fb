package web

import (
	"encoding/json"
	"io/fs"
	"math"
	"os"
	"path"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"text/template"
	"time"

	"wattshelf"
	"wattshelf/domain"
	"wattshelf/domain/review"
)

// demoShelf is the invented demo shelf with the ids SeedDemo gives it:
// 1, 2, … in file order.
func demoShelf(t *testing.T) []domain.Component {
	t.Helper()
	raw, err := fs.ReadFile(wattshelf.DemoFiles, "testdata/demo/components.json")
	if err != nil {
		t.Fatal(err)
	}
	var ins []domain.ComponentInput
	if err := json.Unmarshal(raw, &ins); err != nil {
		t.Fatal(err)
	}
	out := make([]domain.Component, len(ins))
	for i, in := range ins {
		in.Defaults()
		out[i] = domain.Component{ID: int64(i + 1), ComponentInput: in, Version: 1,
			UpdatedAt: time.Date(2026, 3, 1, 12, 0, 0, 0, time.UTC)}
	}
	return out
}

// demoDesignNames lists the demo designs.
func demoDesignNames(t *testing.T) []string {
	t.Helper()
	names, err := fs.Glob(wattshelf.DemoFiles, "testdata/demo/designs/*.json")
	if err != nil || len(names) == 0 {
		t.Fatalf("no demo designs: %v", err)
	}
	return names
}

// demoReport reviews one demo design with the default limits, as the
// service does, and returns what the report page renders.
func demoReport(t *testing.T, name string) ReportInput {
	t.Helper()
	raw, err := fs.ReadFile(wattshelf.DemoFiles, name)
	if err != nil {
		t.Fatal(err)
	}
	doc, err := domain.DecodeDesign(raw)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	comps := map[int64]domain.Component{}
	for _, c := range demoShelf(t) {
		comps[c.ID] = c
	}
	limits := review.DefaultLimits()
	rep, err := review.Review(doc, limits, 1, comps)
	if err != nil {
		t.Fatalf("review %s: %v", name, err)
	}
	return ReportInput{Report: rep, Design: &doc, DesignName: doc.Name,
		ReviewedAt: time.Date(2026, 3, 2, 9, 30, 0, 0, time.UTC), Components: comps}
}

func mustViews(t *testing.T) *views {
	t.Helper()
	v, err := newViews()
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func renderReportHTML(t *testing.T, v *views, in ReportInput) string {
	t.Helper()
	var b strings.Builder
	if err := v.renderReport(&b, in); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

var (
	limitingBrownout = regexp.MustCompile(`^brownout of (\S+) at ([0-9.]+) V`)
	nodeGroup        = regexp.MustCompile(`<g class="node" data-node="([^"]*)" data-status="([^"]*)"`)
	plotSVG          = regexp.MustCompile(`<svg class="plot"`)
)

func TestReportTreeHasEveryNode(t *testing.T) {
	v := mustViews(t)
	for _, name := range demoDesignNames(t) {
		t.Run(path.Base(name), func(t *testing.T) {
			in := demoReport(t, name)
			html := renderReportHTML(t, v, in)
			got := nodeGroup.FindAllStringSubmatch(html, -1)
			if len(got) != len(in.Design.Nodes) {
				t.Fatalf("tree draws %d nodes, the design has %d", len(got), len(in.Design.Nodes))
			}
			worst := worstByNode(in.Report.Checks)
			for i, m := range got {
				if m[1] != in.Design.Nodes[i].ID {
					t.Errorf("box %d is %q, want %q", i, m[1], in.Design.Nodes[i].ID)
				}
				want := "none"
				if s, ok := worst[m[1]]; ok {
					want = string(s)
				}
				if m[2] != want {
					t.Errorf("box %s marked %q, its worst finding is %q", m[1], m[2], want)
				}
			}
			batteries := 0
			for _, n := range in.Design.Nodes {
				if n.Type == domain.NodeBattery {
					batteries++
				}
			}
			if n := len(plotSVG.FindAllString(html, -1)); n != batteries {
				t.Errorf("%d discharge plots for %d batteries", n, batteries)
			}
		})
	}
}

// The plot draws what the report says about each battery: a line for
// every load that browns out partway, the highest of them the one the
// engine names as limiting the runtime, and a note for every other load.
func TestPlotDrawsTheReportsBrownouts(t *testing.T) {
	checked := 0
	for _, name := range demoDesignNames(t) {
		in := demoReport(t, name)
		plots := dischargePlots(in.Report)
		if len(plots) != len(in.Report.Runtime) {
			t.Fatalf("%s: %d plots for %d batteries", name, len(plots), len(in.Report.Runtime))
		}
		for k, r := range in.Report.Runtime {
			p := plots[k]
			if p.Source != r.Source || p.Curve == "" || p.Chemistry != r.Pack.Chemistry {
				t.Fatalf("%s: plot %d is %q (%s), curve %q; want %s", name, k, p.Source, p.Chemistry, p.Curve, r.Source)
			}
			if got := strings.Count(p.Curve, "L") + 1; got != len(r.Pack.Curve) {
				t.Errorf("%s: curve has %d points, the report %d", name, got, len(r.Pack.Curve))
			}
			var lines []plotLine
			for _, l := range p.Lines {
				if l.Class == "brownout" {
					lines = append(lines, l)
				}
			}
			notes := 0
			for _, b := range r.Brownouts {
				if b.Outcome != review.BrownoutPartway {
					notes++
					continue
				}
				want := b.Node + " browns out " + formatNumber(*b.PackV) + " V"
				if !slices.ContainsFunc(lines, func(l plotLine) bool { return l.Label.Text == want }) {
					t.Errorf("%s: no line %q among %+v", name, want, lines)
				}
			}
			if len(p.Notes) != notes {
				t.Errorf("%s: %d notes for %d loads that never or always brown out: %q", name, len(p.Notes), notes, p.Notes)
			}
			// Higher voltages sit higher on the plot (smaller y).
			for j := 1; j < len(lines); j++ {
				if lines[j].Y < lines[j-1].Y {
					t.Errorf("%s: brownout lines out of order: %+v", name, lines)
				}
			}
			m := limitingBrownout.FindStringSubmatch(r.LimitedBy)
			if m == nil {
				continue
			}
			want, err := strconv.ParseFloat(m[2], 64)
			if err != nil {
				t.Fatalf("%s: cannot read %q", name, r.LimitedBy)
			}
			var top plotLine
			if len(lines) > 0 {
				top = lines[0]
			}
			if !strings.HasPrefix(top.Label.Text, m[1]+" browns out ") {
				t.Errorf("%s: engine says %q; the plot's highest brownout line is %+v", name, r.LimitedBy, top)
			}
			got, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimPrefix(top.Label.Text, m[1]+" browns out "), " V"), 64)
			if err != nil || math.Abs(got-want) > 0.06 {
				t.Errorf("%s: engine says %q; the plot's line says %q", name, r.LimitedBy, top.Label.Text)
			}
			if p.EndX == nil || p.Usable == nil {
				t.Errorf("%s: runtime limited by a brownout, but no end of runtime drawn", name)
			}
			checked++
		}
	}
	if checked == 0 {
		t.Fatal("no demo design is limited by a brownout, so nothing was compared")
	}
}

// A report stored before reports carried the pack gets a note, not a plot
// drawn from nothing.
func TestPlotOfAnOlderReport(t *testing.T) {
	hours := 2.5
	plots := dischargePlots(review.Report{Runtime: []review.RuntimeResult{
		{Source: "pack", Hours: &hours, UsableShare: 0.9, LimitedBy: "cell cutoff at 10.0 V"}}})
	if len(plots) != 1 || plots[0].Source != "pack" || plots[0].Curve != "" || len(plots[0].Notes) != 1 {
		t.Fatalf("plots %+v, want one for pack without a curve, with a note", plots)
	}
}

// A review stored before reviews kept their document is drawn from its
// report alone, and the page says what is missing.
func TestReportWithoutItsDocument(t *testing.T) {
	v := mustViews(t)
	in := demoReport(t, demoDesignNames(t)[0])
	if strings.Contains(renderReportHTML(t, v, in), "stored before reviews kept") {
		t.Error("a report with its document says it has none")
	}
	in.Design, in.Components = nil, nil
	html := renderReportHTML(t, v, in)
	if n := len(nodeGroup.FindAllString(html, -1)); n != len(in.Report.Nodes) {
		t.Errorf("tree draws %d nodes, the report has %d", n, len(in.Report.Nodes))
	}
	if !strings.Contains(html, "stored before reviews kept the document they read") {
		t.Error("the page does not say the diagram lacks the document's details")
	}
	if n := len(plotSVG.FindAllString(html, -1)); n != len(in.Report.Runtime) {
		t.Errorf("%d discharge plots for %d batteries", n, len(in.Report.Runtime))
	}
}

// A review stored as a format 1 report (each check with its own basis and
// one threshold) still renders as it was stored: every finding, its value
// and threshold, and its basis.
func TestFormat1ReportStillRenders(t *testing.T) {
	raw, err := os.ReadFile("../../domain/review/testdata/format1/fume-fan.json")
	if err != nil {
		t.Fatal(err)
	}
	rep, err := review.ReadStored(raw)
	if err != nil {
		t.Fatal(err)
	}
	html := renderReportHTML(t, mustViews(t), ReportInput{DesignName: "Fume fan", Report: rep})
	for _, want := range []string{
		"pack lasts about",                         // a message
		"33 CFR 183.455",                           // a basis
		"review engine 1",                          // the engine that made it
		"Made under older rules: review again",     // and that it is not today's
		`data-status="warn"`, `data-status="pass"`, // its findings
	} {
		if !strings.Contains(html, want) {
			t.Errorf("the page of a format 1 report lacks %q", want)
		}
	}
	if got := strings.Count(html, "<tr data-status="); got != rep.Counts.Pass+rep.Counts.Warn+rep.Counts.Fail {
		t.Errorf("%d findings drawn, the report counts %d", got, rep.Counts.Pass+rep.Counts.Warn+rep.Counts.Fail)
	}
}

// Under a finding the page says what would fix it, with the shelf parts
// that would do it and their bins, or that nothing on the shelf fits, or
// why no single change clears it.
func TestReportShowsRemediesWithShelfParts(t *testing.T) {
	in := demoReport(t, demoDesignNames(t)[0])
	var findings []int
	for i, c := range in.Report.Checks {
		if c.Status != review.Pass {
			findings = append(findings, i)
		}
	}
	if len(findings) < 2 {
		// The remedies are hand-built here, so any two checks will do.
		findings = []int{0, 1}
		in.Report.Checks[0].Status, in.Report.Checks[1].Status = review.Warn, review.Fail
	}
	// A feed running 3.2 A needs a fuse of at least 1.25 × 3.2 A = 4 A
	// (continuous-load factor, common practice): the demo shelf's 5 A
	// blade fuses fit, its 1 A glass fuses do not.
	fuse := &review.PartNeed{Kind: "fuse", AtLeast: map[string]float64{"rating_a": 4}}
	thick := &review.PartNeed{Kind: "wire", AtLeast: map[string]float64{domain.RatingAreaMM2: 2}}
	first, second := &in.Report.Checks[findings[0]], &in.Report.Checks[findings[1]]
	first.Remedies = []review.Remedy{
		{Change: "fit a 5 A blade fuse within 0.1 m of the pack", Part: fuse},
		{Change: "use 14AWG wire for the feed", Part: thick},
	}
	second.NoRemedy = "the pack cannot give this load its voltage at any cell count"
	in.Report.FillShelf(demoShelf(t))
	html := renderReportHTML(t, mustViews(t), in)

	row := findingRow(t, html, *first)
	for _, want := range []string{
		"Would fix it:</strong> fit a 5 A blade fuse within 0.1 m of the pack",
		"On the shelf: Mini blade fuses 5 A (part 23, bin F1 fuses, 20 on hand).",
		"Would fix it:</strong> use 14AWG wire for the feed <span class=\"shelf-parts\">Nothing on the shelf fits it now.",
	} {
		if !strings.Contains(row, want) {
			t.Errorf("the finding's row lacks %q:\n%s", want, row)
		}
	}
	if strings.Contains(row, "Glass fuses") {
		t.Error("a fuse too small for the need is offered")
	}
	if row := findingRow(t, html, *second); !strings.Contains(row, "No single change clears it:</strong> the pack cannot give") {
		t.Errorf("the finding without a remedy does not say why:\n%s", row)
	}
}

// findingRow is the table row of a finding on a report page.
func findingRow(t *testing.T, html string, c review.Check) string {
	t.Helper()
	for _, row := range strings.Split(html, "<tr data-status=")[1:] {
		row, _, _ = strings.Cut(row, "</tr>")
		if strings.Contains(row, "<code>"+c.Check+"</code>") && strings.Contains(row, template.HTMLEscapeString(c.Message)) {
			return row
		}
	}
	t.Fatalf("no row for %s at %s", c.Check, c.Node)
	return ""
}

// The fume fan's 5 V rail runs from a linear regulator: three Li-ion
// cells give 3 × 4.2 V = 12.6 V full (from memory), so it sheds
// (12.6 − 5) V × 0.16 A + 12.6 V × 0.005 A = 1.28 W, and its junction
// reaches 25 °C + 1.28 W × 65 °C/W = 108 °C, within the 25 °C thermal
// margin of its 125 °C limit (the limits' policy): a warning, which a
// buck converter clears. The demo shelf's 3 A buck module (5 V out, up
// to 28 V in) is such a part and the page names it with its bin; its
// 7805, a linear regulator, is not offered.
func TestReportShowsDemoShelfPartUnderAFinding(t *testing.T) {
	in := demoReport(t, "testdata/demo/designs/fume-fan.json")
	rules, err := review.Prepare(review.DefaultLimits(), 1)
	if err != nil {
		t.Fatal(err)
	}
	valid, err := in.Design.Validated()
	if err != nil {
		t.Fatal(err)
	}
	p, err := rules.Propose(valid, in.Components)
	if err != nil {
		t.Fatal(err)
	}
	p.Report.FillShelf(demoShelf(t))
	in.Report = p.Report
	html := renderReportHTML(t, mustViews(t), in)
	var thermal review.Check
	for _, c := range p.Report.Checks {
		if c.Check == review.CheckRegulatorThermal && c.Node == "reg5" {
			thermal = c
		}
	}
	if thermal.Status != review.Warn {
		t.Fatalf("regulator.thermal of reg5 is %q, want warn", thermal.Status)
	}
	row := findingRow(t, html, thermal)
	for _, want := range []string{"Would fix it:</strong> Use a buck converter in place of reg5",
		"Buck module 3 A adjustable (part 9, bin R1 regulators, 6 on hand)"} {
		if !strings.Contains(row, want) {
			t.Errorf("the row of reg5's regulator.thermal lacks %q:\n%s", want, row)
		}
	}
	if strings.Contains(row, "7805") {
		t.Error("a linear regulator is offered in place of a buck converter")
	}
}
