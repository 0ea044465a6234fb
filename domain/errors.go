// Package domain holds wattshelf's entity types, their validation and the
// kinds of error the rest of the program maps to responses. It does no I/O.
package domain

import (
	"errors"
	"fmt"
	"strings"
	"time"
	"unicode"
)

// The kinds of failure a caller can act on. Store and service code wrap
// these with context; the API maps each to one problem type.
var (
	ErrNotFound           = errors.New("not found")
	ErrConflict           = errors.New("conflict")
	ErrPreconditionFailed = errors.New("precondition failed")
	ErrForbidden          = errors.New("forbidden")
	ErrUnauthorized       = errors.New("unauthorized")
	ErrUnavailable        = errors.New("unavailable")
)

// FieldProblem names one bad field of a request body or query by JSON
// pointer (RFC 6901) and says what is wrong with it.
type FieldProblem struct {
	Pointer string `json:"pointer"`
	Detail  string `json:"detail"`
}

// ValidationError carries every problem found in one input, so a client can
// fix them all at once instead of one per round trip.
type ValidationError struct {
	Problems []FieldProblem
}

func (e *ValidationError) Error() string {
	parts := make([]string, 0, len(e.Problems))
	for _, p := range e.Problems {
		parts = append(parts, p.Pointer+": "+p.Detail)
	}
	return "invalid input: " + strings.Join(parts, "; ")
}

// Problems collects field problems while a validator walks an input.
type Problems struct {
	list []FieldProblem
}

// MaxProblems bounds the problems one input reports: plenty to fix a
// document in one round trip, and it keeps a hostile body of a million
// bad elements from becoming a response many times its own size.
const MaxProblems = 100

// Add records a problem at pointer. Past MaxProblems it records once that
// more were found, at the document's root, and then nothing more.
func (p *Problems) Add(pointer, format string, args ...any) {
	switch {
	case len(p.list) < MaxProblems:
		p.list = append(p.list, FieldProblem{Pointer: pointer, Detail: fmt.Sprintf(format, args...)})
	case len(p.list) == MaxProblems:
		p.list = append(p.list, FieldProblem{Pointer: "",
			Detail: fmt.Sprintf("more than %d problems were found; fix these and send it again to see the rest", MaxProblems)})
	}
}

// Len is the number of problems recorded so far.
func (p *Problems) Len() int { return len(p.list) }

// Err returns a *ValidationError holding every recorded problem, or nil.
func (p *Problems) Err() error {
	if len(p.list) == 0 {
		return nil
	}
	return &ValidationError{Problems: p.list}
}

// Limits on free text, so one record cannot bloat every page that lists it.
const (
	MaxNameLen        = 120
	MaxTextLen        = 4000
	MaxShortFieldLen  = 60
	MaxVoltageV       = 1000   // nothing on the shelf is rated above 1 kV
	MaxCurrentA       = 1000   // nor above 1 kA
	MaxSpeedRPM       = 200000 // faster than any salvaged motor spins
	MaxQuantity       = 100000
	MaxTemperatureC   = 300
	MinTemperatureC   = -60
	MaxCellCapacityAh = 1000
)

// CheckText records a problem when s is longer than max runes or, when
// required, empty after trimming.
func (p *Problems) CheckText(pointer, s string, max int, required bool) {
	if required && strings.TrimSpace(s) == "" {
		p.Add(pointer, "is required")
		return
	}
	if n := len([]rune(s)); n > max {
		p.Add(pointer, "is %d characters long; at most %d are allowed", n, max)
	}
	// PostgreSQL text cannot hold a NUL; refusing it here keeps it from
	// reaching the database as a 500.
	if strings.IndexByte(s, 0) >= 0 {
		p.Add(pointer, "must not contain the NUL character (\\u0000)")
	}
}

// CheckVisible records a problem when s, a name or bin shown to people,
// holds a control or format character: a zero-width space or a
// right-to-left override renders as nothing, or turns what follows
// around, and lets one part pass for another on the kiosk.
// Space around it is left to the caller, which trims it.
func (p *Problems) CheckVisible(pointer, s string) {
	if r, bad := invisible(s); bad {
		p.Add(pointer, "must not contain the control or invisible character U+%04X", r)
	}
}

// invisible is the first control or format character of s, space around
// it aside, if it has one.
func invisible(s string) (rune, bool) {
	for _, r := range strings.TrimSpace(s) {
		if r >= ' ' && r <= '~' {
			continue // printable ASCII, nearly every character of an id or name
		}
		if r != 0 && (unicode.IsControl(r) || unicode.Is(unicode.Cf, r)) {
			return r, true
		}
	}
	return 0, false
}

// CheckRange records a problem when v is not finite or outside [min, max].
func (p *Problems) CheckRange(pointer string, v, min, max float64, unit string) {
	if v != v || v > max || v < min { // v != v is NaN
		p.Add(pointer, "must be between %g and %g %s", min, max, unit)
	}
}

// CheckOptionalRange is CheckRange for a field that may be absent.
func (p *Problems) CheckOptionalRange(pointer string, v *float64, min, max float64, unit string) {
	if v != nil {
		p.CheckRange(pointer, *v, min, max, unit)
	}
}

// DecodeError says a body is not well-formed JSON (a syntax error, trailing
// data, or an empty body). Offset is the byte where reading stopped.
type DecodeError struct {
	Offset int64
	Reason string
}

func (e *DecodeError) Error() string {
	if e.Offset > 0 {
		return fmt.Sprintf("malformed JSON at byte %d: %s", e.Offset, e.Reason)
	}
	return "malformed JSON: " + e.Reason
}

// QuotaError says a member has reached one of the per-member quotas. A
// rate quota (RetryAfter > 0) frees up with time; a total does not until
// something is deleted or staff raise it.
type QuotaError struct {
	Quota      string // the setting's name, e.g. "reviews_per_hour"
	Limit      int64
	RetryAfter time.Duration
}

func (e *QuotaError) Error() string {
	if e.RetryAfter > 0 {
		return fmt.Sprintf("quota %s (%d) reached; it frees up in %s", e.Quota, e.Limit, e.RetryAfter.Round(time.Second))
	}
	return fmt.Sprintf("quota %s (%d) reached", e.Quota, e.Limit)
}
