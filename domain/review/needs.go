package review

import (
	"errors"
	"slices"
	"strconv"
	"strings"

	"wattshelf/domain"
)

// limitsNeed is what a check added after the first limits sets needs from
// a limits set. A set stored before the check existed lacks it: a review
// under that set does not run the check and says so in a caution, and
// PUT /v1/limits refuses a set without it.
type limitsNeed struct {
	check string
	// missing lists the JSON pointers of the values l lacks, nil when it
	// has them all.
	missing func(l *Limits) []string
	// fill gives l what it lacks from defaults, keeping every value staff
	// set. Rows the defaults do not have (a staff-added family) get a
	// cautious value named in their source, so the filled set validates.
	fill func(l *Limits, defaults *Limits)
}

// limitsNeeds are the needs of every check that older limits sets cannot
// run, each family of checks declaring its own.
func limitsNeeds() []limitsNeed {
	return slices.Concat(faultNeeds(), partHazardNeeds())
}

// missing lists every value a newer check needs that l leaves out.
func (l *Limits) missing() []string {
	var out []string
	for _, n := range limitsNeeds() {
		out = append(out, n.missing(l)...)
	}
	return out
}

// WithNewDefaults is l with every value a newer check needs filled from
// the defaults (staff values kept), and the checks whose values l itself
// lacked: a review under l does not run those, and serve and migrate up
// store the filled set as a new version. l itself is left as it is, and
// comes back unchanged when it lacks nothing.
func (l Limits) WithNewDefaults() (filled Limits, notRun []string) {
	for _, n := range limitsNeeds() {
		if len(n.missing(&l)) > 0 && !slices.Contains(notRun, n.check) {
			notRun = append(notRun, n.check)
		}
	}
	if len(notRun) == 0 {
		return l, nil
	}
	filled = l.clone()
	defaults := DefaultLimits()
	for _, n := range limitsNeeds() {
		if slices.Contains(notRun, n.check) {
			n.fill(&filled, &defaults)
		}
	}
	return filled, notRun
}

// clone copies l with its own tables, so a fill, which sets fields of
// table rows, leaves l untouched. (A row's own slices and maps are
// shared: fills do not change them.)
func (l Limits) clone() Limits {
	c := l
	c.Conductors.Rows = slices.Clone(l.Conductors.Rows)
	c.Conductors.Bundling = slices.Clone(l.Conductors.Bundling)
	c.Fuses.Families = slices.Clone(l.Fuses.Families)
	c.Chemistries = slices.Clone(l.Chemistries)
	c.Connectors = slices.Clone(l.Connectors)
	return c
}

// notRunCaution names the checks a review skipped because its limits
// predate them.
func notRunCaution(notRun []string, version int) string {
	return "Limits v" + strconv.Itoa(version) + " were written before these checks, so this review did not run them: " +
		strings.Join(notRun, ", ") + ". They are not passes. Review again under the current limits."
}

// addProblems records every problem of a validation error in p.
func addProblems(p *domain.Problems, err error) {
	var ve *domain.ValidationError
	if errors.As(err, &ve) {
		for _, fp := range ve.Problems {
			p.Add(fp.Pointer, "%s", fp.Detail)
		}
		return
	}
	if err != nil {
		p.Add("", "%v", err)
	}
}
