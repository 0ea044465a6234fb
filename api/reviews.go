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
// and the address of its printable report. The answer to storing one adds
// the proposed design, which is not stored: the stored report carries the
// remedies it applies.
type StoredReviewView struct {
	store.StoredReview
	ReportURL      string         `json:"report_url"`
	Proposed       *domain.Design `json:"proposed,omitzero"`
	ProposedStatus review.Status  `json:"proposed_status,omitzero"`
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

// proposeParam reads ?propose=1; 0 or nothing asks for the report alone.
func proposeParam(c echo.Context) (bool, error) {
	switch c.QueryParam("propose") {
	case "", "0":
		return false, nil
	case "1":
		return true, nil
	}
	return false, queryProblem("/propose", "must be 1 to ask for remedies and the proposed design, or 0")
}

// review decodes and reviews a document against limits version v (0:
// the current one); with propose, it proposes remedies too and lists the
// shelf parts that would do them. The document is validated once, here.
func (s *server) review(ctx context.Context, document []byte, v int, propose bool) (review.Proposal, error) {
	doc, err := domain.DecodeDesign(document)
	if err != nil {
		return review.Proposal{}, err
	}
	rules, _, err := s.limits.get(ctx, v)
	if errors.Is(err, domain.ErrNotFound) {
		return review.Proposal{}, queryProblem("/limits_version", "no limits version %d is stored; GET /v1/limits for the current one", v)
	}
	if err != nil {
		return review.Proposal{}, err
	}
	valid, err := doc.Validated()
	if err != nil {
		return review.Proposal{}, err
	}
	components, err := s.store.ComponentsByID(ctx, doc.ComponentIDs())
	if err != nil {
		return review.Proposal{}, err
	}
	if !propose {
		rep, err := rules.Review(valid, components)
		return review.Proposal{Report: rep}, err
	}
	p, err := rules.Propose(valid, components)
	if err != nil {
		return review.Proposal{}, err
	}
	return p, s.store.FillShelf(ctx, &p.Report)
}

// reviewDocument reviews the document sent as the body and stores
// nothing. It needs no token, so anonymous clients are rate-limited by
// address. A token holder is not: the token names who is calling and can
// be revoked, and scripts reviewing a folder of designs hold one. So a
// bearer token that does not check out is a 401 here, while any other
// Authorization (a proxy's Basic auth) is ignored, as public routes do.
func (s *server) reviewDocument(c echo.Context) error {
	anonymous, err := s.admitReview(c)
	if err != nil {
		return err
	}
	v, err := limitsVersionParam(c)
	if err != nil {
		return err
	}
	propose, err := proposeParam(c)
	if err != nil {
		return err
	}
	body, err := s.readReviewBody(c, anonymous)
	if err != nil {
		return err
	}
	p, err := s.review(c.Request().Context(), body, v, propose)
	if err != nil {
		return err
	}
	if propose {
		return c.JSON(http.StatusOK, p)
	}
	return c.JSON(http.StatusOK, p.Report)
}

// admitReview lets an inline review through, saying whether its client is
// anonymous: a bad bearer token is a 401, and an anonymous client past
// its rate a 429.
func (s *server) admitReview(c echo.Context) (anonymous bool, err error) {
	if _, err = s.identify(c); err == nil {
		return false, nil
	}
	if sentBearer(c) {
		return true, err
	}
	if ok, wait := s.reviewLimiter.allow("addr:"+clientKey(c.Request(), s.cfg.TrustedProxies), time.Now()); !ok {
		return true, &problemError{kind: "rate-limited", retry: wait,
			detail: fmt.Sprintf("too many reviews from this client; try again in %d s", wait)}
	}
	return true, nil
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
	view, err := s.storeReview(c, d, v)
	if errors.Is(err, domain.ErrPreconditionFailed) {
		return fmt.Errorf("design %d changed while it was reviewed: %w", d.ID, domain.ErrConflict)
	}
	if err != nil {
		return err
	}
	c.Response().Header().Set("Location", view.ReportURL)
	return c.JSON(http.StatusCreated, view)
}

// storeReview reviews d with a proposal, so its report page can show what
// would fix each finding, and stores the review; the answer adds the
// proposed design.
func (s *server) storeReview(c echo.Context, d store.StoredDesign, limitsVersion int) (StoredReviewView, error) {
	ctx := c.Request().Context()
	p, err := s.review(ctx, d.Document, limitsVersion, true)
	if err != nil {
		return StoredReviewView{}, err
	}
	encoded, err := encodeJSON(p.Report)
	if err != nil {
		return StoredReviewView{}, fmt.Errorf("encode report of design %d: %w", d.ID, err)
	}
	if err := s.checkQuota(c, store.QuotaNeed{AddBytes: int64(len(encoded) + len(d.Document))}); err != nil {
		return StoredReviewView{}, err
	}
	r, err := s.store.AddReview(ctx, currentUser(c), store.NewReview{
		DesignID: d.ID, DesignVersion: d.Version, Document: d.Document, Status: string(p.Report.Status),
		LimitsVersion: p.Report.LimitsVersion, Report: encoded,
	})
	if err != nil {
		return StoredReviewView{}, err
	}
	view := s.reviewView(r)
	view.Proposed, view.ProposedStatus = p.Proposed, p.ProposedStatus
	return view, nil
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
