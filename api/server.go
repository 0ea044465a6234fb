// Package api is wattshelf's HTTP surface: the echo router, its middleware,
// thin handlers per resource, problem documents, the OpenAPI document and
// the server-rendered pages under web/.
package api

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net/http"
	"net/netip"
	"time"

	"github.com/labstack/echo/v4"
	"github.com/labstack/echo/v4/middleware"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"
	"github.com/prometheus/client_golang/prometheus/promhttp"

	"wattshelf/domain/store"
)

// MaxBodyBytes caps every request body.
const MaxBodyBytes = 2 << 20

// Config is everything the router needs; main builds it.
type Config struct {
	Store  *store.Store
	Logger *slog.Logger
	// Registry receives the HTTP and pool metrics and is served at /metrics.
	Registry *prometheus.Registry
	// PublicBaseURL is the address printed into QR codes and links, e.g.
	// "http://shelf.local:8080"; empty means the address the request came to.
	PublicBaseURL string
	// KioskWall makes /shelf the self-paging wall screen by default.
	KioskWall bool
	// ReviewsPerMinute and ReviewBurst bound POST /v1/reviews per client;
	// zero means 60 a minute in bursts of 20.
	ReviewsPerMinute float64
	ReviewBurst      int
	// TrustedProxies are the reverse proxies whose X-Forwarded-For names
	// the client for the rate limit and the access log; none by default.
	TrustedProxies []netip.Prefix
}

// server holds the dependencies the handlers share.
type server struct {
	cfg           Config
	store         *store.Store
	logger        *slog.Logger
	schemaVersion uint
	limits        *limitsCache
	shelf         *shelfCache
	reviewLimiter *clientLimiter
	cursors       cursorCodec
}

// New builds the router with every route and middleware.
func New(cfg Config) (*echo.Echo, error) {
	if cfg.Store == nil || cfg.Logger == nil || cfg.Registry == nil {
		return nil, errors.New("api config needs a store, a logger and a registry")
	}
	want, err := store.SchemaVersion()
	if err != nil {
		return nil, err
	}
	s := &server{cfg: cfg, store: cfg.Store, logger: cfg.Logger, schemaVersion: want, shelf: newShelfCache()}
	keyCtx, cancel := context.WithTimeout(context.Background(), DatabaseWaitLimit)
	defer cancel()
	if s.cursors.key, err = cfg.Store.CursorKey(keyCtx); err != nil {
		return nil, err
	}

	metrics, err := newHTTPMetrics(cfg.Registry)
	if err != nil {
		return nil, err
	}
	if err := cfg.Registry.Register(newPoolCollector(cfg.Store)); err != nil {
		return nil, fmt.Errorf("register pool metrics: %w", err)
	}
	if err := cfg.Registry.Register(collectors.NewGoCollector()); err != nil {
		return nil, fmt.Errorf("register go metrics: %w", err)
	}
	// Resident memory and open files, so a scrape (or wattshelf-load)
	// can watch the process without access to its /proc entry.
	if err := cfg.Registry.Register(collectors.NewProcessCollector(collectors.ProcessCollectorOpts{})); err != nil {
		return nil, fmt.Errorf("register process metrics: %w", err)
	}

	e := echo.New()
	e.HideBanner, e.HidePort = true, true
	e.JSONSerializer = jsonSerializer{}
	e.HTTPErrorHandler = errorHandler(cfg.Logger, store.IsUnavailable)
	e.Pre(routeHeadAsGet)
	e.Use(answerHeadAsGet)
	e.Use(middleware.RequestID())
	e.Use(securityHeaders)
	e.Use(metrics.middleware)
	e.Use(accessLog(cfg.Logger, cfg.TrustedProxies))
	e.Use(recoverPanics(cfg.Logger))
	e.Use(requestDeadline(DatabaseWaitLimit))
	e.Use(refuseUnstorableText)
	e.Use(middleware.BodyLimit(fmt.Sprint(MaxBodyBytes)))

	e.GET("/healthz", s.healthz)
	e.GET("/readyz", s.readyz)
	e.GET("/metrics", echo.WrapHandler(promhttp.HandlerFor(cfg.Registry, promhttp.HandlerOpts{})))

	v1 := e.Group("/v1")
	s.registerShelfRoutes(v1)
	s.registerDesignRoutes(e, v1)
	s.registerPages(e)
	return e, nil
}

func (s *server) healthz(c echo.Context) error {
	return c.JSON(http.StatusOK, map[string]string{"status": "ok"})
}

// readyz answers 200 only when the database answers and its schema is the
// one this binary expects.
func (s *server) readyz(c echo.Context) error {
	ctx, cancel := context.WithTimeout(c.Request().Context(), 2*time.Second)
	defer cancel()
	if err := s.store.SchemaReady(ctx, s.schemaVersion); err != nil {
		s.logger.Warn("not ready", "error", err.Error())
		return &problemError{kind: "unavailable", detail: "the database is unreachable or its schema is not current", retry: 5}
	}
	return c.JSON(http.StatusOK, map[string]any{"status": "ready", "schema_version": s.schemaVersion})
}

// poolCollector reports the pgx pool's statistics at scrape time.
type poolCollector struct {
	store                         *store.Store
	total, idle, acquired, maxC   *prometheus.Desc
	acquires, waits, waitDuration *prometheus.Desc
}

func newPoolCollector(st *store.Store) *poolCollector {
	d := func(name, help string) *prometheus.Desc {
		return prometheus.NewDesc("wattshelf_db_pool_"+name, help, nil, nil)
	}
	return &poolCollector{
		store:        st,
		total:        d("connections", "Open connections in the pool."),
		idle:         d("idle_connections", "Idle connections in the pool."),
		acquired:     d("acquired_connections", "Connections in use."),
		maxC:         d("max_connections", "Most connections the pool will open."),
		acquires:     d("acquires_total", "Connections handed out."),
		waits:        d("empty_acquires_total", "Acquires that had to wait for a connection."),
		waitDuration: d("acquire_wait_seconds_total", "Time spent waiting for a connection."),
	}
}

func (p *poolCollector) Describe(ch chan<- *prometheus.Desc) {
	for _, d := range []*prometheus.Desc{p.total, p.idle, p.acquired, p.maxC, p.acquires, p.waits, p.waitDuration} {
		ch <- d
	}
}

func (p *poolCollector) Collect(ch chan<- prometheus.Metric) {
	st := p.store.Pool().Stat()
	ch <- prometheus.MustNewConstMetric(p.total, prometheus.GaugeValue, float64(st.TotalConns()))
	ch <- prometheus.MustNewConstMetric(p.idle, prometheus.GaugeValue, float64(st.IdleConns()))
	ch <- prometheus.MustNewConstMetric(p.acquired, prometheus.GaugeValue, float64(st.AcquiredConns()))
	ch <- prometheus.MustNewConstMetric(p.maxC, prometheus.GaugeValue, float64(st.MaxConns()))
	ch <- prometheus.MustNewConstMetric(p.acquires, prometheus.CounterValue, float64(st.AcquireCount()))
	ch <- prometheus.MustNewConstMetric(p.waits, prometheus.CounterValue, float64(st.EmptyAcquireCount()))
	ch <- prometheus.MustNewConstMetric(p.waitDuration, prometheus.CounterValue, st.AcquireDuration().Seconds())
}
