package api

import (
	"strings"
	"unicode/utf8"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
)

// storableText reports whether PostgreSQL can take s as text: valid UTF-8
// without a NUL.
func storableText(s string) bool {
	return utf8.ValidString(s) && strings.IndexByte(s, 0) < 0
}

// refuseUnstorableText answers a request whose path or query holds text
// the database cannot take (a NUL, invalid UTF-8) before any handler
// passes it on as a filter or an id, where it would fail as a 500 instead
// of being the client's mistake.
func refuseUnstorableText(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		u := c.Request().URL
		if !storableText(u.Path) {
			return newProblem("not-found", "the path is not UTF-8 text without NUL characters")
		}
		if u.RawQuery == "" {
			return next(c)
		}
		var fields []domain.FieldProblem
		for name, values := range u.Query() {
			for _, v := range values {
				if !storableText(name) || !storableText(v) {
					fields = append(fields, domain.FieldProblem{Pointer: "/" + domain.PointerToken(name),
						Detail: "must be UTF-8 text without NUL characters"})
					break
				}
			}
		}
		if len(fields) > 0 {
			return &problemError{kind: "bad-query", detail: "a query parameter is invalid", fields: fields}
		}
		return next(c)
	}
}
