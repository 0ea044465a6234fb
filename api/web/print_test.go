package web_test

import (
	"fmt"
	"net/http"
	"testing"

	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/chromedp"
)

// printLayout is what the report page looks like to a printer.
type printLayout struct {
	DiagramShown  bool    `json:"diagramShown"`
	OutlineNodes  int     `json:"outlineNodes"`
	DiagramNodes  int     `json:"diagramNodes"`
	SmallestPx    float64 `json:"smallestPx"`
	SmallestText  string  `json:"smallestText"`
	HeadingsKept  int     `json:"headingsKept"`
	Headings      int     `json:"headings"`
	GroupsUnsplit int     `json:"groupsUnsplit"`
}

// On paper the power tree is an outline, every node under the one that
// feeds it, in text no smaller than 8 pt (a printed diagram, shrunk to the
// page's width, had labels of 4 to 7 pt); and a node's heading stays with
// its findings.
func TestReportPrintsReadablyInBrowser(t *testing.T) {
	s := newSite(t)
	b := newBrowser(t)
	var created struct {
		ID int64 `json:"id"`
	}
	// The largest demo design has the widest tree.
	s.call(t, http.MethodPost, "/v1/designs", s.designs[len(s.designs)-1].Document, http.StatusCreated, &created)
	var stored struct {
		ShareID string `json:"share_id"`
	}
	s.call(t, http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", created.ID), nil, http.StatusCreated, &stored)
	b.do(t, chromedp.Navigate(s.srv.URL+"/reports/"+stored.ShareID), chromedp.WaitVisible(chromedp.CSS("svg.tree")))
	if _, err := chromedp.Call(b.ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"}); err != nil {
		t.Fatalf("emulate print: %v", err)
	}
	got := get(t, b, chromedp.Evaluate[printLayout](`(() => {
		const shown = e => e && getComputedStyle(e).display !== 'none' && e.getClientRects().length > 0;
		let smallest = Infinity, smallestText = '';
		for (const e of document.querySelectorAll('.tree-outline li, .tree-outline li *, .findings h3, .findings td, .findings th')) {
			if (!shown(e) || !e.textContent.trim()) continue;
			const px = parseFloat(getComputedStyle(e).fontSize);
			if (px < smallest) { smallest = px; smallestText = e.textContent.trim().slice(0, 40); }
		}
		const headings = [...document.querySelectorAll('.findings section h3')];
		const groups = [...document.querySelectorAll('.findings section')];
		return {
			diagramShown: shown(document.querySelector('svg.tree')),
			outlineNodes: [...document.querySelectorAll('.tree-outline li')].filter(shown).length,
			diagramNodes: document.querySelectorAll('svg.tree g.node').length,
			smallestPx: smallest, smallestText,
			headingsKept: headings.filter(h => getComputedStyle(h).breakAfter === 'avoid').length,
			headings: headings.length,
			groupsUnsplit: groups.filter(g => getComputedStyle(g).breakInside === 'avoid').length,
		};
	})()`))
	if got.DiagramShown {
		t.Error("the diagram prints; its labels would be shrunk to the page's width")
	}
	if got.OutlineNodes == 0 || got.OutlineNodes != got.DiagramNodes {
		t.Errorf("the printed outline has %d nodes, the tree %d", got.OutlineNodes, got.DiagramNodes)
	}
	// 8 pt is 8/72 in, and CSS has 96 px to the inch.
	if const8pt := 8.0 * 96 / 72; got.SmallestPx < const8pt {
		t.Errorf("printed text %q is %.1f px, under 8 pt (%.2f px)", got.SmallestText, got.SmallestPx, const8pt)
	}
	if got.Headings == 0 || got.HeadingsKept != got.Headings || got.GroupsUnsplit != got.Headings {
		t.Errorf("%d node headings, %d kept with what follows, %d groups kept whole", got.Headings, got.HeadingsKept, got.GroupsUnsplit)
	}
}
