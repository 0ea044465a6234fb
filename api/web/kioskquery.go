package web

import (
	"encoding/base64"
	"encoding/json"
	"net/url"
	"strconv"
	"time"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

// Kiosk options a request may set, each within bounds. Tests ask for
// short intervals so they need not wait on the clock; nobody can make a
// screen ask the server more often than once a second.
const (
	defaultRefresh = 15 * time.Second // an ordinary kiosk checks for changes
	minRefresh     = time.Second
	maxRefresh     = 30 * time.Second
	defaultEvery   = 12 * time.Second // a wall screen turns its page
	maxEvery       = 10 * time.Minute
	defaultIdle    = 60 * time.Second // after a touch, before paging resumes
	maxIdle        = time.Hour

	// A page holds this many parts unless ?limit= says otherwise. A wall
	// screen's first page carries more than any screen shows (about 15 at
	// 1920×1080, 18 at 1080×1920), then asks for what its screen holds.
	defaultPageParts = 24
	defaultWallParts = 40
	maxPageParts     = 100
)

// kioskOptions are the page's timings, in milliseconds for its script,
// and how many parts a page holds.
type kioskOptions struct {
	RefreshMS, EveryMS, IdleMS int64
	Limit                      int
}

// kioskParams are the query parameters the kiosk knows; the links it
// makes carry these and nothing else.
var kioskParams = []string{"q", "kind", "bin", "after", "wall", "limit", "every_s", "idle_s", "refresh_s"}

// kioskQuery is what a request for the kiosk asks for.
type kioskQuery struct {
	filter  store.ShelfFilter
	wall    bool
	options kioskOptions
	after   *store.ShelfCursor
	offset  int // parts before this page in the filtered shelf
	values  url.Values
}

// parseKioskQuery reads the kiosk's parameters. A page is for people, so
// a value out of bounds is brought within them, and a place it cannot
// read starts from the beginning, rather than answering with an error.
func parseKioskQuery(raw url.Values, wallByDefault bool) kioskQuery {
	q := kioskQuery{values: url.Values{}, wall: wallByDefault}
	for _, name := range kioskParams {
		if v := raw.Get(name); v != "" {
			q.values.Set(name, v)
		}
	}
	q.filter = store.ShelfFilter{
		Query: limitText(q.values.Get("q"), domain.MaxNameLen),
		Kind:  limitText(q.values.Get("kind"), domain.MaxShortFieldLen),
		Bin:   limitText(q.values.Get("bin"), domain.MaxShortFieldLen),
	}
	switch q.values.Get("wall") {
	case "1", "true", "yes":
		q.wall = true
	case "0", "false", "no":
		q.wall = false
	}
	q.options = kioskOptions{
		RefreshMS: seconds(q.values.Get("refresh_s"), defaultRefresh, minRefresh, maxRefresh).Milliseconds(),
		EveryMS:   seconds(q.values.Get("every_s"), defaultEvery, time.Second, maxEvery).Milliseconds(),
		IdleMS:    seconds(q.values.Get("idle_s"), defaultIdle, time.Second, maxIdle).Milliseconds(),
		Limit:     defaultPageParts,
	}
	if q.wall {
		q.options.Limit = defaultWallParts
	}
	if n, err := strconv.Atoi(q.values.Get("limit")); err == nil {
		q.options.Limit = min(max(n, 1), maxPageParts)
	}
	if place, ok := decodeShelfPlace(q.values.Get("after")); ok {
		q.after = &store.ShelfCursor{Bin: place.Bin, Name: place.Name, ID: place.ID}
		q.offset = place.Offset
	} else {
		q.values.Del("after")
	}
	return q
}

func seconds(param string, fallback, lo, hi time.Duration) time.Duration {
	s, err := strconv.Atoi(param)
	if err != nil {
		return fallback
	}
	return min(max(time.Duration(s)*time.Second, lo), hi)
}

// with is the kiosk's address with this request's parameters as change
// leaves them.
func (q kioskQuery) with(change func(url.Values)) string {
	v := url.Values{}
	for name, vals := range q.values {
		v[name] = append([]string(nil), vals...)
	}
	change(v)
	if len(v) == 0 {
		return "/shelf"
	}
	return "/shelf?" + v.Encode()
}

// kept are the parameters a search sent from the page's form carries on:
// everything but the form's own fields and the place in the shelf.
func (q kioskQuery) kept() []keptParam {
	var out []keptParam
	for _, name := range kioskParams {
		switch name {
		case "q", "kind", "after":
			continue
		}
		if v := q.values.Get(name); v != "" {
			out = append(out, keptParam{name, v})
		}
	}
	return out
}

// shelfPlace is a place in the filtered shelf: the part a page ends with,
// and how many parts precede the next, so a page can say where it is
// without counting again.
type shelfPlace struct {
	Bin    string `json:"b"`
	Name   string `json:"n"`
	ID     int64  `json:"i"`
	Offset int    `json:"o"`
}

func (p shelfPlace) encode() string {
	raw, _ := json.Marshal(p) // two strings and two numbers always encode
	return base64.RawURLEncoding.EncodeToString(raw)
}

func decodeShelfPlace(s string) (shelfPlace, bool) {
	var p shelfPlace
	raw, err := base64.RawURLEncoding.DecodeString(s)
	if err != nil || json.Unmarshal(raw, &p) != nil || p.ID < 1 || p.Offset < 0 {
		return shelfPlace{}, false
	}
	return p, true
}
