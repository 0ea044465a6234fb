package web_test

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"image"
	_ "image/png"
	"io"
	"io/fs"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	cdplog "github.com/chromedp/cdproto/log"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"
	"github.com/makiuchi-d/gozxing"
	gozxingqr "github.com/makiuchi-d/gozxing/qrcode"
	"github.com/prometheus/client_golang/prometheus"

	"wattshelf"
	"wattshelf/api"
	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// chromiumPath finds Debian's Chromium. Without one the browser tests skip,
// except under CI, where they must run.
func chromiumPath(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser", "/usr/bin/chromium"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") != "" {
		t.Fatal("CI is set but no Chromium is installed: apt-get install -y chromium")
	}
	t.Skip("no Chromium installed (apt-get install -y chromium); set CI=true to make this a failure")
	return ""
}

// site is the real router on a real database with the demo shelf, as
// `serve --demo` runs it.
type site struct {
	srv        *httptest.Server
	store      *store.Store
	token      string
	components []domain.ComponentInput
	designs    []store.DemoDesign
}

func newSite(t *testing.T) *site { return newSiteAt(t, "") }

// newSiteAt is newSite with the public address staff configure for QR
// codes; "" means the address each request came to.
func newSiteAt(t *testing.T, publicBaseURL string) *site {
	t.Helper()
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	demo := store.DemoData{ShelfKeeper: "demo-shelf-keeper"}
	raw, err := fs.ReadFile(wattshelf.DemoFiles, "testdata/demo/components.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(raw, &demo.Components); err != nil {
		t.Fatal(err)
	}
	for i := range demo.Components {
		demo.Components[i].Defaults()
	}
	if _, err := st.SeedDemo(ctx, demo); err != nil {
		t.Fatalf("seed demo: %v", err)
	}
	limits, err := json.Marshal(review.DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	if _, err := st.EnsureDefaultLimits(ctx, limits, "defaults for the browser tests"); err != nil {
		t.Fatal(err)
	}
	token, err := st.CreateToken(ctx, "browser-test", "browser-test-staff", domain.RoleStaff)
	if err != nil {
		t.Fatal(err)
	}
	router, err := api.New(api.Config{Store: st, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)),
		Registry: prometheus.NewRegistry(), PublicBaseURL: publicBaseURL})
	if err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewServer(router)
	t.Cleanup(srv.Close)
	s := &site{srv: srv, store: st, token: token, components: demo.Components}
	names, err := fs.Glob(wattshelf.DemoFiles, "testdata/demo/designs/*.json")
	if err != nil || len(names) == 0 {
		t.Fatalf("no demo designs: %v", err)
	}
	for _, n := range names {
		doc, err := fs.ReadFile(wattshelf.DemoFiles, n)
		if err != nil {
			t.Fatal(err)
		}
		s.designs = append(s.designs, store.DemoDesign{Name: n, Document: doc})
	}
	return s
}

// call sends a JSON request with the staff token and decodes the answer.
func (s *site) call(t *testing.T, method, path string, body []byte, want int, out any) {
	t.Helper()
	req, err := http.NewRequest(method, s.srv.URL+path, bytes.NewReader(body))
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Authorization", "Bearer "+s.token)
	req.Header.Set("Content-Type", "application/json")
	res, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	got, _ := io.ReadAll(res.Body)
	if res.StatusCode != want {
		t.Fatalf("%s %s: status %d, want %d: %s", method, path, res.StatusCode, want, got)
	}
	if out != nil {
		if err := json.Unmarshal(got, out); err != nil {
			t.Fatalf("%s %s: %v", method, path, err)
		}
	}
}

// browser is one headless Chromium that records every request it makes
// and every console or CSP complaint.
type browser struct {
	ctx      context.Context
	shots    string
	mu       sync.Mutex
	requests []string
	problems []string
}

func newBrowser(t *testing.T) *browser {
	t.Helper()
	exe := chromiumPath(t)
	opts := []chromedp.ExecAllocatorOption{
		chromedp.ExecPath(exe),
		chromedp.NoFirstRun,
		chromedp.NoDefaultBrowserCheck,
		chromedp.Headless,
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.UserDataDir(t.TempDir()),
		chromedp.WindowSize(1600, 1000),
	}
	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	b := &browser{shots: t.TempDir()}
	if dir := os.Getenv("WATTSHELF_SCREENSHOTS"); dir != "" {
		b.shots = dir // to look at them after the test
	}
	// The listener is there from the tab's first command, so it sees every
	// request; it runs in the tab's read loop and only records.
	ctx, cancelCtx := chromedp.NewContext(actx, chromedp.WithListener(func(ev any) {
		b.mu.Lock()
		defer b.mu.Unlock()
		switch e := ev.(type) {
		case *network.EventRequestWillBeSent:
			b.requests = append(b.requests, e.Request.URL)
		case *cdplog.EventEntryAdded:
			if e.Entry.Level == cdplog.EntryLevelError || e.Entry.Level == cdplog.EntryLevelWarning {
				b.problems = append(b.problems, fmt.Sprintf("%s: %s (%s)", e.Entry.Source, e.Entry.Text, e.Entry.URL))
			}
		case *runtime.EventExceptionThrown:
			b.problems = append(b.problems, "script exception: "+e.ExceptionDetails.Text)
		case *runtime.EventConsoleAPICalled:
			if e.Type == runtime.ConsoleAPICalledTypeError {
				b.problems = append(b.problems, "console error")
			}
		}
	}))
	b.ctx = ctx
	t.Cleanup(func() { cancelCtx(); cancelAlloc() })
	if err := chromedp.Do(ctx); err != nil {
		t.Fatalf("start chromium: %v", err)
	}
	if _, err := chromedp.Call(ctx, network.Enable, network.EnableParams{}); err != nil {
		t.Fatalf("enable network events: %v", err)
	}
	if _, err := chromedp.Call(ctx, cdplog.Enable, struct{}{}); err != nil {
		t.Fatalf("enable log events: %v", err)
	}
	return b
}

// do runs steps with a deadline of their own: a deadline on the browser's
// first context would stop the browser.
func (b *browser) do(t *testing.T, steps ...chromedp.Action[chromedp.Void]) {
	t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, time.Minute)
	defer cancel()
	if err := chromedp.Do(ctx, steps...); err != nil {
		t.Fatal(err)
	}
}

func get[T any](t *testing.T, b *browser, a chromedp.Action[T]) T {
	t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, time.Minute)
	defer cancel()
	v, err := chromedp.Run(ctx, a)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// screenshot saves the whole page, and the part a screen shows as
// name-screen.png.
func (b *browser) screenshot(t *testing.T, name string) {
	t.Helper()
	screen := get(t, b, chromedp.CaptureScreenshot())
	if err := os.WriteFile(filepath.Join(b.shots, name+"-screen.png"), screen, 0o644); err != nil {
		t.Fatal(err)
	}
	png := get(t, b, chromedp.FullScreenshot(100))
	path := filepath.Join(b.shots, name+".png")
	if err := os.WriteFile(path, png, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Logf("screenshot %s", path)
}

// checkStayedHome fails when the browser asked anything of another host,
// or logged an error (a CSP violation, a failed load, a script error).
func (b *browser) checkStayedHome(t *testing.T, base string) {
	t.Helper()
	home, err := url.Parse(base)
	if err != nil {
		t.Fatal(err)
	}
	b.mu.Lock()
	defer b.mu.Unlock()
	if len(b.requests) == 0 {
		t.Fatal("no requests were recorded, so nothing was checked")
	}
	for _, r := range b.requests {
		u, err := url.Parse(r)
		if err != nil || u.Host != home.Host || (u.Scheme != "http" && u.Scheme != "https") {
			t.Errorf("the page asked for %q, which is not on %s", r, home.Host)
		}
	}
	for _, p := range b.problems {
		t.Errorf("browser reported: %s", p)
	}
}

// waitFor polls a JavaScript condition until it holds.
func (b *browser) waitFor(t *testing.T, what, expr string, timeout time.Duration) {
	t.Helper()
	deadline := time.Now().Add(timeout)
	for {
		if get(t, b, chromedp.Evaluate[bool](expr)) {
			return
		}
		if time.Now().After(deadline) {
			t.Fatalf("waited %s for %s", timeout, what)
		}
		time.Sleep(100 * time.Millisecond)
	}
}

const visibleNames = `Array.from(document.querySelectorAll('#shelf-list li.card'))
	.filter(li => !li.hidden && li.offsetParent !== null)
	.map(li => li.querySelector('h3').textContent.trim())`

func TestKioskInBrowser(t *testing.T) {
	s := newSite(t)
	b := newBrowser(t)

	// The shelf, every demo component by name.
	b.do(t, chromedp.Navigate(s.srv.URL+"/shelf?refresh_s=1"), chromedp.WaitVisible(chromedp.CSS("#shelf-list li.card")))
	names := get(t, b, chromedp.Evaluate[[]string](visibleNames))
	for _, c := range s.components {
		if !slices.Contains(names, c.Name) {
			t.Errorf("the kiosk does not show %q", c.Name)
		}
	}
	if len(names) != len(s.components) {
		t.Errorf("the kiosk shows %d components, the demo shelf has %d", len(names), len(s.components))
	}
	b.screenshot(t, "kiosk")

	// A card's code, photographed off the screen, decodes to its page.
	ids := get(t, b, chromedp.Evaluate[[]string](`Array.from(document.querySelectorAll('#shelf-list li.card')).map(li => li.dataset.id)`))
	if len(ids) < 2 {
		t.Fatalf("cards %v", ids)
	}
	code := chromedp.CSS(`li.card[data-id="` + ids[0] + `"] img.qr`)
	b.do(t, chromedp.ScrollIntoView(code))
	b.waitFor(t, "the card's code to load", `(() => { const img = document.querySelector('li.card[data-id="`+ids[0]+
		`"] img.qr'); return img !== null && img.complete && img.naturalWidth > 0 })()`, 20*time.Second)
	png := get(t, b, chromedp.Screenshot(code))
	if got, want := decodeQR(t, png), s.srv.URL+"/shelf/"+ids[0]; got != want {
		t.Errorf("the kiosk's code reads %q, want %q", got, want)
	}
	// And so does the PNG the service serves.
	res, err := http.Get(s.srv.URL + "/shelf/" + ids[1] + "/qr.png")
	if err != nil {
		t.Fatal(err)
	}
	served, _ := io.ReadAll(res.Body)
	res.Body.Close()
	if got, want := decodeQR(t, served), s.srv.URL+"/shelf/"+ids[1]; got != want {
		t.Errorf("qr.png reads %q, want %q", got, want)
	}

	// Typing narrows the shelf to what matches.
	get(t, b, chromedp.Evaluate[bool](`window.keptSinceLoad = true`))
	b.do(t, chromedp.SendKeys(chromedp.CSS("#q"), "mixer"))
	b.waitFor(t, "the search to narrow the shelf", `(`+visibleNames+`).length < `+fmt.Sprint(len(s.components)), 5*time.Second)
	names = get(t, b, chromedp.Evaluate[[]string](visibleNames))
	var wantNarrow []string
	for _, c := range s.components {
		hay := strings.ToLower(strings.Join([]string{c.Name, c.Kind, c.Bin, c.Description, c.Origin}, " "))
		if strings.Contains(hay, "mixer") {
			wantNarrow = append(wantNarrow, c.Name)
		}
	}
	slices.Sort(names)
	slices.Sort(wantNarrow)
	if !slices.Equal(names, wantNarrow) || len(wantNarrow) == 0 {
		t.Errorf("searching for mixer shows %q, want %q", names, wantNarrow)
	}
	b.screenshot(t, "kiosk-search")

	// A component added through the API appears without a reload, and the
	// search text stays as typed.
	added := domain.ComponentInput{Name: "Stand mixer speed switch", Kind: "switch", Bin: "S3 switches",
		Quantity: 2, Condition: "working", SpecSource: "measured", Origin: "stand mixer (battery model)"}
	body, _ := json.Marshal(added)
	// Unchanged cards must stay the same elements (nothing redrawn, so
	// nothing flickers): mark one that a fresh copy would not carry.
	get(t, b, chromedp.Evaluate[bool](`document.querySelector('li.card[data-id="`+ids[0]+`"]').keptElement = true`))
	// A keyboard user's place survives the refresh too.
	shownLink := `Array.from(document.querySelectorAll('#shelf-list li.card')).find(li => !li.hidden).querySelector('h3 a')`
	if !get(t, b, chromedp.Evaluate[bool](`(() => { const a = `+shownLink+`; a.focus(); window.focusedLink = a; return document.activeElement === a })()`)) {
		t.Fatal("could not focus a shown card's link")
	}
	s.call(t, http.MethodPost, "/v1/components", body, http.StatusCreated, nil)
	b.waitFor(t, "the new component to appear", `(`+visibleNames+`).includes("Stand mixer speed switch")`, 20*time.Second)
	if !get(t, b, chromedp.Evaluate[bool](`document.activeElement === window.focusedLink`)) {
		t.Error("the refresh took the keyboard focus off the card's link")
	}
	if !get(t, b, chromedp.Evaluate[bool](`document.querySelector('li.card[data-id="`+ids[0]+`"]').keptElement === true`)) {
		t.Error("the refresh replaced a card that had not changed")
	}
	if !get(t, b, chromedp.Evaluate[bool](`window.keptSinceLoad === true`)) {
		t.Error("the page reloaded to show the new component")
	}
	if query := get(t, b, chromedp.Value(chromedp.CSS("#q"))); query != "mixer" {
		t.Errorf("the search box holds %q after the refresh, want %q", query, "mixer")
	}
	b.screenshot(t, "kiosk-after-add")

	// One component's page, reached from its card's link by keyboard.
	firstName := get(t, b, chromedp.TextContent(chromedp.CSS(`li.card[data-id="`+ids[0]+`"] h3`)))
	b.do(t, chromedp.Navigate(s.srv.URL+"/shelf"), chromedp.WaitVisible(chromedp.CSS("#shelf-list li.card")),
		chromedp.Focus(chromedp.CSS(`li.card[data-id="`+ids[0]+`"] h3 a`)),
		chromedp.KeyEvent("\r"), chromedp.WaitVisible(chromedp.CSS("main.component")))
	heading := get(t, b, chromedp.Text(chromedp.CSS("h1")))
	if strings.TrimSpace(heading) != strings.TrimSpace(firstName) || heading == "" {
		t.Errorf("component %s's page is headed %q, its card says %q", ids[0], heading, firstName)
	}
	b.screenshot(t, "component")

	b.checkStayedHome(t, s.srv.URL)
}

func TestReportInBrowser(t *testing.T) {
	s := newSite(t)
	b := newBrowser(t)
	plotted := 0
	for _, d := range s.designs {
		var doc domain.Design
		if err := json.Unmarshal(d.Document, &doc); err != nil {
			t.Fatal(err)
		}
		var created struct {
			ID int64 `json:"id"`
		}
		s.call(t, http.MethodPost, "/v1/designs", d.Document, http.StatusCreated, &created)
		var stored struct {
			ShareID string `json:"share_id"`
		}
		s.call(t, http.MethodPost, fmt.Sprintf("/v1/designs/%d/reviews", created.ID), nil, http.StatusCreated, &stored)
		if stored.ShareID == "" {
			t.Fatal("the review has no share id")
		}

		b.do(t, chromedp.Navigate(s.srv.URL+"/reports/"+stored.ShareID), chromedp.WaitVisible(chromedp.CSS("svg.tree")))
		boxes := get(t, b, chromedp.Evaluate[int](`document.querySelectorAll('svg.tree g.node').length`))
		plots := get(t, b, chromedp.Evaluate[int](`document.querySelectorAll('svg.plot path.curve').length`))
		batteries := 0
		for _, n := range doc.Nodes {
			if n.Type == domain.NodeBattery {
				batteries++
			}
		}
		if boxes != len(doc.Nodes) {
			t.Errorf("%s: the tree draws %d nodes, the design has %d", doc.Name, boxes, len(doc.Nodes))
		}
		plotted += plots
		if plots != batteries {
			t.Errorf("%s: %d discharge plots for %d batteries", doc.Name, plots, batteries)
		}
		if banner := get(t, b, chromedp.Text(chromedp.CSS("section.verdict .word"))); strings.TrimSpace(banner) == "" {
			t.Errorf("%s: the status banner has no word", doc.Name)
		}
		// The report reads without JavaScript: it ships no script at all.
		if n := get(t, b, chromedp.Evaluate[int](`document.scripts.length`)); n != 0 {
			t.Errorf("%s: the report page carries %d scripts", doc.Name, n)
		}
		name := strings.TrimSuffix(filepath.Base(d.Name), ".json")
		b.screenshot(t, "report-"+name)
		// Print on both paper sizes the stylesheet is made for.
		for paper, size := range map[string]chromedp.PaperSize{"a4": chromedp.PaperA4, "letter": chromedp.PaperLetter} {
			pdf := get(t, b, chromedp.PrintToPDF(chromedp.PDFPaper(size), chromedp.PDFPrintBackground()))
			if !bytes.HasPrefix(pdf, []byte("%PDF-")) {
				t.Errorf("%s: printing on %s gave no PDF", doc.Name, paper)
			}
			if err := os.WriteFile(filepath.Join(b.shots, "report-"+name+"-"+paper+".pdf"), pdf, 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}

	if plotted == 0 {
		t.Error("no demo design has a battery, so no discharge plot was checked")
	}

	// A phone-sized screen.
	b.do(t, chromedp.EmulateViewport(390, 844, chromedp.EmulateScale(2)))
	b.screenshot(t, "report-phone")
	b.do(t, chromedp.ResetViewport())

	b.checkStayedHome(t, s.srv.URL)
}

// HTML routes answer unknown ids with an HTML 404, and every page carries
// the security headers.
func TestPagesStatusAndHeaders(t *testing.T) {
	s := newSite(t)
	cases := []struct {
		path   string
		status int
		ctype  string
	}{
		{"/shelf", 200, "text/html"},
		{"/shelf/1", 200, "text/html"},
		{"/shelf/1/qr.svg", 200, "image/svg+xml"},
		{"/shelf/1/qr.png", 200, "image/png"},
		{"/shelf/999999", 404, "text/html"},
		{"/shelf/999999/qr.svg", 404, "text/html"},
		{"/shelf/not-a-number", 404, "text/html"},
		{"/reports/no-such-share-id", 404, "text/html"},
		{"/reports/" + strings.Repeat("x", 500), 404, "text/html"},
		{"/assets/site.css", 200, "text/css"},
		{"/assets/kiosk.js", 200, "text/javascript"},
		{"/assets/nothing.js", 404, "text/html"},
	}
	for _, tc := range cases {
		res, err := http.Get(s.srv.URL + tc.path)
		if err != nil {
			t.Fatal(err)
		}
		body, _ := io.ReadAll(res.Body)
		res.Body.Close()
		if res.StatusCode != tc.status {
			t.Errorf("GET %.60s: status %d, want %d", tc.path, res.StatusCode, tc.status)
		}
		if ct := res.Header.Get("Content-Type"); !strings.HasPrefix(ct, tc.ctype) {
			t.Errorf("GET %.60s: Content-Type %q, want %s", tc.path, ct, tc.ctype)
		}
		h := res.Header
		if csp := h.Get("Content-Security-Policy"); !strings.Contains(csp, "default-src 'self'") ||
			!strings.Contains(csp, "script-src 'self'") || !strings.Contains(csp, "frame-ancestors 'none'") {
			t.Errorf("GET %.60s: Content-Security-Policy %q", tc.path, csp)
		}
		for name, want := range map[string]string{"X-Content-Type-Options": "nosniff",
			"Referrer-Policy": "no-referrer", "X-Frame-Options": "DENY"} {
			if got := h.Get(name); got != want {
				t.Errorf("GET %.60s: %s %q, want %q", tc.path, name, got, want)
			}
		}
		if strings.HasPrefix(tc.ctype, "text/html") && bytes.Contains(bytes.ToLower(body), []byte("<script>")) {
			t.Errorf("GET %.60s: an inline script", tc.path)
		}
	}
}

// With a public address configured, the codes carry it and not the
// address the request came to.
func TestQRCodesUseTheConfiguredAddress(t *testing.T) {
	s := newSiteAt(t, "http://shelf.local:8080/")
	for _, id := range []string{"1", "3"} {
		res, err := http.Get(s.srv.URL + "/shelf/" + id + "/qr.png")
		if err != nil {
			t.Fatal(err)
		}
		body, _ := io.ReadAll(res.Body)
		res.Body.Close()
		if got, want := decodeQR(t, body), "http://shelf.local:8080/shelf/"+id; got != want {
			t.Errorf("code reads %q, want %q", got, want)
		}
	}
}

func decodeQR(t *testing.T, png []byte) string {
	t.Helper()
	img, _, err := image.Decode(bytes.NewReader(png))
	if err != nil {
		t.Fatalf("decode png: %v", err)
	}
	bmp, err := gozxing.NewBinaryBitmapFromImage(img)
	if err != nil {
		t.Fatal(err)
	}
	res, err := gozxingqr.NewQRCodeReader().Decode(bmp, nil)
	if err != nil {
		t.Fatalf("read qr code: %v", err)
	}
	return res.GetText()
}
