package web

import (
	"net/http"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
)

// kioskPage is the wall screen: the shelf grouped by bin, with the
// search and kind filter applied by hiding what does not match, so the
// page's script can change the filter without asking the server again.
type kioskPage struct {
	Query     string
	Kind      string
	RefreshMS int64
	Kinds     []kindChoice
	Bins      []binGroup
	Total     int
	Shown     int
}

type kindChoice struct {
	Name     string
	Count    int
	Selected bool
}

type binGroup struct {
	Name   string
	Cards  []shelfCard
	Hidden bool
}

// shelfCard is one component on the kiosk.
type shelfCard struct {
	ID          int64
	Name        string
	Kind        string
	Description string
	Origin      string
	Mains       bool
	Quantity    int
	Condition   string
	SpecSource  string
	Specs       []specLine
	Page        string
	QR          string
	// Search is the lower-case text the filter matches; Rev changes
	// whenever the card's content does, so a refresh keeps unchanged cards.
	Search string
	Rev    string
	Hidden bool
}

type specLine struct {
	Label string
	Value string
}

const noBin = "No bin recorded"

func kioskView(items []domain.ShelfItem, f shelfFilter, refresh time.Duration) kioskPage {
	page := kioskPage{Query: f.Query, Kind: f.Kind, RefreshMS: refresh.Milliseconds(), Total: len(items)}
	kinds := map[string]int{}
	byBin := map[string]int{}
	for _, it := range items {
		kinds[it.Kind]++
		card := shelfCardOf(it)
		card.Hidden = !matches(card, f)
		if !card.Hidden {
			page.Shown++
		}
		bin := it.Bin
		if strings.TrimSpace(bin) == "" {
			bin = noBin
		}
		i, ok := byBin[bin]
		if !ok {
			i = len(page.Bins)
			byBin[bin] = i
			page.Bins = append(page.Bins, binGroup{Name: bin})
		}
		page.Bins[i].Cards = append(page.Bins[i].Cards, card)
	}
	slices.SortStableFunc(page.Bins, func(a, b binGroup) int { return strings.Compare(a.Name, b.Name) })
	for i := range page.Bins {
		page.Bins[i].Hidden = !slices.ContainsFunc(page.Bins[i].Cards, func(c shelfCard) bool { return !c.Hidden })
	}
	for _, k := range domain.ComponentKinds() {
		if kinds[k] > 0 || k == f.Kind {
			page.Kinds = append(page.Kinds, kindChoice{Name: k, Count: kinds[k], Selected: k == f.Kind})
		}
	}
	return page
}

// matches is the same test the kiosk's script applies: every word of the
// query appears in the card's text, and the kind is the one chosen.
func matches(c shelfCard, f shelfFilter) bool {
	if f.Kind != "" && c.Kind != f.Kind {
		return false
	}
	for _, word := range strings.Fields(strings.ToLower(f.Query)) {
		if !strings.Contains(c.Search, word) {
			return false
		}
	}
	return true
}

func shelfCardOf(it domain.ShelfItem) shelfCard {
	id := strconv.FormatInt(it.ID, 10)
	c := shelfCard{
		ID: it.ID, Name: it.Name, Kind: it.Kind, Description: it.Description, Origin: it.Origin,
		Mains: it.MainsOrigin, Quantity: it.Quantity, Condition: it.Condition,
		SpecSource: specSourceLabel(it.SpecSource), Specs: specLines(it.Kind, it.Electrical),
		Page: "/shelf/" + id, QR: "/shelf/" + id + "/qr.svg",
		Rev: id + "-" + strconv.FormatInt(it.UpdatedAt.UnixNano(), 36),
	}
	c.Search = strings.ToLower(strings.Join([]string{it.Name, it.Kind, it.Bin, it.Description, it.Origin}, " "))
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
