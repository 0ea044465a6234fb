package api

import (
	"context"
	"errors"
	"fmt"
	"math"
	"net/http"
	"strconv"
	"time"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store"
)

const (
	defaultReviewPageSize = 20
	maxReviewPageSize     = 100
)

// StoredReviewView is a stored review as the API returns it: the record
// and the address of its printable report.
type StoredReviewView struct {
	store.StoredReview
	ReportURL string `json:"report_url"`
}

// ReviewPage is one page of a design's reviews, newest first.
type ReviewPage struct {
	Items []StoredReviewView `json:"items"`
	Next  string             `json:"next,omitempty"`
}

// limitsVersionParam reads ?limits_version=N; 0 means the current one.
func limitsVersionParam(c echo.Context) (int, error) {
	v := c.QueryParam("limits_version")
	if v == "" {
		return 0, nil
	}
	n, err := strconv.ParseInt(v, 10, limitsVersionBits)
	if err != nil || n < 1 {
		return 0, queryProblem("/limits_version", "must be a limits version number from 1 to %d", math.MaxInt32)
	}
	return int(n), nil
}

// review decodes, validates and reviews a document against limits
// version v (0: the current one).
func (s *server) review(ctx context.Context, document []byte, v int) (review.Report, error) {
	doc, err := domain.DecodeDesign(document)
	if err != nil {
		return review.Report{}, err
	}
	rules, _, err := s.limits.get(ctx, v)
	if errors.Is(err, domain.ErrNotFound) {
		return review.Report{}, queryProblem("/limits_version", "no limits version %d is stored; GET /v1/limits for the current one", v)
	}
	if err != nil {
		return review.Report{}, err
	}
	valid, err := doc.Validated()
	if err != nil {
		return review.Report{}, err
	}
	components, err := s.store.ComponentsByID(ctx, doc.ComponentIDs())
	if err != nil {
		return review.Report{}, err
	}
	return rules.Review(valid, components)
}

// reviewDocument reviews the document sent as the body and stores
// nothing. It needs no token, so anonymous clients are rate-limited by
// address. A token holder is not: the token names who is calling and can
// be revoked, and scripts reviewing a folder of designs hold one. So a
// bearer token that does not check out is a 401 here, while any other
// Authorization (a proxy's Basic auth) is ignored, as public routes do.
func (s *server) reviewDocument(c echo.Context) error {
	_, err := s.identify(c)
	anonymous := err != nil
	if anonymous {
		if sentBearer(c) {
			return err
		}
		if ok, wait := s.reviewLimiter.allow("addr:"+clientKey(c.Request(), s.cfg.TrustedProxies), time.Now()); !ok {
			return &problemError{kind: "rate-limited", retry: wait,
				detail: fmt.Sprintf("too many reviews from this client; try again in %d s", wait)}
		}
	}
	v, err := limitsVersionParam(c)
	if err != nil {
		return err
	}
	body, err := s.readReviewBody(c, anonymous)
	if err != nil {
		return err
	}
	report, err := s.review(c.Request().Context(), body, v)
	if err != nil {
		return err
	}
	return c.JSON(http.StatusOK, report)
}

// AnonymousMaxBodyBytes caps the body of an inline review sent without a
// token: a design of several hundred nodes fits, while the review work a
// stranger can ask for stays well below a member's MaxBodyBytes.
const AnonymousMaxBodyBytes = 256 << 10

// readReviewBody reads an inline review's body, capped lower for an
// anonymous client than the MaxBodyBytes every request has.
func (s *server) readReviewBody(c echo.Context, anonymous bool) ([]byte, error) {
	if !anonymous {
		return readBody(c)
	}
	tooLarge := newProblem("too-large", "a review sent without a token is limited to %d KiB; members may send up to %d KiB",
		AnonymousMaxBodyBytes>>10, MaxBodyBytes>>10)
	req := c.Request()
	if req.ContentLength > AnonymousMaxBodyBytes {
		return nil, tooLarge
	}
	req.Body = http.MaxBytesReader(c.Response(), req.Body, AnonymousMaxBodyBytes)
	body, err := readBody(c)
	if errors.Is(err, echo.ErrStatusRequestEntityTooLarge) {
		return nil, tooLarge
	}
	return body, err
}

// reviewStoredDesign reviews a stored design and keeps the report and the
// document it read, with a share id that opens them without a login. The
// store keeps the review only if the design is still at the version read,
// so a design edited in between is a 409 to send again, never a report of
// a document the design no longer holds.
func (s *server) reviewStoredDesign(c echo.Context) error {
	v, err := limitsVersionParam(c)
	if err != nil {
		return err
	}
	d, err := s.visibleDesign(c)
	if err != nil {
		return err
	}
	// Before the review's work, so a member past the hourly quota costs
	// one cheap query.
	if err := s.checkQuota(c, store.QuotaNeed{Review: true}); err != nil {
		return err
	}
	r, err := s.storeReview(c, d, v)
	if errors.Is(err, domain.ErrPreconditionFailed) {
		return fmt.Errorf("design %d changed while it was reviewed: %w", d.ID, domain.ErrConflict)
	}
	if err != nil {
		return err
	}
	view := s.reviewView(r)
	c.Response().Header().Set("Location", view.ReportURL)
	return c.JSON(http.StatusCreated, view)
}

// storeReview reviews d and stores the review.
func (s *server) storeReview(c echo.Context, d store.StoredDesign, limitsVersion int) (store.StoredReview, error) {
	ctx := c.Request().Context()
	report, err := s.review(ctx, d.Document, limitsVersion)
	if err != nil {
		return store.StoredReview{}, err
	}
	encoded, err := encodeJSON(report)
	if err != nil {
		return store.StoredReview{}, fmt.Errorf("encode report of design %d: %w", d.ID, err)
	}
	if err := s.checkQuota(c, store.QuotaNeed{AddBytes: int64(len(encoded) + len(d.Document))}); err != nil {
		return store.StoredReview{}, err
	}
	return s.store.AddReview(ctx, currentUser(c), store.NewReview{
		DesignID: d.ID, DesignVersion: d.Version, Document: d.Document, Status: string(report.Status),
		LimitsVersion: report.LimitsVersion, Report: encoded,
	})
}

// checkQuota refuses a member's write that would pass a per-member quota;
// staff are exempt.
func (s *server) checkQuota(c echo.Context, need store.QuotaNeed) error {
	u := currentUser(c)
	if u.Role == domain.RoleStaff {
		return nil
	}
	return s.store.CheckQuota(c.Request().Context(), u.Name, need)
}

func (s *server) listDesignReviews(c echo.Context) error {
	d, err := s.visibleDesign(c)
	if err != nil {
		return err
	}
	limit, before, err := s.pageQuery(c, defaultReviewPageSize, maxReviewPageSize)
	if err != nil {
		return err
	}
	list, more, err := s.store.ReviewsOfDesign(c.Request().Context(), d.ID, before, limit)
	if err != nil {
		return err
	}
	page := ReviewPage{Items: make([]StoredReviewView, 0, len(list))}
	for _, r := range list {
		page.Items = append(page.Items, s.reviewView(r))
	}
	if more {
		page.Next = s.cursors.encodeID(list[len(list)-1].ID)
	}
	return c.JSON(http.StatusOK, page)
}

// reviewView adds the report page's address: absolute when the service
// knows its public address, else a path on the address asked.
func (s *server) reviewView(r store.StoredReview) StoredReviewView {
	return StoredReviewView{StoredReview: r, ReportURL: s.cfg.PublicBaseURL + "/reports/" + r.ShareID}
}
