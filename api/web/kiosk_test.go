package web

import (
	"bytes"
	"fmt"
	"image"
	_ "image/png"
	"math"
	"net/url"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/makiuchi-d/gozxing"
	gozxingqr "github.com/makiuchi-d/gozxing/qrcode"

	"wattshelf/domain"
	"wattshelf/domain/review"
)

const hostileName = `<script>alert(1)</script>`

func shelfItems(t *testing.T) []domain.ShelfItem {
	t.Helper()
	var items []domain.ShelfItem
	for _, c := range demoShelf(t) {
		items = append(items, c.Public())
	}
	return items
}

// kindCounts counts items by kind, as the store does for the kiosk.
func kindCounts(items []domain.ShelfItem) map[string]int {
	counts := map[string]int{}
	for _, it := range items {
		counts[it.Kind]++
	}
	return counts
}

// renderKioskHTML renders items as the first page of the shelf, asked
// for with the query parameters given.
func renderKioskHTML(t *testing.T, v *views, items []domain.ShelfItem, query string) string {
	t.Helper()
	params, err := url.ParseQuery(query)
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	if err := v.renderKiosk(&b, kioskView(items, false, kindCounts(items), parseKioskQuery(params, false))); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

// A name, bin or description is shown as text, never run as markup, on
// every page that shows it.
func TestHostileTextIsEscaped(t *testing.T) {
	v := mustViews(t)
	items := shelfItems(t)
	items[0].Name = hostileName
	items[0].Bin = `"><img src=x onerror=alert(2)>`
	items[0].Description = `</dd><script>alert(3)</script>`

	var comp strings.Builder
	if err := v.renderComponent(&comp, componentView(items[0], "http://shelf.test/shelf/1")); err != nil {
		t.Fatal(err)
	}
	in := demoReport(t, demoDesignNames(t)[0])
	in.DesignName = hostileName
	in.Report.Checks[0].Message = hostileName
	pages := map[string]string{
		"kiosk":     renderKioskHTML(t, v, items, ""),
		"component": comp.String(),
		"report":    renderReportHTML(t, v, in),
	}
	for name, html := range pages {
		for _, raw := range []string{"<script>alert", "<img src=x", "onerror=alert(2)>"} {
			if strings.Contains(html, raw) {
				t.Errorf("%s page carries %q unescaped", name, raw)
			}
		}
		if !strings.Contains(html, "&lt;script&gt;alert(1)&lt;/script&gt;") {
			t.Errorf("%s page does not show the hostile name as text", name)
		}
	}
}

var (
	tagRE    = regexp.MustCompile(`<span class="tag tag-([a-z]+)"><svg class="sym" aria-hidden="true" focusable="false"><use href="#(sym-[a-z-]+)"/></svg>([^<]+)</span>`)
	anyTagRE = regexp.MustCompile(`class="tag `)
)

// Every status on every page shows a word and a symbol as well as its
// colour, and each status has a word and a symbol of its own.
func TestEveryStatusHasWordAndSymbol(t *testing.T) {
	// A part's condition shares neither symbol nor colour class with a
	// review's status: a pass mark on a shelf part would read as
	// "approved for your build".
	statuses := []string{"pass", "warn", "fail", "out_of_scope", "working", "untested", "faulty"}
	seenSymbol, seenKey := map[string]string{}, map[string]string{}
	for _, s := range statuses {
		look := statusOf(s)
		if look.Word == "" || look.Symbol == "" {
			t.Fatalf("%s has no word or symbol: %+v", s, look)
		}
		if other, dup := seenSymbol[look.Symbol]; dup {
			t.Errorf("%s and %s share the symbol %s", s, other, look.Symbol)
		}
		if other, dup := seenKey[look.Key]; dup {
			t.Errorf("%s and %s share the colour class %s", s, other, look.Key)
		}
		seenSymbol[look.Symbol], seenKey[look.Key] = s, s
	}
	v := mustViews(t)
	sprite := renderKioskHTML(t, v, nil, "")
	for _, s := range statuses {
		if !strings.Contains(sprite, `<symbol id="`+statusOf(s).Symbol+`"`) {
			t.Errorf("the page sprite lacks the symbol for %s", s)
		}
	}

	items := shelfItems(t)
	var pages []string
	pages = append(pages, renderKioskHTML(t, v, items, ""))
	for _, name := range demoDesignNames(t) {
		pages = append(pages, renderReportHTML(t, v, demoReport(t, name)))
	}
	words := map[string]bool{}
	for _, html := range pages {
		tags := tagRE.FindAllStringSubmatch(html, -1)
		if all := len(anyTagRE.FindAllString(html, -1)); all != len(tags) || all == 0 {
			t.Fatalf("%d status tags, %d of them with a symbol and a word", all, len(tags))
		}
		for _, m := range tags {
			words[m[3]] = true
		}
	}
	for _, w := range []string{"Pass", "Warning", "Fail", "Working", "Untested"} {
		if !words[w] {
			t.Errorf("no %q tag on the kiosk or the demo reports", w)
		}
	}
}

// The report's banner names the overall status in words for each status
// the engine can give.
func TestReportBannerForEachStatus(t *testing.T) {
	v := mustViews(t)
	in := demoReport(t, demoDesignNames(t)[0])
	for _, s := range []review.Status{review.Pass, review.Warn, review.Fail, review.OutOfScope} {
		in.Report.Status = s
		html := renderReportHTML(t, v, in)
		look := statusOf(string(s))
		banner := fmt.Sprintf(`<section class="verdict verdict-%s" aria-label="Outcome" data-status="%s">`, look.Key, s)
		if !strings.Contains(html, banner) {
			t.Errorf("%s: no banner %s", s, banner)
			continue
		}
		rest := html[strings.Index(html, banner):]
		if !strings.Contains(rest[:600], `href="#`+look.Symbol+`"`) || !strings.Contains(rest[:600], look.Word+"</span>") {
			t.Errorf("%s: banner lacks its symbol or the word %q", s, look.Word)
		}
	}
}

// A page of the shelf says where it is in the filtered shelf and leads to
// the next page, and its links keep the filter and the screen's options.
func TestKioskPagePlaceAndLinks(t *testing.T) {
	items := shelfItems(t)
	counts := kindCounts(items)
	first := parseKioskQuery(url.Values{"kind": {"motor"}, "wall": {"1"}, "every_s": {"5"}, "limit": {"2"}, "junk": {"x"}}, false)
	page := kioskView(items[:2], true, counts, first)
	if page.First != 1 || page.Last != 2 || page.Total != counts["motor"] || page.KindTotal != len(items) {
		t.Errorf("first page: parts %d–%d of %d (%d of any kind), want 1–2 of %d (%d)",
			page.First, page.Last, page.Total, page.KindTotal, counts["motor"], len(items))
	}
	if page.FirstURL != "" || page.NextURL == "" {
		t.Fatalf("first page: first %q, next %q", page.FirstURL, page.NextURL)
	}
	next, err := url.Parse(page.NextURL)
	if err != nil {
		t.Fatal(err)
	}
	params := next.Query()
	for name, want := range map[string]string{"kind": "motor", "wall": "1", "every_s": "5", "limit": "2", "junk": ""} {
		if got := params.Get(name); got != want {
			t.Errorf("next page link %s=%q, want %q", name, got, want)
		}
	}
	second := parseKioskQuery(params, false)
	if second.after == nil || second.after.ID != items[1].ID || second.offset != 2 {
		t.Fatalf("the next page starts after %+v at %d, want after id %d at 2", second.after, second.offset, items[1].ID)
	}
	page = kioskView(items[2:3], false, counts, second)
	if page.First != 3 || page.Last != 3 || page.NextURL != "" || page.FirstURL == "" {
		t.Errorf("last page: parts %d–%d, next %q, first %q", page.First, page.Last, page.NextURL, page.FirstURL)
	}
	// Every card links to its bin, and the bin's page leads back to every bin.
	binPage := parseKioskQuery(mustQuery(t, page.Cards[0].BinURL), false)
	if binPage.filter.Bin != items[2].Bin || binPage.filter.Kind != "motor" || binPage.after != nil {
		t.Errorf("bin link %q asks for %+v", page.Cards[0].BinURL, binPage.filter)
	}
	if kioskView(nil, false, counts, binPage).AllBinsURL == "" {
		t.Error("a page of one bin has no way back to every bin")
	}
}

// The kiosk's options are held within bounds, and a place it cannot read
// starts from the beginning.
func TestKioskQueryBounds(t *testing.T) {
	cases := []struct {
		query                      string
		wallByDefault, wall        bool
		refreshMS, everyMS, idleMS int64
		limit                      int
		after                      bool
	}{
		{"", false, false, 15000, 12000, 60000, defaultPageParts, false},
		{"", true, true, 15000, 12000, 60000, defaultWallParts, false},
		{"wall=0", true, false, 15000, 12000, 60000, defaultPageParts, false},
		{"wall=1&every_s=1&idle_s=2&refresh_s=3&limit=13", false, true, 3000, 1000, 2000, 13, false},
		{"every_s=0&idle_s=-5&refresh_s=0&limit=0", false, false, 1000, 1000, 1000, 1, false},
		{"every_s=99999&idle_s=99999&refresh_s=99999&limit=100000", false, false, 30000, 600000, 3600000, maxPageParts, false},
		{"every_s=x&limit=ten", false, false, 15000, 12000, 60000, defaultPageParts, false},
		{"after=" + shelfPlace{Bin: "B", Name: "N", ID: 7, Offset: 40}.encode(), false, false, 15000, 12000, 60000, defaultPageParts, true},
		{"after=not-a-place", false, false, 15000, 12000, 60000, defaultPageParts, false},
		{"after=" + shelfPlace{Bin: "B", Name: "N", ID: 0, Offset: 4}.encode(), false, false, 15000, 12000, 60000, defaultPageParts, false},
	}
	for _, tc := range cases {
		q := parseKioskQuery(mustQuery(t, "/shelf?"+tc.query), tc.wallByDefault)
		got := q.options
		if q.wall != tc.wall || got.RefreshMS != tc.refreshMS || got.EveryMS != tc.everyMS || got.IdleMS != tc.idleMS ||
			got.Limit != tc.limit || (q.after != nil) != tc.after {
			t.Errorf("%q (wall by default %t): wall %t, %+v, after %v", tc.query, tc.wallByDefault, q.wall, got, q.after)
		}
		if !tc.after && q.values.Get("after") != "" {
			t.Errorf("%q: links would carry the unreadable place on", tc.query)
		}
	}
}

func mustQuery(t *testing.T, address string) url.Values {
	t.Helper()
	u, err := url.Parse(address)
	if err != nil {
		t.Fatal(err)
	}
	return u.Query()
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// The QR code the service draws decodes to the address it was given.
func TestQRCodesDecode(t *testing.T) {
	for _, address := range []string{"http://shelf.local:8080/shelf/7", "https://makerspace.example/wattshelf/shelf/123456"} {
		body, err := qrPNG(address, 4)
		if err != nil {
			t.Fatal(err)
		}
		if got := decodeQR(t, body); got != address {
			t.Errorf("decoded %q, want %q", got, address)
		}
		svg, err := qrSVG(address)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.HasPrefix(svg, []byte("<svg ")) || !bytes.Contains(svg, []byte(`shape-rendering="crispEdges"`)) {
			t.Errorf("svg code is not an svg: %.80s", svg)
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

// WCAG 2.2 success criterion 1.4.3 asks 4.5:1 for text, 1.4.11 asks 3:1
// for the borders that outline a status; the ratio and relative luminance
// are the WCAG 2.2 definitions. Reads the colours from the stylesheet.
func TestPaletteContrast(t *testing.T) {
	css, err := files.ReadFile("static/site.css")
	if err != nil {
		t.Fatal(err)
	}
	vars := map[string]string{}
	for _, m := range regexp.MustCompile(`--([a-z-]+):\s*(#[0-9a-fA-F]{6});`).FindAllStringSubmatch(string(css), -1) {
		vars[m[1]] = m[2]
	}
	type pair struct {
		fg, bg string
		min    float64
	}
	pairs := []pair{{"ink", "paper", 4.5}, {"muted", "paper", 4.5}, {"link", "paper", 4.5}, {"ink", "panel", 4.5}, {"muted", "panel", 4.5}}
	for _, s := range []string{"pass", "warn", "fail", "scope", "none", "working", "untested", "faulty"} {
		pairs = append(pairs,
			pair{s + "-ink", s + "-tint", 4.5}, pair{s + "-ink", "paper", 4.5},
			pair{s + "-edge", "paper", 3}, pair{s + "-edge", s + "-tint", 3})
	}
	for _, p := range pairs {
		fg, bg := vars[p.fg], vars[p.bg]
		if fg == "" || bg == "" {
			t.Errorf("stylesheet lacks --%s or --%s", p.fg, p.bg)
			continue
		}
		if r := contrastRatio(fg, bg); r < p.min {
			t.Errorf("--%s on --%s: %.2f:1, below %.1f:1", p.fg, p.bg, r, p.min)
		}
	}
	// Worked example: black on white is 21:1 (WCAG 2.2, definition of
	// contrast ratio).
	if r := contrastRatio("#000000", "#ffffff"); math.Abs(r-21) > 1e-9 {
		t.Errorf("black on white is %.3f:1, want 21:1", r)
	}
}

func contrastRatio(a, b string) float64 {
	la, lb := luminance(a), luminance(b)
	return (max(la, lb) + 0.05) / (min(la, lb) + 0.05)
}

func luminance(hex string) float64 {
	channel := func(i int) float64 {
		v, _ := strconv.ParseUint(hex[1+2*i:3+2*i], 16, 8)
		c := float64(v) / 255
		if c <= 0.04045 {
			return c / 12.92
		}
		return math.Pow((c+0.055)/1.055, 2.4)
	}
	return 0.2126*channel(0) + 0.7152*channel(1) + 0.0722*channel(2)
}

// The report's headline counts in words that agree with the count.
func TestHeadlineCounts(t *testing.T) {
	cases := []struct {
		status           review.Status
		pass, warn, fail int
		want             string
	}{
		{review.Fail, 3, 0, 1, "1 check failed. Do not connect the battery until it is put right."},
		{review.Fail, 3, 0, 2, "2 checks failed. Do not connect the battery until they are put right."},
		{review.Warn, 3, 1, 0, "No check failed, but 1 finding needs a look before you connect the battery."},
		{review.Warn, 3, 4, 0, "No check failed, but 4 findings need a look before you connect the battery."},
		{review.Pass, 1, 0, 0, "The one check passed. Inspect the build before you connect the battery all the same."},
	}
	for _, tc := range cases {
		rep := review.Report{Status: tc.status}
		rep.Counts.Pass, rep.Counts.Warn, rep.Counts.Fail = tc.pass, tc.warn, tc.fail
		if got := headline(rep); got != tc.want {
			t.Errorf("%s %d/%d/%d: %q, want %q", tc.status, tc.pass, tc.warn, tc.fail, got, tc.want)
		}
	}
}

func TestFormatNumber(t *testing.T) {
	cases := map[float64]string{0: "0", 0.0815: "0.0815", 1.3249: "1.32", 14.4: "14.4", 14800: "14800",
		-2.5: "-2.5", 100: "100", 0.5: "0.5", 12.0: "12"}
	for x, want := range cases {
		if got := formatNumber(x); got != want {
			t.Errorf("formatNumber(%v) = %q, want %q", x, got, want)
		}
	}
}
