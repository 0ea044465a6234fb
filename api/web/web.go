// Package web serves wattshelf's HTML pages: the shelf kiosk for a wall
// screen, one public page per component with its QR code, and the
// printable report of a stored review. Pages are rendered on the server
// with html/template and read without JavaScript; the kiosk's only script
// keeps it current. Templates, styles and the script are embedded, so
// nothing a page uses comes from outside the service.
package web

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net/http"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/labstack/echo/v4"
	"golang.org/x/sync/semaphore"
	"golang.org/x/sync/singleflight"

	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store"
)

// Source is what the pages read; *store.Store provides it.
type Source interface {
	ShelfPage(ctx context.Context, f store.ShelfFilter, after *store.ShelfCursor, limit int) ([]domain.ShelfItem, bool, error)
	ShelfKindCounts(ctx context.Context, f store.ShelfFilter) (map[string]int, error)
	Component(ctx context.Context, id int64) (domain.Component, error)
	ComponentsByID(ctx context.Context, ids []int64) (map[int64]domain.Component, error)
	ReviewByShareID(ctx context.Context, shareID string) (store.SharedReview, error)
	ReviewStampByShareID(ctx context.Context, shareID string) (store.ReviewStamp, error)
	FillShelf(ctx context.Context, rep *review.Report) error
}

// Deps are the page handlers' dependencies.
type Deps struct {
	Source Source
	Logger *slog.Logger
	// PublicBaseURL is printed into QR codes; empty means the scheme and
	// host the request came to.
	PublicBaseURL string
	// WallByDefault makes /shelf the wall screen; ?wall=0 still shows the
	// ordinary page.
	WallByDefault bool
	// AllowRender says whether the client of r may have a report page or
	// download built now, and if not, in how many seconds; nil allows all.
	// An answer of 304 is not counted.
	AllowRender func(r *http.Request) (ok bool, retryAfter int)
}

type pages struct {
	deps  Deps
	views *views
	// builds bounds the report pages and downloads built at once, and
	// reportFlight lets concurrent requests for one of them share a
	// build: each holds a stored report of up to tens of megabytes while
	// it is read and decoded.
	builds       *semaphore.Weighted
	reportFlight singleflight.Group
}

// reportBuildSlots is how many report pages or downloads are built at
// once; the rest wait their turn within their request's deadline.
const reportBuildSlots = 2

// Register adds the HTML routes and their assets to e.
func Register(e *echo.Echo, deps Deps) error {
	if deps.Source == nil || deps.Logger == nil {
		return errors.New("web pages need a source and a logger")
	}
	v, err := newViews()
	if err != nil {
		return err
	}
	p := &pages{deps: deps, views: v, builds: semaphore.NewWeighted(reportBuildSlots)}
	// Per route, not a group: a group's middleware would also claim every
	// unmatched path of the whole service.
	e.GET("/", p.home, securityHeaders)
	e.GET("/shelf", p.kiosk, securityHeaders)
	e.GET("/shelf/:id", p.component, securityHeaders)
	e.GET("/shelf/:id/qr.svg", p.qrSVG, securityHeaders)
	e.GET("/shelf/:id/qr.png", p.qrPNG, securityHeaders)
	e.GET("/reports/:share_id", p.report, securityHeaders)
	e.GET("/reports/:share_id/design.json", p.reportDesign, securityHeaders)
	e.GET("/reports/:share_id/report.json", p.reportJSON, securityHeaders)
	e.GET("/assets/:name", p.asset, securityHeaders)
	return nil
}

// contentSecurityPolicy allows only the service's own files: no inline
// script or style, no plugins, no framing, forms only back to us.
const contentSecurityPolicy = "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self'; " +
	"connect-src 'self'; font-src 'self'; object-src 'none'; base-uri 'none'; form-action 'self'; " +
	"frame-ancestors 'none'"

// securityHeaders go on every response of these routes, error pages too.
// no-referrer keeps a report's share id out of other sites' logs.
func securityHeaders(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		h := c.Response().Header()
		h.Set("Content-Security-Policy", contentSecurityPolicy)
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("Referrer-Policy", "no-referrer")
		h.Set("X-Frame-Options", "DENY")
		h.Set("Cross-Origin-Opener-Policy", "same-origin")
		h.Set("Permissions-Policy", "camera=(), microphone=(), geolocation=()")
		return next(c)
	}
}

// home sends a visitor at the bare address to the shelf.
func (p *pages) home(c echo.Context) error {
	return c.Redirect(http.StatusSeeOther, "/shelf")
}

func (p *pages) kiosk(c echo.Context) error {
	q := parseKioskQuery(c.QueryParams(), p.deps.WallByDefault)
	ctx := c.Request().Context()
	items, more, err := p.deps.Source.ShelfPage(ctx, q.filter, q.after, q.options.Limit)
	if err != nil {
		return p.failure(c, err)
	}
	counts, err := p.deps.Source.ShelfKindCounts(ctx, q.filter)
	if err != nil {
		return p.failure(c, err)
	}
	page := kioskView(items, more, counts, q)
	if base := p.publicBase(c.Scheme(), c.Request().Host); LoopbackURL(base) {
		page.StaffNotice = "the codes on this screen open " + base + ", which no phone can reach. " +
			"Set WATTSHELF_PUBLIC_URL to the address phones reach this server by, and restart it."
	}
	c.Response().Header().Set("Cache-Control", "no-cache")
	return p.html(c, http.StatusOK, func(w *strings.Builder) error {
		return p.views.renderKiosk(w, page)
	})
}

func (p *pages) component(c echo.Context) error {
	id, ok := parseID(c.Param("id"))
	if !ok {
		return p.notFound(c, "There is no component with that number on the shelf.")
	}
	comp, err := p.deps.Source.Component(c.Request().Context(), id)
	if errors.Is(err, domain.ErrNotFound) {
		return p.notFound(c, "There is no component with that number on the shelf.")
	}
	if err != nil {
		return p.failure(c, err)
	}
	address := p.componentAddress(c, id)
	return p.html(c, http.StatusOK, func(w *strings.Builder) error {
		return p.views.renderComponent(w, componentView(comp.Public(), address))
	})
}

func (p *pages) qrSVG(c echo.Context) error { return p.qr(c, false) }
func (p *pages) qrPNG(c echo.Context) error { return p.qr(c, true) }

// qr encodes the component page's address. The component must exist, so a
// code is never printed for a page that would be a 404.
func (p *pages) qr(c echo.Context, png bool) error {
	id, ok := parseID(c.Param("id"))
	if !ok {
		return p.notFound(c, "There is no component with that number on the shelf.")
	}
	if _, err := p.deps.Source.Component(c.Request().Context(), id); errors.Is(err, domain.ErrNotFound) {
		return p.notFound(c, "There is no component with that number on the shelf.")
	} else if err != nil {
		return p.failure(c, err)
	}
	address := p.componentAddress(c, id)
	c.Response().Header().Set("Cache-Control", "no-cache")
	if png {
		body, err := qrPNG(address, 8)
		if err != nil {
			return p.failure(c, err)
		}
		return c.Blob(http.StatusOK, "image/png", body)
	}
	body, err := qrSVG(address)
	if err != nil {
		return p.failure(c, err)
	}
	return c.Blob(http.StatusOK, "image/svg+xml", body)
}

// componentAddress is the public address of a component's page.
func (p *pages) componentAddress(c echo.Context, id int64) string {
	return p.publicBase(c.Scheme(), c.Request().Host) + "/shelf/" + strconv.FormatInt(id, 10)
}

// html renders into a buffer first, so a template error becomes an error
// page instead of half a page.
func (p *pages) html(c echo.Context, status int, render func(*strings.Builder) error) error {
	var b strings.Builder
	if err := render(&b); err != nil {
		return p.failure(c, fmt.Errorf("render %s: %w", c.Path(), err))
	}
	return c.HTMLBlob(status, []byte(b.String()))
}

func (p *pages) notFound(c echo.Context, message string) error {
	var b strings.Builder
	if err := p.views.renderError(&b, errorView{Status: http.StatusNotFound, Title: "Not found", Message: message}); err != nil {
		return err
	}
	return c.HTMLBlob(http.StatusNotFound, []byte(b.String()))
}

// failure logs what went wrong and shows a page that leaks none of it.
func (p *pages) failure(c echo.Context, err error) error {
	status, title, message := http.StatusInternalServerError, "Something went wrong",
		"The page could not be shown. The error has been logged; please tell the staff."
	if errors.Is(err, domain.ErrUnavailable) || store.IsUnavailable(err) {
		status, title, message = http.StatusServiceUnavailable, "Try again shortly",
			"The shelf's database cannot be reached right now."
		c.Response().Header().Set("Retry-After", "5")
	}
	p.deps.Logger.Error("page failed", "path", c.Request().URL.Path,
		"request_id", c.Response().Header().Get(echo.HeaderXRequestID), "error", err.Error())
	var b strings.Builder
	if rerr := p.views.renderError(&b, errorView{Status: status, Title: title, Message: message}); rerr != nil {
		return errors.Join(err, rerr)
	}
	return c.HTMLBlob(status, []byte(b.String()))
}

func parseID(s string) (int64, bool) {
	id, err := strconv.ParseInt(s, 10, 64)
	return id, err == nil && id > 0
}

// limitText cuts s to at most n bytes on a rune boundary.
func limitText(s string, n int) string {
	if len(s) <= n {
		return s
	}
	s = s[:n]
	for len(s) > 0 && !utf8.ValidString(s) {
		s = s[:len(s)-1]
	}
	return s
}
