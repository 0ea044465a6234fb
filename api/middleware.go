package api

import (
	"fmt"
	"log/slog"
	"net/http"
	"net/netip"
	"runtime/debug"
	"strconv"
	"strings"
	"time"

	"github.com/labstack/echo/v4"
	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/domain"
)

// accessLog writes one JSON line per request. It never logs headers, so
// bearer tokens stay out of the logs; the client's address is believed
// from X-Forwarded-For only when a trusted proxy sent it.
func accessLog(logger *slog.Logger, trusted []netip.Prefix) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			start := time.Now()
			err := next(c)
			if err != nil {
				c.Error(err)
			}
			req, res := c.Request(), c.Response()
			logger.LogAttrs(req.Context(), slog.LevelInfo, "request",
				slog.String("request_id", res.Header().Get(echo.HeaderXRequestID)),
				slog.String("method", methodLabel(requestMethod(c))),
				slog.String("route", c.Path()),
				slog.String("path", req.URL.Path),
				slog.Int("status", res.Status),
				slog.Int64("bytes", res.Size),
				slog.Float64("duration_ms", float64(time.Since(start).Microseconds())/1000),
				slog.String("remote", logAddr(req, trusted)),
			)
			return nil
		}
	}
}

// securityHeaders go on every answer, errors included. They are the
// common practice for a JSON API (OWASP REST Security Cheat Sheet): the
// browser must not sniff, run or frame anything in an answer. The HTML
// pages set their own, looser Content-Security-Policy over this one.
func securityHeaders(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		h := c.Response().Header()
		h.Set("Content-Security-Policy", "default-src 'none'; frame-ancestors 'none'")
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("X-Frame-Options", "DENY")
		h.Set("Referrer-Policy", "no-referrer")
		return next(c)
	}
}

const headKey = "wattshelf.head"

// routeHeadAsGet and answerHeadAsGet answer HEAD wherever GET is
// routed, and list it in the Allow of OPTIONS answers. RFC 9110 section 9.3.2: HEAD is GET without the content. echo
// routes by the method of the server's own request, so routeHeadAsGet
// (run before routing) makes it GET; answerHeadAsGet (the first middleware
// after routing) makes it HEAD again, so that net/http frames the answer
// as one, and hands the handler a GET copy whose body is dropped. Log
// lines and metrics still say HEAD (requestMethod).
func routeHeadAsGet(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		if req := c.Request(); req.Method == http.MethodHead {
			req.Method = http.MethodGet
			c.Set(headKey, true)
		}
		return next(c)
	}
}

func answerHeadAsGet(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		if c.Request().Method == http.MethodOptions {
			res := c.Response()
			res.Before(func() { allowHead(res.Header()) })
		}
		if head, _ := c.Get(headKey).(bool); head {
			req := c.Request()
			req.Method = http.MethodHead
			get := req.WithContext(req.Context()) // a shallow copy
			get.Method = http.MethodGet
			c.SetRequest(get)
			c.Response().Writer = withoutBody{c.Response().Writer}
		}
		return next(c)
	}
}

// allowHead adds HEAD to an Allow field that lists GET: echo lists the
// methods routed, and HEAD is served wherever GET is.
func allowHead(h http.Header) {
	allow := h.Get(echo.HeaderAllow)
	if strings.Contains(allow, http.MethodGet) && !strings.Contains(allow, http.MethodHead) {
		h.Set(echo.HeaderAllow, allow+", "+http.MethodHead)
	}
}

// withoutBody drops what is written as a response body, for HEAD.
type withoutBody struct{ http.ResponseWriter }

func (w withoutBody) Write(p []byte) (int, error) { return len(p), nil }

// Unwrap lets http.ResponseController reach the server's writer.
func (w withoutBody) Unwrap() http.ResponseWriter { return w.ResponseWriter }

// requestMethod is the method the client sent.
func requestMethod(c echo.Context) string {
	if head, _ := c.Get(headKey).(bool); head {
		return http.MethodHead
	}
	return c.Request().Method
}

// logAddr is the client's address for the access log.
func logAddr(r *http.Request, trusted []netip.Prefix) string {
	if addr, ok := clientAddr(r, trusted); ok {
		return addr.String()
	}
	return r.RemoteAddr
}

// recoverPanics turns a panic into a logged stack and an "internal"
// problem document; the stack never reaches the client.
func recoverPanics(logger *slog.Logger) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) (err error) {
			defer func() {
				if r := recover(); r != nil {
					logger.Error("panic while serving",
						"request_id", c.Response().Header().Get(echo.HeaderXRequestID),
						"path", c.Request().URL.Path,
						"panic", fmt.Sprint(r),
						"stack", string(debug.Stack()))
					err = newProblem("internal", "the error has been logged")
				}
			}()
			return next(c)
		}
	}
}

// httpMetrics counts requests and their latency by route and status.
type httpMetrics struct {
	requests *prometheus.CounterVec
	latency  *prometheus.HistogramVec
}

func newHTTPMetrics(reg prometheus.Registerer) (*httpMetrics, error) {
	m := &httpMetrics{
		requests: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "wattshelf_http_requests_total", Help: "HTTP requests served, by route, method and status.",
		}, []string{"route", "method", "status"}),
		latency: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name: "wattshelf_http_request_duration_seconds", Help: "Time to serve HTTP requests, by route, method and status.",
			Buckets: []float64{.0005, .001, .0025, .005, .01, .025, .05, .1, .25, .5, 1, 2.5},
		}, []string{"route", "method", "status"}),
	}
	for _, c := range []prometheus.Collector{m.requests, m.latency} {
		if err := reg.Register(c); err != nil {
			return nil, fmt.Errorf("register http metrics: %w", err)
		}
	}
	return m, nil
}

func (m *httpMetrics) middleware(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		start := time.Now()
		err := next(c)
		route := c.Path()
		if route == "" {
			route = "unmatched" // keeps label cardinality bounded
		}
		status, method := strconv.Itoa(c.Response().Status), methodLabel(requestMethod(c))
		m.requests.WithLabelValues(route, method, status).Inc()
		m.latency.WithLabelValues(route, method, status).Observe(time.Since(start).Seconds())
		return err
	}
}

// methodLabel is the request method as a metric label or log field: a
// method a client makes up becomes "other", so no client can add series
// (or kilobytes of log) by inventing methods.
func methodLabel(method string) string {
	switch method {
	case http.MethodGet, http.MethodHead, http.MethodPost, http.MethodPut, http.MethodPatch,
		http.MethodDelete, http.MethodOptions:
		return method
	}
	return "other"
}

const (
	userKey     = "wattshelf.user"
	authFailKey = "wattshelf.auth-failure"
)

// identify resolves the request's bearer token to its user, once per
// request, and remembers the answer. Only routes that need a user ask, so
// a public page or /healthz answers whatever Authorization header a proxy
// or browser adds; a route that needs a token gets the error.
func (s *server) identify(c echo.Context) (domain.User, error) {
	if u, ok := c.Get(userKey).(domain.User); ok {
		return u, nil
	}
	if err, ok := c.Get(authFailKey).(error); ok {
		return domain.User{}, err
	}
	u, err := s.authenticate(c)
	if err != nil {
		c.Set(authFailKey, err)
		return u, err
	}
	c.Set(userKey, u)
	return u, nil
}

func (s *server) authenticate(c echo.Context) (domain.User, error) {
	h := c.Request().Header.Get(echo.HeaderAuthorization)
	scheme, secret, ok := strings.Cut(h, " ")
	if !ok || !strings.EqualFold(scheme, "Bearer") || secret == "" || len(secret) > 200 {
		return domain.User{}, domain.ErrUnauthorized
	}
	return s.store.Authenticate(c.Request().Context(), strings.TrimSpace(secret))
}

// sentBearer reports whether the request carries a bearer token, valid
// or not.
func sentBearer(c echo.Context) bool {
	scheme, _, _ := strings.Cut(c.Request().Header.Get(echo.HeaderAuthorization), " ")
	return strings.EqualFold(scheme, "Bearer")
}

// requireUser lets only requests with a valid token through.
func (s *server) requireUser(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		if _, err := s.identify(c); err != nil {
			return err
		}
		return next(c)
	}
}

// requireStaff lets only staff tokens through.
func (s *server) requireStaff(next echo.HandlerFunc) echo.HandlerFunc {
	return func(c echo.Context) error {
		u, err := s.identify(c)
		if err != nil {
			return err
		}
		if u.Role != domain.RoleStaff {
			return newProblem("forbidden", "only staff may do this")
		}
		return next(c)
	}
}

// currentUser is the user behind the request's token; routes behind
// requireUser always have one.
func currentUser(c echo.Context) domain.User {
	u, _ := c.Get(userKey).(domain.User)
	return u
}
