package web

import (
	"bytes"
	"fmt"
	"image"
	_ "image/png"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

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

func renderKioskHTML(t *testing.T, v *views, items []domain.ShelfItem, f shelfFilter) string {
	t.Helper()
	var b strings.Builder
	if err := v.renderKiosk(&b, kioskView(items, f, defaultRefresh)); err != nil {
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
		"kiosk":     renderKioskHTML(t, v, items, shelfFilter{}),
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
	tagRE    = regexp.MustCompile(`<span class="tag tag-([a-z]+)"><svg class="sym" aria-hidden="true" focusable="false"><use href="#(sym-[a-z]+)"/></svg>([^<]+)</span>`)
	anyTagRE = regexp.MustCompile(`class="tag `)
)

// Every status on every page shows a word and a symbol as well as its
// colour, and each status has a word and a symbol of its own.
func TestEveryStatusHasWordAndSymbol(t *testing.T) {
	statuses := []string{"pass", "warn", "fail", "out_of_scope", "working", "untested", "faulty"}
	seenSymbol := map[string]string{}
	for _, s := range []string{"pass", "warn", "fail", "out_of_scope"} {
		look := statusOf(s)
		if look.Word == "" || look.Symbol == "" {
			t.Fatalf("%s has no word or symbol: %+v", s, look)
		}
		if other, dup := seenSymbol[look.Symbol]; dup {
			t.Errorf("%s and %s share the symbol %s", s, other, look.Symbol)
		}
		seenSymbol[look.Symbol] = s
	}
	v := mustViews(t)
	sprite := renderKioskHTML(t, v, nil, shelfFilter{})
	for _, s := range statuses {
		if !strings.Contains(sprite, `<symbol id="`+statusOf(s).Symbol+`"`) {
			t.Errorf("the page sprite lacks the symbol for %s", s)
		}
	}

	items := shelfItems(t)
	var pages []string
	pages = append(pages, renderKioskHTML(t, v, items, shelfFilter{}))
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

func TestKioskFilterHidesWhatDoesNotMatch(t *testing.T) {
	items := shelfItems(t)
	cases := []struct {
		f        shelfFilter
		wantName string
	}{
		{shelfFilter{Query: "MIXER"}, "Gear motor from a cordless hand mixer"},
		{shelfFilter{Query: "blind winder", Kind: "motor"}, "Blind-winder gear motor"},
		{shelfFilter{Query: "winder", Kind: "battery"}, ""},
	}
	for _, tc := range cases {
		page := kioskView(items, tc.f, time.Second)
		var shown []string
		for _, b := range page.Bins {
			visible := false
			for _, c := range b.Cards {
				if !c.Hidden {
					shown = append(shown, c.Name)
					visible = true
				}
			}
			if visible == b.Hidden {
				t.Errorf("%+v: bin %q hidden=%v with visible cards=%v", tc.f, b.Name, b.Hidden, visible)
			}
		}
		if page.Shown != len(shown) || page.Total != len(items) {
			t.Errorf("%+v: counts %d of %d, want %d of %d", tc.f, page.Shown, page.Total, len(shown), len(items))
		}
		if tc.wantName == "" {
			if len(shown) != 0 {
				t.Errorf("%+v: shows %v, want nothing", tc.f, shown)
			}
			continue
		}
		if len(shown) == 0 || !contains(shown, tc.wantName) {
			t.Errorf("%+v: shows %v, want %q among them", tc.f, shown, tc.wantName)
		}
	}
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
	for _, s := range []string{"pass", "warn", "fail", "scope", "none"} {
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

func TestFormatNumber(t *testing.T) {
	cases := map[float64]string{0: "0", 0.0815: "0.0815", 1.3249: "1.32", 14.4: "14.4", 14800: "14800",
		-2.5: "-2.5", 100: "100", 0.5: "0.5", 12.0: "12"}
	for x, want := range cases {
		if got := formatNumber(x); got != want {
			t.Errorf("formatNumber(%v) = %q, want %q", x, got, want)
		}
	}
}
