package web_test

import (
	"errors"
	"fmt"
	"io/fs"
	"net/http"
	"os"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"
)

// axeSource is axe-core, installed from the npm registry into api/web/axe
// (`npm ci` there; .ci/run does it). Without it the check is skipped,
// unless CI is set.
func axeSource(t *testing.T) string {
	t.Helper()
	src, err := os.ReadFile("axe/node_modules/axe-core/axe.min.js")
	if errors.Is(err, fs.ErrNotExist) && os.Getenv("CI") == "" {
		t.Skip("axe-core is not installed: run npm ci in api/web/axe")
	}
	if err != nil {
		t.Fatalf("axe-core: %v (run npm ci in api/web/axe)", err)
	}
	return string(src)
}

// axeViolation is what the test reports of one rule axe found broken.
type axeViolation struct {
	ID     string   `json:"id"`
	Impact string   `json:"impact"`
	Help   string   `json:"help"`
	Nodes  []string `json:"nodes"`
}

// Every page passes axe-core's WCAG 2.1 A and AA rules: the kiosk, the
// wall screen, a part's page, a stored review's report and the 404 page.
func TestPagesPassAxeInBrowser(t *testing.T) {
	axe := axeSource(t)
	s := newSite(t)
	b := newBrowser(t)
	var created struct {
		ID int64 `json:"id"`
	}
	s.call(t, http.MethodPost, "/v1/designs", s.designs[0].Document, http.StatusCreated, &created)
	var stored struct {
		ShareID string `json:"share_id"`
	}
	s.call(t, http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", created.ID), nil, http.StatusCreated, &stored)
	const run = `axe.run(document, {runOnly: {type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']}})
		.then(r => r.violations.map(v => ({id: v.id, impact: v.impact || '', help: v.help,
			nodes: v.nodes.slice(0, 3).map(n => n.target.join(' '))})))`
	for _, path := range []string{"/shelf", "/shelf?wall=1", "/shelf/1", "/reports/" + stored.ShareID, "/shelf/999999"} {
		b.do(t, chromedp.Navigate(s.srv.URL+path), chromedp.WaitReady(chromedp.CSS("body")))
		b.do(t, chromedp.Evaluate[chromedp.Void](axe))
		for _, v := range get(t, b, chromedp.Evaluate[[]axeViolation](run, chromedp.EvalAwaitPromise)) {
			t.Errorf("%s: %s (%s): %s at %s", path, v.ID, v.Impact, v.Help, strings.Join(v.Nodes, "; "))
		}
	}
}
