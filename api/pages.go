package api

import (
	"github.com/labstack/echo/v4"

	"wattshelf/api/web"
)

// registerPages adds the HTML pages: the shelf kiosk, a page per
// component with its QR code, and the printable review reports.
func (s *server) registerPages(e *echo.Echo) {
	if err := web.Register(e, web.Deps{Source: s.store, Logger: s.logger,
		PublicBaseURL: s.cfg.PublicBaseURL, WallByDefault: s.cfg.KioskWall}); err != nil {
		// The templates are embedded in the binary, so this is a build
		// defect that every test of the router catches, not a runtime state.
		panic(err)
	}
}
