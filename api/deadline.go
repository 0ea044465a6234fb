package api

import (
	"context"
	"time"

	"github.com/labstack/echo/v4"
)

// DatabaseWaitLimit bounds how long one request may wait on the database.
// A database that has gone silent (a network partition, a frozen host)
// never answers and never resets the connection; without a deadline each
// request would hang until its client gave up, holding a pool connection
// all the while. With it the client hears a 503 with Retry-After.
const DatabaseWaitLimit = 5 * time.Second

// requestDeadline puts a deadline on the request's context, which every
// store call inherits.
func requestDeadline(limit time.Duration) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			ctx, cancel := context.WithTimeout(c.Request().Context(), limit)
			defer cancel()
			c.SetRequest(c.Request().WithContext(ctx))
			return next(c)
		}
	}
}
