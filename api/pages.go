package api

import (
	"net/http"
	"time"

	"github.com/labstack/echo/v4"

	"wattshelf/api/web"
)

// Report pages and downloads built per client address: a page of a large
// stored review costs far more than a shelf read, and a client that
// already holds the page's ETag is answered 304 without counting. Each
// replica bounds its own work, so this limit lives in its memory.
const (
	reportRendersPerMinute = 30
	reportRenderBurst      = 15
)

// registerPages adds the HTML pages: the shelf kiosk, a page per
// component with its QR code, and the printable review reports.
func (s *server) registerPages(e *echo.Echo) {
	renders := newClientLimiter(reportRendersPerMinute, reportRenderBurst)
	allow := func(r *http.Request) (bool, int) {
		return renders.allow("addr:"+clientKey(r, s.cfg.TrustedProxies), time.Now())
	}
	if err := web.Register(e, web.Deps{Source: s.store, Logger: s.logger, PublicBaseURL: s.cfg.PublicBaseURL,
		WallByDefault: s.cfg.KioskWall, AllowRender: allow}); err != nil {
		// The templates are embedded in the binary, so this is a build
		// defect that every test of the router catches, not a runtime state.
		panic(err)
	}
}
