package web

import (
	"context"
	"crypto/sha256"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"strconv"
	"strings"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store"
)

const noReportMessage = "No report is shared under this address. Check the link you were sent."

// A stored review never changes, so its page and downloads are tagged
// from the stored review (and the shelf's revision, which fills what
// nodes leave out): every replica gives the same tag, a client holding
// it gets 304 for one small query, and only a build is rate-limited.
func (p *pages) report(c echo.Context) error {
	return p.sharedReview(c, "page", func(ctx context.Context, rec store.SharedReview) (built, error) {
		in, err := p.reportInput(ctx, rec)
		if err != nil {
			return built{}, err
		}
		var b strings.Builder
		if err := p.views.renderReport(&b, in); err != nil {
			return built{}, fmt.Errorf("render report of review %d: %w", rec.ID, err)
		}
		return built{body: []byte(b.String()), contentType: echo.MIMETextHTMLCharsetUTF8}, nil
	})
}

// reportDesign downloads the design document the review read, as stored.
func (p *pages) reportDesign(c echo.Context) error {
	return p.sharedReview(c, "design", func(_ context.Context, rec store.SharedReview) (built, error) {
		if rec.Document == "" {
			return built{missing: "This review was stored before reviews kept the document they read."}, nil
		}
		return built{body: []byte(rec.Document), contentType: "application/json", filename: "design-" + rec.ShareID + ".json"}, nil
	})
}

// reportJSON downloads the stored report, as stored.
func (p *pages) reportJSON(c echo.Context) error {
	return p.sharedReview(c, "report", func(_ context.Context, rec store.SharedReview) (built, error) {
		return built{body: rec.Report, contentType: "application/json", filename: "review-" + rec.ShareID + ".json"}, nil
	})
}

// built is a report page or download, ready to send; missing says why
// there is nothing to send.
type built struct {
	body        []byte
	contentType string
	filename    string // set for a download
	missing     string
}

// errBuildsBusy says no build slot came free before the request's deadline.
var errBuildsBusy = errors.New("every report build slot stayed busy")

// sharedReview answers 404, 304 or 429 for the review under the path's
// share id, or loads it and builds what names (each representation has a
// tag of its own). Requests for the same tag share one build, and at
// most reportBuildSlots builds run at once.
func (p *pages) sharedReview(c echo.Context, what string, build func(context.Context, store.SharedReview) (built, error)) error {
	ctx := c.Request().Context()
	shareID := c.Param("share_id")
	stamp, err := p.deps.Source.ReviewStampByShareID(ctx, shareID)
	if errors.Is(err, domain.ErrNotFound) {
		return p.notFound(c, noReportMessage)
	}
	if err != nil {
		return p.failure(c, err)
	}
	h := c.Response().Header()
	h.Set("X-Robots-Tag", "noindex")
	h.Set("Cache-Control", "private, no-cache")
	tag := p.reportTag(what, stamp)
	h.Set("ETag", tag)
	if noneMatch(c.Request().Header.Get("If-None-Match"), tag) {
		return c.NoContent(http.StatusNotModified)
	}
	if p.deps.AllowRender != nil {
		if ok, wait := p.deps.AllowRender(c.Request()); !ok {
			return p.tooMany(c, wait)
		}
	}
	result, err, _ := p.reportFlight.Do(tag, func() (any, error) {
		// Shared by every request waiting on this tag: one client going
		// away must not fail the others, but the work keeps this
		// request's deadline.
		shared, cancel := context.WithoutCancel(ctx), context.CancelFunc(func() {})
		if deadline, ok := ctx.Deadline(); ok {
			shared, cancel = context.WithDeadline(shared, deadline)
		}
		defer cancel()
		if err := p.builds.Acquire(shared, 1); err != nil {
			return built{}, errBuildsBusy
		}
		defer p.builds.Release(1)
		rec, err := p.deps.Source.ReviewByShareID(shared, shareID)
		if errors.Is(err, domain.ErrNotFound) {
			return built{missing: noReportMessage}, nil
		}
		if err != nil {
			return built{}, err
		}
		return build(shared, rec)
	})
	if errors.Is(err, errBuildsBusy) {
		return p.busy(c)
	}
	if err != nil {
		return p.failure(c, err)
	}
	b := result.(built)
	if b.missing != "" {
		return p.notFound(c, b.missing)
	}
	if b.filename != "" {
		h.Set("Content-Disposition", `attachment; filename="`+b.filename+`"`)
	}
	return c.Blob(http.StatusOK, b.contentType, b.body)
}

// reportTag is a strong ETag (RFC 9110 section 8.8.3): the same stored
// review and shelf revision, rendered by the same build, give the same
// bytes.
func (p *pages) reportTag(what string, st store.ReviewStamp) string {
	h := sha256.New()
	h.Write(p.views.build)
	fmt.Fprintf(h, "%s %d %d %d", what, st.ID, st.CreatedAt.UnixNano(), st.ShelfRevision)
	return `"` + base64.RawURLEncoding.EncodeToString(h.Sum(nil)[:18]) + `"`
}

// noneMatch reports whether an If-None-Match field value matches tag,
// comparing weakly as RFC 9110 section 13.1.2 says: "*" matches, and so
// does any listed tag with the same opaque value, W/ or not.
func noneMatch(field, tag string) bool {
	for item := range strings.SplitSeq(field, ",") {
		item = strings.TrimSpace(item)
		if item == "*" || strings.TrimPrefix(item, "W/") == tag {
			return true
		}
	}
	return false
}

// busy answers 503 when no build slot came free in time.
func (p *pages) busy(c echo.Context) error {
	c.Response().Header().Set("Retry-After", "5")
	var b strings.Builder
	if err := p.views.renderError(&b, errorView{Status: http.StatusServiceUnavailable, Title: "Try again shortly",
		Message: "Many reports are being prepared right now. Try again in a few seconds."}); err != nil {
		return err
	}
	return c.HTMLBlob(http.StatusServiceUnavailable, []byte(b.String()))
}

func (p *pages) tooMany(c echo.Context, wait int) error {
	c.Response().Header().Set("Retry-After", strconv.Itoa(wait))
	var b strings.Builder
	if err := p.views.renderError(&b, errorView{Status: http.StatusTooManyRequests, Title: "Too many reports at once",
		Message: fmt.Sprintf("This address has opened many reports in a short time. Try again in %d seconds.", wait)}); err != nil {
		return err
	}
	return c.HTMLBlob(http.StatusTooManyRequests, []byte(b.String()))
}

// reportInput gathers what the report page shows: the stored report, its
// remedies' shelf parts and the document it reviewed, whatever the design
// has become since. A
// design too large to draw is shown without its document, which then
// is not decoded.
func (p *pages) reportInput(ctx context.Context, rec store.SharedReview) (ReportInput, error) {
	in := ReportInput{DesignName: rec.DesignName, ReviewedAt: rec.CreatedAt, ShareID: rec.ShareID, DocumentKept: rec.Document != ""}
	var err error
	if in.Report, err = review.ReadStored(rec.Report); err != nil {
		return in, fmt.Errorf("decode stored report of review %d: %w", rec.ID, err)
	}
	// The parts a remedy calls for are listed as the shelf holds them
	// now (the page's tag follows the shelf's revision), not as it held
	// them when the review was stored.
	if err := p.deps.Source.FillShelf(ctx, &in.Report); err != nil {
		return in, err
	}
	if rec.Document == "" || len(in.Report.Nodes) > maxDrawnNodes {
		return in, nil
	}
	var doc domain.Design
	if err := json.Unmarshal([]byte(rec.Document), &doc); err != nil {
		return in, fmt.Errorf("decode document of review %d: %w", rec.ID, err)
	}
	in.Design = &doc
	if in.Components, err = p.deps.Source.ComponentsByID(ctx, doc.ComponentIDs()); err != nil {
		return in, err
	}
	return in, nil
}
