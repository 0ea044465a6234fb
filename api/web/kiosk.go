package web

import (
	"net/http"
	"net/url"
	"strconv"
	"strings"
	"time"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

// kioskPage is one page of the shelf as the kiosk shows it: the parts that
// match the filter from a place in shelf order on, never the whole shelf.
// In wall mode the page fills the screen it is on and its script pages
// through the shelf by itself.
type kioskPage struct {
	Filter store.ShelfFilter
	Wall   bool
	Kinds  []kindChoice
	// KindTotal counts every part the query and bin let through, of any
	// kind; Total those the kind lets through as well.
	KindTotal int
	Total     int
	// First is the position of the first card in the filtered shelf,
	// from 1; Last that of the last card, 0 with no card.
	First, Last int
	Cards       []shelfCard
	// FirstURL and NextURL lead to the start and to the next page; empty
	// when this page is the start, or the end.
	FirstURL, NextURL string
	// AllBinsURL is the same search in every bin, when a bin is chosen.
	AllBinsURL string
	Options    kioskOptions
	// Hidden form fields that keep the options when a search is sent.
	Keep []keptParam
	// StaffNotice is shown to the staff when the screen cannot do its job
	// as set up, such as QR codes that no phone can open.
	StaffNotice string
}

type kindChoice struct {
	Name     string
	Count    int
	Selected bool
}

type keptParam struct{ Name, Value string }

// shelfCard is one component on the kiosk.
type shelfCard struct {
	ID          int64
	Name        string
	Kind        string
	Description string
	Origin      string
	Bin         string
	BinURL      string
	Mains       bool
	Quantity    int
	Condition   string
	SpecSource  string
	Specs       []specLine
	Page        string
	QR          string
	// Rev changes whenever the card's content does, so a refresh keeps
	// unchanged cards; After is the place just past this card, so a wall
	// screen that shows up to here asks for the page after it.
	Rev   string
	After string
}

type specLine struct {
	Label string
	Value string
}

const noBin = "No bin recorded"

func kioskView(items []domain.ShelfItem, more bool, counts map[string]int, q kioskQuery) kioskPage {
	page := kioskPage{Filter: q.filter, Wall: q.wall, Options: q.options, First: q.offset + 1, Keep: q.kept()}
	for _, n := range counts {
		page.KindTotal += n
	}
	page.Total = page.KindTotal
	if q.filter.Kind != "" {
		page.Total = counts[q.filter.Kind]
	}
	for _, k := range domain.ComponentKinds() {
		if counts[k] > 0 || k == q.filter.Kind {
			page.Kinds = append(page.Kinds, kindChoice{Name: k, Count: counts[k], Selected: k == q.filter.Kind})
		}
	}
	for i, it := range items {
		card := shelfCardOf(it)
		if strings.TrimSpace(it.Bin) != "" {
			card.BinURL = q.with(func(v url.Values) { v.Set("bin", it.Bin); v.Del("after") })
		}
		card.After = shelfPlace{Bin: it.Bin, Name: it.Name, ID: it.ID, Offset: q.offset + i + 1}.encode()
		page.Cards = append(page.Cards, card)
	}
	if len(items) > 0 {
		page.Last = q.offset + len(items)
	}
	if q.offset > 0 {
		page.FirstURL = q.with(func(v url.Values) { v.Del("after") })
	}
	if more && len(page.Cards) > 0 {
		next := page.Cards[len(page.Cards)-1].After
		page.NextURL = q.with(func(v url.Values) { v.Set("after", next) })
	}
	if q.filter.Bin != "" {
		page.AllBinsURL = q.with(func(v url.Values) { v.Del("bin"); v.Del("after") })
	}
	return page
}

func shelfCardOf(it domain.ShelfItem) shelfCard {
	id := strconv.FormatInt(it.ID, 10)
	c := shelfCard{
		ID: it.ID, Name: it.Name, Kind: it.Kind, Description: it.Description, Origin: it.Origin,
		Bin: it.Bin, Mains: it.MainsOrigin, Quantity: it.Quantity, Condition: it.Condition,
		SpecSource: specSourceLabel(it.SpecSource), Specs: specLines(it.Kind, it.Electrical),
		Page: "/shelf/" + id, QR: "/shelf/" + id + "/qr.svg",
		Rev: id + "-" + strconv.FormatInt(it.UpdatedAt.UnixNano(), 36),
	}
	if strings.TrimSpace(c.Bin) == "" {
		c.Bin = noBin
	}
	return c
}

func specSourceLabel(s string) string {
	switch s {
	case "datasheet":
		return "Figures from the datasheet"
	case "measured":
		return "Figures measured on the bench"
	}
	return "Figures are estimates"
}

// specLines says what a part runs on and draws, in the words of its kind.
func specLines(kind string, e domain.Electrical) []specLine {
	var out []specLine
	add := func(label string, parts ...string) {
		var kept []string
		for _, p := range parts {
			if p != "" {
				kept = append(kept, p)
			}
		}
		if len(kept) > 0 {
			out = append(out, specLine{label, strings.Join(kept, " · ")})
		}
	}
	add("Runs on", window(e.MinV, e.MaxV, "V"), labelled("nominal", e.NominalV, "V"), labelled("rated", e.RatedV, "V"))
	switch kind {
	case "motor":
		add("Draws", labelled("no load", e.NoLoadA, "A"), labelled("running", e.RunningA, "A"),
			labelled("stall", e.StallA, "A"), labelled("", e.NoLoadRPM, "rpm unloaded"))
	case "regulator", "driver":
		add("Input", window(e.MinInputV, e.MaxInputV, "V"), labelled("dropout", e.DropoutV, "V"))
		add("Output", labelled("", e.OutputV, "V"), labelled("up to", e.MaxOutputA, "A"),
			labelled("continuous", e.ContinuousA, "A"), labelled("peak", e.PeakA, "A"), e.Topology)
	case "battery":
		cells := ""
		if e.Series != nil {
			p := 1
			if e.Parallel != nil {
				p = *e.Parallel
			}
			cells = strconv.Itoa(*e.Series) + "S" + strconv.Itoa(p) + "P"
		}
		add("Pack", e.Chemistry, cells, labelled("", e.CellCapacityMAh, "mAh per cell"),
			labelled("up to", e.MaxDischargeA, "A"))
	case "connector", "fuse", "wire", "switch":
		add("Rated", labelled("", e.RatingA, "A"), labelled("", e.RatingV, "V"), e.Gauge)
	}
	if kind != "motor" && kind != "regulator" && kind != "driver" {
		add("Draws", labelled("running", e.CurrentA, "A"), labelled("peak", e.PeakA, "A"))
	}
	return out
}

func labelled(label string, v *float64, unit string) string {
	if v == nil {
		return ""
	}
	s := formatNumber(*v) + " " + unit
	if label != "" {
		s = label + " " + s
	}
	return s
}

func window(lo, hi *float64, unit string) string {
	switch {
	case lo != nil && hi != nil:
		return formatNumber(*lo) + "–" + formatNumber(*hi) + " " + unit
	case lo != nil:
		return "from " + formatNumber(*lo) + " " + unit
	case hi != nil:
		return "up to " + formatNumber(*hi) + " " + unit
	}
	return ""
}

// componentPage is one component's public page.
type componentPage struct {
	Card    shelfCard
	Bin     string
	Address string
	Updated time.Time
}

func componentView(it domain.ShelfItem, address string) componentPage {
	bin := it.Bin
	if strings.TrimSpace(bin) == "" {
		bin = noBin
	}
	return componentPage{Card: shelfCardOf(it), Bin: bin, Address: address, Updated: it.UpdatedAt}
}

func (p *pages) asset(c echo.Context) error {
	a, ok := p.views.assets[c.Param("name")]
	if !ok {
		return p.notFound(c, "No such file.")
	}
	h := c.Response().Header()
	h.Set("ETag", a.etag)
	h.Set("Cache-Control", "no-cache")
	if strings.Contains(c.Request().Header.Get("If-None-Match"), a.etag) {
		return c.NoContent(http.StatusNotModified)
	}
	return c.Blob(http.StatusOK, a.contentType, a.body)
}
