package api

import (
	"context"
	"errors"
	"fmt"
	"net/http"
	"sync"
	"time"

	"github.com/go-json-experiment/json"
	"github.com/labstack/echo/v4"

	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store"
)

// limitsVersionBits is the size of limits.version, an integer column
// (migration 0001).
const limitsVersionBits = 32

func (s *server) registerLimitsRoutes(v1 *echo.Group) {
	v1.GET("/limits", s.getCurrentLimits, s.requireUser)
	v1.GET("/limits/:version", s.getLimitsVersion, s.requireUser)
	v1.PUT("/limits", s.putLimits, s.requireStaff)
}

// LimitsInput is what staff send to replace the limits: the whole set and
// a note saying why.
type LimitsInput struct {
	Limits *review.Limits `json:"limits"`
	Note   string         `json:"note"`
}

func (s *server) getCurrentLimits(c echo.Context) error {
	l, err := s.store.CurrentLimits(c.Request().Context())
	if err != nil {
		return err
	}
	return jsonWithETag(c, http.StatusOK, int64(l.Version), l)
}

func (s *server) getLimitsVersion(c echo.Context) error {
	v, err := pathNumber(c, "version", limitsVersionBits)
	if err != nil {
		return err
	}
	l, err := s.store.Limits(c.Request().Context(), int(v))
	if err != nil {
		return err
	}
	return jsonWithETag(c, http.StatusOK, int64(l.Version), l)
}

// putLimits stores a new limits version. If-Match must name the version
// the change was made from, so one staff member cannot unknowingly undo
// another's change.
// check says what is wrong with a limits change: the whole set is
// required and must pass Validate, and the note is text.
func (in LimitsInput) check() error {
	if in.Limits == nil {
		return &domain.ValidationError{Problems: []domain.FieldProblem{{Pointer: "/limits", Detail: "is required: send the whole limits set"}}}
	}
	var p domain.Problems
	p.CheckText("/note", in.Note, domain.MaxTextLen, false)
	if err := p.Err(); err != nil {
		return err
	}
	if err := in.Limits.Validate(); err != nil {
		return underPointer("/limits", err)
	}
	return nil
}

func (s *server) putLimits(c echo.Context) error {
	expect, err := ifMatchVersion(c, func() (int64, error) {
		v, err := s.store.CurrentLimitsVersion(c.Request().Context())
		return int64(v), err
	})
	if err != nil {
		return err
	}
	var in LimitsInput
	if err := bindStrict(c, &in); err != nil {
		return err
	}
	if err := in.check(); err != nil {
		return err
	}
	if err := s.citeEdits(c, in.Limits, int(expect)); err != nil {
		return err
	}
	body, err := encodeJSON(in.Limits)
	if err != nil {
		return fmt.Errorf("encode limits: %w", err)
	}
	l, err := s.store.PutLimits(c.Request().Context(), currentUser(c), int(expect), body, in.Note)
	if err != nil {
		return err
	}
	s.limits.remember(l.Version, *in.Limits)
	c.Response().Header().Set("Location", fmt.Sprintf("/v1/limits/%d", l.Version))
	return jsonWithETag(c, http.StatusCreated, int64(l.Version), l)
}

// citeEdits makes the new limits cite, for every value staff changed
// from version from without a source of their own, their change and the
// published rule it departs from (review.Limits.MarkEdits).
func (s *server) citeEdits(c echo.Context, l *review.Limits, from int) error {
	if from == 0 {
		return nil
	}
	previous, _, err := s.limits.get(c.Request().Context(), from)
	if err != nil {
		return fmt.Errorf("read limits v%d: %w", from, err)
	}
	l.MarkEdits(previous.Limits(), currentUser(c).Name, time.Now())
	return nil
}

// underPointer moves a validation error's pointers under prefix, so they
// point into the request body rather than into the part validated.
func underPointer(prefix string, err error) error {
	var ve *domain.ValidationError
	if !errors.As(err, &ve) {
		return err
	}
	moved := make([]domain.FieldProblem, len(ve.Problems))
	for i, p := range ve.Problems {
		moved[i] = domain.FieldProblem{Pointer: prefix + p.Pointer, Detail: p.Detail}
	}
	return &domain.ValidationError{Problems: moved}
}

// limitsStore is what the limits cache reads.
type limitsStore interface {
	CurrentLimitsVersion(ctx context.Context) (int, error)
	Limits(ctx context.Context, version int) (store.LimitsSet, error)
}

// currentLimitsTTL bounds how long another replica's new limits version
// can go unnoticed here; a PUT to this replica is seen at once.
const currentLimitsTTL = 10 * time.Second

// limitsCache keeps limits versions decoded, validated and prepared for
// reviews, and the number of the current one, so a review normally costs
// no query and no validation for its limits. A version never changes once
// stored, so cached versions never go stale; only which version is current
// does, and that is re-read after currentLimitsTTL.
type limitsCache struct {
	store limitsStore
	now   func() time.Time

	mu        sync.Mutex
	versions  map[int]*review.Rules
	current   int
	checkedAt time.Time
}

func newLimitsCache(st limitsStore, now func() time.Time) *limitsCache {
	return &limitsCache{store: st, now: now, versions: map[int]*review.Rules{}}
}

// get returns the rules of limits version v, or of the current version
// when v is 0, with the version number used.
func (lc *limitsCache) get(ctx context.Context, v int) (*review.Rules, int, error) {
	if v == 0 {
		var err error
		if v, err = lc.currentVersion(ctx); err != nil {
			return nil, 0, err
		}
	}
	lc.mu.Lock()
	rules, ok := lc.versions[v]
	lc.mu.Unlock()
	if ok {
		return rules, v, nil
	}
	set, err := lc.store.Limits(ctx, v)
	if err != nil {
		return nil, 0, err
	}
	// Stored versions passed validation when written; fields added since
	// then simply stay at their zero value, and Prepare says whether the
	// set still makes sense.
	var l review.Limits
	if err := json.Unmarshal(set.Body, &l); err != nil {
		return nil, 0, fmt.Errorf("decode limits v%d: %w", v, err)
	}
	if rules, err = review.Prepare(l, v); err != nil {
		return nil, 0, err
	}
	lc.mu.Lock()
	lc.versions[v] = rules
	lc.mu.Unlock()
	return rules, v, nil
}

func (lc *limitsCache) currentVersion(ctx context.Context) (int, error) {
	lc.mu.Lock()
	cur, fresh := lc.current, lc.now().Sub(lc.checkedAt) < currentLimitsTTL
	lc.mu.Unlock()
	if cur != 0 && fresh {
		return cur, nil
	}
	v, err := lc.store.CurrentLimitsVersion(ctx)
	if errors.Is(err, domain.ErrNotFound) {
		// serve stores the defaults as it starts; a read never writes.
		return 0, &problemError{kind: "unavailable", retry: 5,
			detail: "no limits are stored yet; the service stores its defaults when serve starts or migrate up runs"}
	}
	if err != nil {
		return 0, fmt.Errorf("read current limits version: %w", err)
	}
	lc.mu.Lock()
	// Versions only grow; a PUT here may have raised current meanwhile.
	lc.current, lc.checkedAt = max(lc.current, v), lc.now()
	v = lc.current
	lc.mu.Unlock()
	return v, nil
}

// remember records a version just stored here as the current one. Limits
// that fail Prepare (they passed Validate before being stored, so only a
// bug gets here) are left for get to report.
func (lc *limitsCache) remember(v int, l review.Limits) {
	rules, err := review.Prepare(l, v)
	lc.mu.Lock()
	defer lc.mu.Unlock()
	if err == nil {
		lc.versions[v] = rules
	}
	if v > lc.current {
		lc.current, lc.checkedAt = v, lc.now()
	}
}
