package review

import (
	"cmp"
	"maps"
	"slices"
	"strconv"
	"strings"

	"wattshelf/domain"
)

// MaxShelfMatches bounds the shelf parts listed under one remedy: the
// best few are what a member walks to the bins for.
const MaxShelfMatches = 5

// conditionFaulty marks a shelf part known not to work.
const conditionFaulty = "faulty"

// ratedPart is a shelf part with the ratings looked up so far, by their
// number in a ratingNames: reading a rating by its name goes through the
// fields' declaration, and a large report asks the same parts for the
// same few ratings again and again.
type ratedPart struct {
	c    *domain.Component
	vals []ratedValue
}

type ratedValue struct {
	v          float64
	looked, ok bool
}

func (p *ratedPart) rating(i int, name string) (float64, bool) {
	if i >= len(p.vals) {
		p.vals = append(p.vals, make([]ratedValue, i+1-len(p.vals))...)
	}
	r := &p.vals[i]
	if !r.looked {
		r.v, r.ok = p.c.Rating(name)
		r.looked = true
	}
	return r.v, r.ok
}

// ratingNames numbers the rating names the needs of one match ask for.
type ratingNames map[string]int

func (rn ratingNames) number(name string) int {
	i, ok := rn[name]
	if !ok {
		i = len(rn)
		rn[name] = i
	}
	return i
}

// Fits reports whether c can serve the need: a part of its kind (and
// topology, where the need names one) that the shelf holds at least one
// of, not marked faulty, whose every rating the need bounds is given and
// within the bound. A rating the part does not give cannot be shown to
// suffice, so such a part does not fit.
func (n PartNeed) Fits(c domain.Component) bool {
	return n.matcher(ratingNames{}).fits(&ratedPart{c: &c})
}

// bound is one of a need's bounds on a rating: the least (or, with most,
// the most) it may be. size marks a rating that says how big a part is:
// a current it carries, or a wire's area.
type bound struct {
	name       string
	i          int // its number in the match's ratingNames
	v          float64
	most, size bool
}

// matcher is a need with its bounds in a list, for matching it against
// many parts.
type matcher struct {
	kind, topology string
	bounds         []bound
}

func (n PartNeed) matcher(names ratingNames) matcher {
	m := matcher{kind: n.Kind, topology: n.Topology}
	for _, name := range slices.Sorted(maps.Keys(n.AtLeast)) {
		m.bounds = append(m.bounds, bound{name: name, i: names.number(name), v: n.AtLeast[name],
			size: name == domain.RatingAreaMM2 || strings.HasSuffix(name, "_a")})
	}
	for _, name := range slices.Sorted(maps.Keys(n.AtMost)) {
		m.bounds = append(m.bounds, bound{name: name, i: names.number(name), v: n.AtMost[name], most: true})
	}
	return m
}

func (m matcher) fits(p *ratedPart) bool {
	c := p.c
	if c.Kind != m.kind || c.Quantity <= 0 || c.Condition == conditionFaulty {
		return false
	}
	if m.topology != "" && c.Topology != m.topology {
		return false
	}
	for _, b := range m.bounds {
		v, ok := p.rating(b.i, b.name)
		if !ok || (!b.most && v < b.v) || (b.most && v > b.v) {
			return false
		}
	}
	return true
}

// fitted is a part that fits a need, with how far it overshoots it.
type fitted struct {
	p          *ratedPart
	size, rest float64
}

// oversize is how far a part's ratings overshoot the least the need asks,
// as products over those ratings of value / least: 1 for a part that
// meets each exactly, and the same for twice the current as for twice the
// area. size is over the ratings that say how big a part is, the currents
// it carries and a wire's area: the part that overshoots least there is
// the best fit, leaving the bigger parts for the builds that need them.
// rest is over the others (a voltage rating), which only break ties: a
// fuse rated for 250 V serves a 12 V feed as well as one rated for 32 V.
func (m matcher) oversize(p *ratedPart) fitted {
	f := fitted{p: p, size: 1, rest: 1}
	for _, b := range m.bounds {
		v, _ := p.rating(b.i, b.name)
		if b.most || b.v <= 0 || v <= b.v {
			continue
		}
		if b.size {
			f.size *= v / b.v
		} else {
			f.rest *= v / b.v
		}
	}
	return f
}

// conditionRank puts a part known to work before an untested one.
func conditionRank(condition string) int {
	if condition == "working" {
		return 0
	}
	return 1
}

// better orders fits best first: the least oversized in current or area,
// then those known to work before untested ones, then the least
// oversized in other ratings, then by id so the order is the same every
// time.
func better(a, b fitted) int {
	return cmp.Or(cmp.Compare(a.size, b.size),
		cmp.Compare(conditionRank(a.p.c.Condition), conditionRank(b.p.c.Condition)),
		cmp.Compare(a.rest, b.rest), cmp.Compare(a.p.c.ID, b.p.c.ID))
}

// best returns up to limit of the parts that fit the need, best first (a
// limit below 1: all of them).
func (n PartNeed) best(parts []*ratedPart, names ratingNames, limit int) []fitted {
	m := n.matcher(names)
	var top []fitted
	for _, p := range parts {
		if !m.fits(p) {
			continue
		}
		f := m.oversize(p)
		if limit > 0 && len(top) == limit {
			if better(f, top[limit-1]) >= 0 {
				continue
			}
			top = top[:limit-1]
		}
		i, _ := slices.BinarySearchFunc(top, f, better)
		top = slices.Insert(top, i, f)
	}
	return top
}

// Rank returns the parts of shelf that fit the need, best fit first (see
// better).
func (n PartNeed) Rank(shelf []domain.Component) []domain.Component {
	parts := make([]*ratedPart, len(shelf))
	for i := range shelf {
		parts[i] = &ratedPart{c: &shelf[i]}
	}
	var out []domain.Component
	for _, f := range n.best(parts, ratingNames{}, 0) {
		out = append(out, *f.p.c)
	}
	return out
}

// PartKinds returns the kinds of part the report's remedies call for,
// each once, in order: what to read from the shelf to fill them.
func (r Report) PartKinds() []string {
	var kinds []string
	for _, c := range r.Checks {
		for _, rem := range c.Remedies {
			if rem.Part != nil {
				kinds = append(kinds, rem.Part.Kind)
			}
		}
	}
	slices.Sort(kinds)
	return slices.Compact(kinds)
}

// FillShelf lists under each remedy that calls for a part the parts of
// shelf that fit it, best first, at most MaxShelfMatches; a remedy that
// no part fits lists none. Shelf is replaced, so a stored report can be
// filled again from today's shelf.
//
// A large design asks for the same part on many feeds, so each distinct
// need is matched once, against the parts of its kind alone.
func (r *Report) FillShelf(shelf []domain.Component) {
	byKind := map[string][]*ratedPart{}
	for i := range shelf {
		c := &shelf[i]
		byKind[c.Kind] = append(byKind[c.Kind], &ratedPart{c: c})
	}
	matched, names := map[string][]ShelfMatch{}, ratingNames{}
	for i := range r.Checks {
		rems := r.Checks[i].Remedies
		for j := range rems {
			rems[j].Shelf = nil
			need := rems[j].Part
			if need == nil {
				continue
			}
			key := need.key()
			matches, done := matched[key]
			if !done {
				for _, f := range need.best(byKind[need.Kind], names, MaxShelfMatches) {
					c := f.p.c
					matches = append(matches, ShelfMatch{ID: c.ID, Name: c.Name, Bin: c.Bin, Quantity: c.Quantity})
				}
				matched[key] = matches
			}
			rems[j].Shelf = slices.Clone(matches)
		}
	}
}

// key tells needs apart: two needs with the same key fit the same parts.
func (n PartNeed) key() string {
	var b strings.Builder
	b.WriteString(n.Kind + "/" + n.Topology)
	for _, bound := range []struct {
		sign string
		m    map[string]float64
	}{{">=", n.AtLeast}, {"<=", n.AtMost}} {
		for _, name := range slices.Sorted(maps.Keys(bound.m)) {
			b.WriteString(" " + name + bound.sign + strconv.FormatFloat(bound.m[name], 'g', -1, 64))
		}
	}
	return b.String()
}
