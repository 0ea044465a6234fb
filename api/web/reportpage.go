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

// reportViewVersion goes into every report ETag beside the templates'
// digest: bump it when a change to the Go side of the report page
// changes what a stored review's page looks like.
const reportViewVersion = 1

const noReportMessage = "No report is shared under this address. Check the link you were sent."

// A stored review never changes, so its page and downloads are tagged
// from the stored review (and the shelf's revision, which fills what
// nodes leave out): every replica gives the same tag, a client holding
// it gets 304 for one small query, and only a render is rate-limited.
func (p *pages) report(c echo.Context) error {
	return p.sharedReview(c, "page", func(rec store.SharedReview) error {
		in, err := p.reportInput(c.Request().Context(), rec)
		if err != nil {
			return p.failure(c, err)
		}
		return p.html(c, http.StatusOK, func(w *strings.Builder) error {
			return p.views.renderReport(w, in)
		})
	})
}

// reportDesign downloads the design document the review read, as stored.
func (p *pages) reportDesign(c echo.Context) error {
	return p.sharedReview(c, "design", func(rec store.SharedReview) error {
		if rec.Document == "" {
			return p.notFound(c, "This review was stored before reviews kept the document they read.")
		}
		return p.download(c, "design-"+rec.ShareID+".json", []byte(rec.Document))
	})
}

// reportJSON downloads the stored report, as stored.
func (p *pages) reportJSON(c echo.Context) error {
	return p.sharedReview(c, "report", func(rec store.SharedReview) error {
		return p.download(c, "review-"+rec.ShareID+".json", rec.Report)
	})
}

func (p *pages) download(c echo.Context, filename string, body []byte) error {
	c.Response().Header().Set("Content-Disposition", `attachment; filename="`+filename+`"`)
	return c.Blob(http.StatusOK, "application/json", body)
}

// sharedReview answers 404, 304 or 429 for the review under the path's
// share id, or loads it and calls build. what names the representation,
// so each has a tag of its own.
func (p *pages) sharedReview(c echo.Context, what string, build func(store.SharedReview) error) error {
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
	rec, err := p.deps.Source.ReviewByShareID(ctx, shareID)
	if errors.Is(err, domain.ErrNotFound) {
		return p.notFound(c, noReportMessage)
	}
	if err != nil {
		return p.failure(c, err)
	}
	return build(rec)
}

// reportTag is a strong ETag (RFC 9110 section 8.8.3): the same stored
// review, shelf revision and templates give the same bytes.
func (p *pages) reportTag(what string, st store.ReviewStamp) string {
	h := sha256.New()
	h.Write(p.views.templatesDigest)
	fmt.Fprintf(h, "%d %s %d %d %d", reportViewVersion, what, st.ID, st.CreatedAt.UnixNano(), st.ShelfRevision)
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

func (p *pages) tooMany(c echo.Context, wait int) error {
	c.Response().Header().Set("Retry-After", strconv.Itoa(wait))
	var b strings.Builder
	if err := p.views.renderError(&b, errorView{Status: http.StatusTooManyRequests, Title: "Too many reports at once",
		Message: fmt.Sprintf("This address has opened many reports in a short time. Try again in %d seconds.", wait)}); err != nil {
		return err
	}
	return c.HTMLBlob(http.StatusTooManyRequests, []byte(b.String()))
}

// reportInput gathers what the report page shows: the stored report and
// the document it reviewed, whatever the design has become since. A
// design too large to draw is shown without its document, which then
// is not decoded.
func (p *pages) reportInput(ctx context.Context, rec store.SharedReview) (ReportInput, error) {
	in := ReportInput{DesignName: rec.DesignName, ReviewedAt: rec.CreatedAt, ShareID: rec.ShareID, DocumentKept: rec.Document != ""}
	var err error
	if in.Report, err = review.ReadStored(rec.Report); err != nil {
		return in, fmt.Errorf("decode stored report of review %d: %w", rec.ID, err)
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
