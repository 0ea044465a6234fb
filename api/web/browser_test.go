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
	"math"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
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
	srv *httptest.Server
	// down makes the server drop every connection unanswered, as a
	// server that is restarting or a broken network does.
	down       atomic.Bool
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
	return newSiteWith(t, func(cfg *api.Config) { cfg.PublicBaseURL = publicBaseURL })
}

// newSiteWith is newSite with the router's configuration changed.
func newSiteWith(t *testing.T, configure func(*api.Config)) *site {
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
	cfg := api.Config{Store: st, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)), Registry: prometheus.NewRegistry()}
	configure(&cfg)
	router, err := api.New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	s := &site{store: st, token: token, components: demo.Components}
	s.srv = httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if s.down.Load() {
			dropConnection(t, w)
			return
		}
		router.ServeHTTP(w, r)
	}))
	t.Cleanup(s.srv.Close)
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

// dropConnection closes the client's connection without an answer.
func dropConnection(t *testing.T, w http.ResponseWriter) {
	conn, _, err := http.NewResponseController(w).Hijack()
	if err != nil {
		t.Errorf("drop a connection: %v", err)
		return
	}
	conn.Close()
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

// offline cuts the browser off from every server, or lets it back on.
func (b *browser) offline(t *testing.T, off bool) {
	t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, time.Minute)
	defer cancel()
	_, err := chromedp.Call(ctx, network.EmulateNetworkConditionsByRule, network.EmulateNetworkConditionsByRuleParams{
		MatchedNetworkConditions: []*network.Conditions{{Offline: off, DownloadThroughput: -1, UploadThroughput: -1}},
	})
	if err != nil {
		t.Fatalf("set the network offline=%t: %v", off, err)
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
	.map(li => li.querySelector('h2').textContent.trim())`

func TestKioskInBrowser(t *testing.T) {
	s := newSite(t)
	b := newBrowser(t)

	// The shelf, every demo component by name, on one long page.
	b.do(t, chromedp.Navigate(s.srv.URL+"/shelf?refresh_s=1&limit=100"), chromedp.WaitVisible(chromedp.CSS("#shelf-list li.card")))
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
	firstName := get(t, b, chromedp.TextContent(chromedp.CSS(`li.card[data-id="`+ids[0]+`"] h2`)))
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

	// Typing narrows the shelf to what matches, as the server finds it,
	// without reloading the page; the address follows the search.
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
	if q := get(t, b, chromedp.Evaluate[string](`new URLSearchParams(location.search).get('q')`)); q != "mixer" {
		t.Errorf("after the search the address asks for q=%q", q)
	}
	b.screenshot(t, "kiosk-search")

	// A component added through the API appears without a reload, and the
	// search text stays as typed.
	added := domain.ComponentInput{Name: "Stand mixer speed switch", Kind: "switch", Bin: "S3 switches",
		Quantity: 2, Condition: "working", SpecSource: "measured", Origin: "stand mixer (battery model)"}
	body, _ := json.Marshal(added)
	// Unchanged cards must stay the same elements (nothing redrawn, so
	// nothing flickers): mark one that a fresh copy would not carry.
	kept := `document.querySelector('#shelf-list li.card')`
	get(t, b, chromedp.Evaluate[bool](kept+`.keptElement = true`))
	// A keyboard user's place survives the refresh too.
	shownLink := `Array.from(document.querySelectorAll('#shelf-list li.card')).find(li => !li.hidden).querySelector('h2 a')`
	if !get(t, b, chromedp.Evaluate[bool](`(() => { const a = `+shownLink+`; a.focus(); window.focusedLink = a; return document.activeElement === a })()`)) {
		t.Fatal("could not focus a shown card's link")
	}
	s.call(t, http.MethodPost, "/v1/components", body, http.StatusCreated, nil)
	b.waitFor(t, "the new component to appear", `(`+visibleNames+`).includes("Stand mixer speed switch")`, 20*time.Second)
	if !get(t, b, chromedp.Evaluate[bool](`document.activeElement === window.focusedLink`)) {
		t.Error("the refresh took the keyboard focus off the card's link")
	}
	if !get(t, b, chromedp.Evaluate[bool](`Array.from(document.querySelectorAll('#shelf-list li.card')).some(li => li.keptElement === true)`)) {
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
	b.do(t, chromedp.Navigate(s.srv.URL+"/shelf?limit=100"), chromedp.WaitVisible(chromedp.CSS("#shelf-list li.card")),
		chromedp.Focus(chromedp.CSS(`li.card[data-id="`+ids[0]+`"] h2 a`)),
		chromedp.KeyEvent("\r"), chromedp.WaitVisible(chromedp.CSS("main.component")))
	heading := get(t, b, chromedp.Text(chromedp.CSS("h1")))
	if strings.TrimSpace(heading) != strings.TrimSpace(firstName) || heading == "" {
		t.Errorf("component %s's page is headed %q, its card says %q", ids[0], heading, firstName)
	}
	b.screenshot(t, "component")

	b.checkStayedHome(t, s.srv.URL)
}

// The page carries one page of the shelf; following its Next links walks
// every part once, in shelf order.
func TestKioskPagesInBrowser(t *testing.T) {
	s := newSite(t)
	b := newBrowser(t)
	b.do(t, chromedp.Navigate(s.srv.URL+"/shelf?limit=5"), chromedp.WaitVisible(chromedp.CSS("#shelf-list li.card")))
	var walked []string
	for pages := 0; ; pages++ {
		if pages > len(s.components) {
			t.Fatal("the Next links go round in circles")
		}
		names := get(t, b, chromedp.Evaluate[[]string](visibleNames))
		if len(names) == 0 || len(names) > 5 {
			t.Fatalf("page %d shows %d parts", pages+1, len(names))
		}
		walked = append(walked, names...)
		if !get(t, b, chromedp.Evaluate[bool](`document.querySelector('#shelf-pager a[rel="next"]') !== null`)) {
			break
		}
		before := get(t, b, chromedp.Evaluate[string](`location.href`))
		b.do(t, chromedp.Click(chromedp.CSS(`#shelf-pager a[rel="next"]`)))
		b.waitFor(t, "the next page", `location.href !== `+jsString(before)+` && document.readyState === 'complete'`, 10*time.Second)
	}
	want := make([]string, len(s.components))
	for i, c := range s.components {
		want[i] = c.Name
	}
	got := slices.Clone(walked)
	slices.Sort(got)
	slices.Sort(want)
	if !slices.Equal(got, want) {
		t.Errorf("the pages hold %q, the shelf %q", walked, want)
	}
	b.checkStayedHome(t, s.srv.URL)
}

func jsString(s string) string {
	raw, _ := json.Marshal(s)
	return string(raw)
}

// textCheck finds, among the elements that show text of their own, the
// smallest font size, any italic, and the lowest contrast against the
// first opaque background behind them (WCAG 2.2 relative luminance and
// contrast ratio, as TestPaletteContrast computes them).
// Diagrams that scroll on their own (the report's power tree) are left
// out of it at phone size: they keep their drawing's own scale.
const textCheck = `((skipDiagrams) => {
  const lum = (rgb) => {
    const c = rgb.map(v => { v /= 255; return v <= 0.04045 ? v / 12.92 : Math.pow((v + 0.055) / 1.055, 2.4); });
    return 0.2126 * c[0] + 0.7152 * c[1] + 0.0722 * c[2];
  };
  const parse = (s) => { const m = s.match(/rgba?\(([^)]+)\)/); if (!m) return null;
    const p = m[1].split(',').map(Number); return { rgb: p.slice(0, 3), a: p.length > 3 ? p[3] : 1 }; };
  const background = (el) => {
    for (let e = el; e; e = e.parentElement) {
      const c = parse(getComputedStyle(e).backgroundColor);
      if (c && c.a === 1) return c.rgb;
    }
    return [255, 255, 255];
  };
  const out = { smallest: 1e9, smallestText: '', italic: [], lowest: 99, lowestText: '' };
  for (const el of document.querySelectorAll('body *')) {
    const own = Array.from(el.childNodes).filter(n => n.nodeType === 3).map(n => n.textContent.trim()).join(' ').trim();
    if (!own || el.closest('[hidden], .sprite, .skip, [aria-hidden="true"]' + (skipDiagrams ? ', .scroll' : '')) || el.offsetParent === null) continue;
    const r = el.getBoundingClientRect();
    if (r.bottom <= 0 || r.top >= innerHeight || r.width === 0) continue;
    const st = getComputedStyle(el);
    const size = parseFloat(st.fontSize);
    if (size < out.smallest) { out.smallest = size; out.smallestText = own.slice(0, 60); }
    if (st.fontStyle === 'italic') out.italic.push(own.slice(0, 60));
    const fg = parse(st.color);
    if (el.matches('input, select, button') || !fg) continue;
    const lf = lum(fg.rgb), lb = lum(background(el));
    const ratio = (Math.max(lf, lb) + 0.05) / (Math.min(lf, lb) + 0.05);
    if (ratio < out.lowest) { out.lowest = ratio; out.lowestText = own.slice(0, 60); }
  }
  return out;
})`

type textReport struct {
	Smallest     float64  `json:"smallest"`
	SmallestText string   `json:"smallestText"`
	Italic       []string `json:"italic"`
	Lowest       float64  `json:"lowest"`
	LowestText   string   `json:"lowestText"`
}

// wholeParts counts the shown cards that lie wholly on the screen, below
// the header and above the footer; cut counts those shown but cut off.
const wholeParts = `(() => {
  const top = document.getElementById('kiosk-head').getBoundingClientRect().bottom;
  const bottom = Math.min(innerHeight, document.querySelector('.kiosk-foot').getBoundingClientRect().top);
  let whole = 0, cut = 0;
  for (const li of document.querySelectorAll('#shelf-list li.card')) {
    if (li.hidden || li.offsetParent === null) continue;
    const r = li.getBoundingClientRect();
    if (r.top >= top - 0.5 && r.bottom <= bottom + 0.5 && r.left >= -0.5 && r.right <= innerWidth + 0.5) whole++; else cut++;
  }
  return [whole, cut];
})()`

// The wall screen, landscape and portrait: at least 12 whole parts a
// screen, text big enough to read from two metres, a header of one row,
// and, left alone, pages that reach every part and start again. A touch
// pauses it until it has been left alone for the idle time; a lost
// network or a server that goes away leaves the last page up with a
// notice, and paging carries on when they are back.
func TestWallInBrowser(t *testing.T) {
	// A wall set up as the README says, with the address phones use.
	s := newSiteAt(t, "http://shelf.example:8080")
	b := newBrowser(t)
	all := make([]string, len(s.components))
	for i, c := range s.components {
		all[i] = c.Name
	}
	slices.Sort(all)
	screenRE := regexp.MustCompile(`^Parts (\d+)–(\d+) of (\d+) · screen (\d+) of (\d+)$`)
	for _, size := range []struct{ w, h int64 }{{1920, 1080}, {1080, 1920}} {
		name := fmt.Sprintf("wall-%dx%d", size.w, size.h)
		b.do(t, chromedp.EmulateViewport(size.w, size.h))
		b.do(t, chromedp.Navigate(s.srv.URL+"/shelf?wall=1&every_s=1&idle_s=3"), chromedp.WaitVisible(chromedp.CSS("#shelf-list li.card")))
		b.waitFor(t, "the wall to fit its first screen", `document.getElementById('shelf').dataset.screen === '1'`, 10*time.Second)
		// Stop it turning while the first screen is measured.
		get(t, b, chromedp.Evaluate[bool](`document.dispatchEvent(new KeyboardEvent('keydown')), true`))
		counts := get(t, b, chromedp.Evaluate[[]int](wholeParts))
		if counts[0] < 12 || counts[1] != 0 {
			t.Errorf("%s: the first screen shows %d whole parts and %d cut off, want at least 12 and none cut", name, counts[0], counts[1])
		}
		b.screenshot(t, name)
		text := get(t, b, chromedp.Evaluate[textReport](textCheck+"(false)"))
		// The floor for reading from two metres; WCAG 2.2 SC 1.4.3
		// for contrast.
		if text.Smallest < 18 {
			t.Errorf("%s: %q is %.1f px, under 18 px", name, text.SmallestText, text.Smallest)
		}
		if len(text.Italic) > 0 {
			t.Errorf("%s: italic text %q", name, text.Italic)
		}
		if text.Lowest < 4.5 {
			t.Errorf("%s: %q has contrast %.2f:1, under 4.5:1", name, text.LowestText, text.Lowest)
		}
		// One compact row: everything in the header's row sits beside the
		// title, and the header takes under a tenth of the screen.
		oneRow := get(t, b, chromedp.Evaluate[bool](`(() => {
			const kids = Array.from(document.querySelector('.head-row').children).filter(e => e.offsetParent !== null);
			const h1 = document.querySelector('.head-row h1').getBoundingClientRect();
			return kids.every(e => { const r = e.getBoundingClientRect(); return r.top < h1.bottom && r.bottom > h1.top && r.right <= innerWidth; });
		})()`))
		headShare := get(t, b, chromedp.Evaluate[float64](`document.getElementById('kiosk-head').offsetHeight / innerHeight`))
		if !oneRow || headShare > 0.1 {
			t.Errorf("%s: the header is not one row (one row %t, %.0f%% of the screen)", name, oneRow, headShare*100)
		}

		// Left alone, it turns through the whole shelf and starts again.
		b.waitFor(t, "the paging to resume", `document.getElementById('shelf').dataset.paused === '0'`, 10*time.Second)
		seen := map[string]bool{}
		var screens []string
		deadline := time.Now().Add(40 * time.Second)
		for {
			names := get(t, b, chromedp.Evaluate[[]string](visibleNames))
			for _, n := range names {
				seen[n] = true
			}
			place := get(t, b, chromedp.Evaluate[string](`document.getElementById('shelf-count').textContent`))
			m := screenRE.FindStringSubmatch(place)
			if m == nil || m[3] != fmt.Sprint(len(s.components)) {
				t.Fatalf("%s: the place reads %q", name, place)
			}
			if len(screens) == 0 || screens[len(screens)-1] != place {
				screens = append(screens, place)
			}
			if len(seen) == len(all) && len(screens) > 1 && m[4] == "1" {
				break
			}
			if time.Now().After(deadline) {
				t.Fatalf("%s: after %q the wall has shown %d of %d parts", name, screens, len(seen), len(all))
			}
			time.Sleep(100 * time.Millisecond)
		}
		for _, n := range all {
			if !seen[n] {
				t.Errorf("%s: the wall never showed %q", name, n)
			}
		}
		t.Logf("%s: %q", name, screens)
	}

	// A key pauses it; it stays put, then resumes after the idle time.
	first := `document.getElementById('shelf').dataset.first`
	b.do(t, chromedp.KeyEvent("x"))
	if get(t, b, chromedp.Evaluate[string](`document.getElementById('shelf').dataset.paused`)) != "1" {
		t.Fatal("a key press did not pause the wall")
	}
	at := get(t, b, chromedp.Evaluate[string](first))
	time.Sleep(2 * time.Second) // two page intervals, within the idle time
	if now := get(t, b, chromedp.Evaluate[string](first)); now != at {
		t.Errorf("the wall turned from part %s to %s while paused", at, now)
	}
	b.waitFor(t, "the wall to resume and turn", `document.getElementById('shelf').dataset.paused === '0' && `+first+` !== `+jsString(at), 10*time.Second)

	// The network goes, then the server: the page stays with a notice.
	stale := `(() => { const s = document.getElementById('shelf-state'); return !s.hidden && s.textContent.includes('stale') })()`
	shownCards := fmt.Sprintf(`(%s).length >= 12`, visibleNames)
	b.offline(t, true)
	before := get(t, b, chromedp.Evaluate[[]string](visibleNames))
	b.waitFor(t, "a notice that the figures may be stale", stale, 10*time.Second)
	if during := get(t, b, chromedp.Evaluate[[]string](visibleNames)); !slices.Equal(before, during) || len(during) == 0 {
		t.Errorf("offline, the wall shows %q; it showed %q", during, before)
	}
	b.screenshot(t, "wall-offline")
	b.offline(t, false)
	b.waitFor(t, "the notice to go once the network is back", `!(`+stale+`)`, 15*time.Second)
	s.down.Store(true)
	b.waitFor(t, "a notice while the server is away", stale, 10*time.Second)
	at = get(t, b, chromedp.Evaluate[string](first))
	s.down.Store(false)
	b.waitFor(t, "the wall to carry on once the server is back", `!(`+stale+`) && `+first+` !== `+jsString(at), 15*time.Second)
	b.waitFor(t, "a full screen after the outage", `document.getElementById('shelf').dataset.first === '1' && `+shownCards, 15*time.Second)
	// The browser logs the failed requests of the outage as errors; what
	// matters is that it asked nothing of another host.
	b.mu.Lock()
	b.problems = slices.DeleteFunc(b.problems, func(p string) bool { return strings.Contains(p, "network") })
	b.mu.Unlock()
	b.checkStayedHome(t, s.srv.URL)
}

// The wall's text follows the screen's long edge, with no cap: the same
// in portrait as in landscape, twice as large on a 4K screen.
func TestWallTextFollowsTheLongEdgeInBrowser(t *testing.T) {
	s := newSiteAt(t, "http://shelf.example:8080")
	b := newBrowser(t)
	size := map[string]float64{}
	for _, screen := range []struct {
		name string
		w, h int64
	}{{"landscape", 1920, 1080}, {"portrait", 1080, 1920}, {"4K", 3840, 2160}} {
		b.do(t, chromedp.EmulateViewport(screen.w, screen.h))
		b.do(t, chromedp.Navigate(s.srv.URL+"/shelf?wall=1"), chromedp.WaitVisible(chromedp.CSS("#shelf-list li.card")))
		size[screen.name] = get(t, b, chromedp.Evaluate[float64](`parseFloat(getComputedStyle(document.body).fontSize)`))
	}
	if size["portrait"] != size["landscape"] || math.Abs(size["4K"]-2*size["landscape"]) > 0.5 || size["landscape"] < 18 {
		t.Errorf("body text: %v px; want portrait as landscape, 4K twice that", size)
	}
	b.checkStayedHome(t, s.srv.URL)
}

// Keyboard focus never hides under the sticky header: tabbing through a
// long shelf page at 1920×1080, every focused element is wholly on the
// screen below the header.
func TestFocusStaysInViewInBrowser(t *testing.T) {
	s := newSite(t)
	b := newBrowser(t)
	b.do(t, chromedp.EmulateViewport(1920, 1080))
	b.do(t, chromedp.Navigate(s.srv.URL+"/shelf?limit=100"), chromedp.WaitVisible(chromedp.CSS("#shelf-list li.card")))
	// The ordinary page reads from two metres too.
	if text := get(t, b, chromedp.Evaluate[textReport](textCheck+"(false)")); text.Smallest < 18 || len(text.Italic) > 0 || text.Lowest < 4.5 {
		t.Errorf("ordinary page at 1920×1080: smallest %q %.1f px, italic %q, lowest contrast %q %.2f:1",
			text.SmallestText, text.Smallest, text.Italic, text.LowestText, text.Lowest)
	}
	sticky := get(t, b, chromedp.Evaluate[string](`getComputedStyle(document.getElementById('kiosk-head')).position`))
	if sticky != "sticky" {
		t.Fatalf("the header is %s, not sticky: this test checks nothing", sticky)
	}
	scrolled := false
	// Forward to the foot of the page, then back up: going back, the
	// browser brings each element in at the top, where the header is.
	for i := range 140 {
		key := chromedp.KeyEvent("\t")
		if i >= 70 {
			key = chromedp.KeyEvent("\t", chromedp.KeyModifiers(chromedp.ModifierShift))
		}
		b.do(t, key)
		if get(t, b, chromedp.Evaluate[bool](`document.activeElement === document.body`)) {
			continue // focus has left the page for the browser's own controls
		}
		place := get(t, b, chromedp.Evaluate[[]float64](`(() => {
			const r = document.activeElement.getBoundingClientRect();
			const head = document.getElementById('kiosk-head').getBoundingClientRect();
			return [r.top, r.bottom, head.bottom, scrollY];
		})()`))
		what := get(t, b, chromedp.Evaluate[string](`document.activeElement.textContent.trim().slice(0, 40) || document.activeElement.tagName`))
		inHead := get(t, b, chromedp.Evaluate[bool](`document.getElementById('kiosk-head').contains(document.activeElement)`))
		if !inHead && place[3] > 0 && (place[0] < place[2]-0.5 || place[1] > 1080.5) {
			t.Errorf("tab %d: %q is at %.0f–%.0f px, the header ends at %.0f px", i+1, what, place[0], place[1], place[2])
		}
		scrolled = scrolled || place[3] > 500
	}
	if !scrolled {
		t.Error("tabbing never scrolled the page, so the header was never in the way")
	}
	// The hard case: the next link is already on the screen, but under the
	// header. Tab must bring it out.
	for _, n := range []int{6, 8, 10} {
		top := get(t, b, chromedp.Evaluate[[]float64](fmt.Sprintf(`(() => {
			const links = Array.from(document.querySelectorAll('#shelf-list li.card h2 a'));
			const all = Array.from(document.querySelectorAll('a, input, select, button'));
			const target = links[%d];
			all[all.indexOf(target) - 1].focus({ preventScroll: true });
			const head = document.getElementById('kiosk-head').getBoundingClientRect().bottom;
			window.scrollBy(0, target.getBoundingClientRect().top - head / 2);
			target.dataset.target = '1';
			return [target.getBoundingClientRect().top, head];
		})()`, n)))
		if top[0] >= top[1] {
			t.Fatalf("link %d is at %.0f px, not under the header ending at %.0f px: this checks nothing", n, top[0], top[1])
		}
		b.do(t, chromedp.KeyEvent("\t"))
		after := get(t, b, chromedp.Evaluate[[]float64](`(() => {
			const a = document.activeElement;
			return [a.dataset.target === '1' ? 1 : 0, a.getBoundingClientRect().top, document.getElementById('kiosk-head').getBoundingClientRect().bottom];
		})()`))
		get(t, b, chromedp.Evaluate[bool](`document.querySelectorAll('[data-target]').forEach(e => delete e.dataset.target), true`))
		if after[0] != 1 || after[1] < after[2]-0.5 {
			t.Errorf("link %d: focused %t, at %.0f px under a header ending at %.0f px", n, after[0] == 1, after[1], after[2])
		}
	}
	b.checkStayedHome(t, s.srv.URL)
}

// Every page is usable on a 360 px phone: nothing wider than the screen,
// so no page scrolls sideways, and no text under 14 px.
func TestPagesAt360InBrowser(t *testing.T) {
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
	b.do(t, chromedp.EmulateViewport(360, 740, chromedp.EmulateScale(2), chromedp.EmulateMobile))
	for _, path := range []string{"/shelf", "/shelf?wall=1", "/shelf/1", "/shelf/4", "/reports/" + stored.ShareID, "/shelf/999999"} {
		b.do(t, chromedp.Navigate(s.srv.URL+path), chromedp.WaitReady(chromedp.CSS("body")))
		width := get(t, b, chromedp.Evaluate[float64](`document.documentElement.scrollWidth`))
		if width > 360 {
			wide := get(t, b, chromedp.Evaluate[[]string](`Array.from(document.querySelectorAll('body *'))
				.filter(e => e.getBoundingClientRect().right > 360.5 && !e.closest('.scroll'))
				.slice(0, 5).map(e => e.tagName + '.' + e.className)`))
			t.Errorf("%s at 360 px is %.0f px wide: %q", path, width, wide)
		}
		// A wall's address on a phone is the ordinary page, which scrolls.
		if strings.Contains(path, "wall=1") && !get(t, b, chromedp.Evaluate[bool](`(`+visibleNames+`).length >= 5 && document.documentElement.scrollHeight > innerHeight`)) {
			t.Errorf("%s at 360 px does not show the page's parts to scroll through", path)
		}
		text := get(t, b, chromedp.Evaluate[textReport](textCheck+"(true)"))
		if text.Smallest < 14 { // common practice: no text under 14 px on a phone
			t.Errorf("%s at 360 px: %q is %.1f px", path, text.SmallestText, text.Smallest)
		}
		b.screenshot(t, "phone"+strings.NewReplacer("/", "-", "?", "-", "=", "-").Replace(path))
	}
	// The missing part's page answers 404 on purpose.
	b.mu.Lock()
	b.problems = slices.DeleteFunc(b.problems, func(p string) bool { return strings.Contains(p, "404") && strings.Contains(p, "/shelf/999999") })
	b.mu.Unlock()
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

// GET / leads to the shelf; the kiosk tells the staff when its codes
// carry an address only this machine can open.
func TestHomeAndLoopbackNotice(t *testing.T) {
	client := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
	for _, tc := range []struct {
		public string
		notice bool
	}{{"", true}, {"http://localhost:8080", true}, {"http://shelf.example:8080", false}} {
		s := newSiteAt(t, tc.public)
		res, err := client.Get(s.srv.URL + "/")
		if err != nil {
			t.Fatal(err)
		}
		res.Body.Close()
		if res.StatusCode != http.StatusSeeOther || res.Header.Get("Location") != "/shelf" {
			t.Errorf("GET /: %d to %q, want 303 to /shelf", res.StatusCode, res.Header.Get("Location"))
		}
		res, err = http.Get(s.srv.URL + "/shelf?wall=1")
		if err != nil {
			t.Fatal(err)
		}
		body, _ := io.ReadAll(res.Body)
		res.Body.Close()
		if got := bytes.Contains(body, []byte(`id="staff-notice"`)); got != tc.notice {
			t.Errorf("public address %q: staff notice %t, want %t", tc.public, got, tc.notice)
		}
		if tc.notice && !bytes.Contains(body, []byte("WATTSHELF_PUBLIC_URL")) {
			t.Errorf("public address %q: the notice does not name the setting", tc.public)
		}
	}
}

// With the wall made the default, /shelf is the wall screen, and
// ?wall=0 still gives the ordinary page; without it, the reverse.
func TestKioskWallSetting(t *testing.T) {
	for _, byDefault := range []bool{false, true} {
		s := newSiteWith(t, func(cfg *api.Config) { cfg.KioskWall = byDefault })
		for query, want := range map[string]bool{"": byDefault, "?wall=1": true, "?wall=0": false} {
			res, err := http.Get(s.srv.URL + "/shelf" + query)
			if err != nil {
				t.Fatal(err)
			}
			body, _ := io.ReadAll(res.Body)
			res.Body.Close()
			if got := bytes.Contains(body, []byte(`<body class="kiosk wall">`)); got != want || res.StatusCode != http.StatusOK {
				t.Errorf("wall by default %t, /shelf%s: %d, wall %t, want %t", byDefault, query, res.StatusCode, got, want)
			}
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
