package api

import (
	"errors"
	"fmt"
	"slices"
	"strconv"
	"strings"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
)

// currentVersion reads the version a record is at now; handlers pass one
// so that an If-Match listing several tags can be settled.
type currentVersion func() (int64, error)

// ifMatchVersion reads the condition of If-Match, which writes require,
// and returns the version the store must find: 0 for "*" (any current
// record), else a version the client listed. RFC 9110 section 13.1.1:
// the field is "*" or a list of entity tags, compared strongly, so a weak
// tag never matches, and the condition holds if any listed tag matches.
// current is read only when several tags are listed.
func ifMatchVersion(c echo.Context, current currentVersion) (int64, error) {
	values := c.Request().Header.Values("If-Match")
	if len(values) == 0 || strings.TrimSpace(strings.Join(values, "")) == "" {
		return 0, newProblem("precondition-required", "send If-Match with the ETag from your last GET")
	}
	cond, err := parseIfMatch(strings.Join(values, ","))
	if err != nil {
		return 0, &problemError{kind: "precondition-failed", detail: "If-Match is not \"*\" or a list of entity tags"}
	}
	switch {
	case cond.any:
		return 0, nil
	case len(cond.versions) == 0:
		return 0, &problemError{kind: "precondition-failed",
			detail: "If-Match holds no strong ETag this service issued; weak tags (W/) never match a write"}
	case len(cond.versions) == 1:
		return cond.versions[0], nil
	}
	v, err := current()
	if err != nil {
		return 0, err
	}
	if !slices.Contains(cond.versions, v) {
		return 0, fmt.Errorf("the record is at version %d, which If-Match does not list: %w", v, domain.ErrPreconditionFailed)
	}
	return v, nil
}

// optionalIfMatchVersion is ifMatchVersion for deletes, which honour
// If-Match when sent but do not require it.
func optionalIfMatchVersion(c echo.Context, current currentVersion) (int64, error) {
	if strings.TrimSpace(strings.Join(c.Request().Header.Values("If-Match"), "")) == "" {
		return 0, nil
	}
	return ifMatchVersion(c, current)
}

// ifMatchCondition is a parsed If-Match field.
type ifMatchCondition struct {
	any      bool
	versions []int64 // the strong tags that are versions, as this service writes them
}

// parseIfMatch reads `"*" / #entity-tag` (RFC 9110 sections 8.8.3 and
// 13.1.1). Strong tags that are not one of our versions are kept out of
// versions: they cannot match any record here.
func parseIfMatch(field string) (ifMatchCondition, error) {
	field = strings.Trim(field, " \t")
	if field == "*" {
		return ifMatchCondition{any: true}, nil
	}
	var cond ifMatchCondition
	rest, seen := field, false
	for {
		rest = strings.TrimLeft(rest, " \t,") // empty list elements are allowed (RFC 9110 section 5.6.1)
		if rest == "" {
			break
		}
		weak := strings.HasPrefix(rest, "W/")
		if weak {
			rest = rest[2:]
		}
		if !strings.HasPrefix(rest, `"`) {
			return cond, fmt.Errorf("entity tag without its opening quote in %q", field)
		}
		end := strings.IndexByte(rest[1:], '"')
		if end < 0 {
			return cond, fmt.Errorf("entity tag without its closing quote in %q", field)
		}
		opaque := rest[1 : 1+end]
		rest = strings.TrimLeft(rest[2+end:], " \t")
		if rest != "" && rest[0] != ',' {
			return cond, fmt.Errorf("text after an entity tag in %q", field)
		}
		seen = true
		if weak {
			continue
		}
		if v, err := strconv.ParseInt(opaque, 10, 64); err == nil && v >= 1 && opaque == strconv.FormatInt(v, 10) {
			cond.versions = append(cond.versions, v)
		}
	}
	if !seen {
		return cond, fmt.Errorf("no entity tag in %q", field)
	}
	return cond, nil
}

// changeAttempts bounds how often a change sent with If-Match "*" is
// worked out again after another write got in between its read and its
// save.
const changeAttempts = 5

// changeWithIfMatch is the one shape of a replacement or merge patch of a
// component or a design. read gives the record as it is now and its
// version; save works out the new record from it and stores it, expecting
// the version given, so a write that got in between is never overwritten.
// version is what If-Match asked for: a listed version must be the one
// read, while with "*" (0) the client accepts any, so the change is worked
// out again from the newer record.
func changeWithIfMatch[T any](version int64, read func() (T, int64, error), save func(current T, expect int64) (T, error)) (T, error) {
	for attempt := 1; ; attempt++ {
		current, at, err := read()
		if err != nil {
			return current, err
		}
		if version != 0 && at != version {
			return current, fmt.Errorf("the record is at version %d, not %d: %w", at, version, domain.ErrPreconditionFailed)
		}
		saved, err := save(current, at)
		if version == 0 && errors.Is(err, domain.ErrPreconditionFailed) && attempt < changeAttempts {
			continue
		}
		return saved, err
	}
}
