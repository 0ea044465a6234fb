package review

import (
	"cmp"
	"maps"
	"math"
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

// Fits reports whether c can serve the need: a part of its kind (and
// topology, where the need names one) that the shelf holds at least one
// of, not marked faulty, whose every rating the need bounds is given and
// within the bound. A rating the part does not give cannot be shown to
// suffice, so such a part does not fit.
func (n PartNeed) Fits(c domain.Component) bool {
	if c.Kind != n.Kind || c.Quantity <= 0 || c.Condition == conditionFaulty {
		return false
	}
	if n.Topology != "" && c.Topology != n.Topology {
		return false
	}
	for name, least := range n.AtLeast {
		if v, ok := c.Rating(name); !ok || v < least {
			return false
		}
	}
	for name, most := range n.AtMost {
		if v, ok := c.Rating(name); !ok || v > most {
			return false
		}
	}
	return true
}

// oversize is how far c's ratings overshoot the least the need asks, as
// sums over those ratings of ln(value / least): 0 for a part that meets
// each exactly, and the same for twice the current as for twice the area.
// size sums the ratings that say how big a part is, the currents it
// carries and a wire's area: the part that overshoots least there is the
// best fit, leaving the bigger parts for the builds that need them. rest
// sums the others (a voltage rating), which only break ties: a fuse rated
// for 250 V serves a 12 V feed as well as one rated for 32 V.
func (n PartNeed) oversize(c domain.Component) (size, rest float64) {
	for _, name := range slices.Sorted(maps.Keys(n.AtLeast)) {
		least := n.AtLeast[name]
		v, _ := c.Rating(name)
		if least <= 0 || v <= least {
			continue
		}
		if name == domain.RatingAreaMM2 || strings.HasSuffix(name, "_a") {
			size += math.Log(v / least)
		} else {
			rest += math.Log(v / least)
		}
	}
	return size, rest
}

// conditionRank puts a part known to work before an untested one.
func conditionRank(condition string) int {
	if condition == "working" {
		return 0
	}
	return 1
}

// Rank returns the parts of shelf that fit the need, best fit first: the
// least oversized in current or area, then those known to work before
// untested ones, then the least oversized in other ratings, then by id so
// the order is the same every time.
func (n PartNeed) Rank(shelf []domain.Component) []domain.Component {
	type scored struct {
		c          domain.Component
		size, rest float64
	}
	var fit []scored
	for _, c := range shelf {
		if n.Fits(c) {
			size, rest := n.oversize(c)
			fit = append(fit, scored{c, size, rest})
		}
	}
	slices.SortFunc(fit, func(a, b scored) int {
		return cmp.Or(cmp.Compare(a.size, b.size),
			cmp.Compare(conditionRank(a.c.Condition), conditionRank(b.c.Condition)),
			cmp.Compare(a.rest, b.rest), cmp.Compare(a.c.ID, b.c.ID))
	})
	out := make([]domain.Component, len(fit))
	for i, s := range fit {
		out[i] = s.c
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
// A large design asks for the same part on many feeds, so each distinct
// need is ranked once.
func (r *Report) FillShelf(shelf []domain.Component) {
	ranked := map[string][]ShelfMatch{}
	for i := range r.Checks {
		rems := r.Checks[i].Remedies
		for j := range rems {
			rems[j].Shelf = nil
			if rems[j].Part == nil {
				continue
			}
			key := rems[j].Part.key()
			matches, done := ranked[key]
			if !done {
				for _, c := range rems[j].Part.Rank(shelf) {
					if len(matches) == MaxShelfMatches {
						break
					}
					matches = append(matches, ShelfMatch{ID: c.ID, Name: c.Name, Bin: c.Bin, Quantity: c.Quantity})
				}
				ranked[key] = matches
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
