package web_test

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"io/fs"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf"
	"wattshelf/api"
	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// largeShelf is the size of a large space's shelf (DESIGN.md, budgets).
const largeShelf = 50_000

// BenchmarkKioskLargeShelf serves the kiosk's first page from a shelf of
// 50,000 parts, through the real router on a real database, and reports
// the size of each page. The budget (issue 16): the first page in under
// 200 ms and under 500 KB.
//
//	go test ./api/web -run '^$' -bench KioskLargeShelf -benchtime 50x
func BenchmarkKioskLargeShelf(b *testing.B) {
	ctx := context.Background()
	st, _ := storetest.NewStore(b)
	if err := st.Import(ctx, largeSnapshot(b)); err != nil {
		b.Fatalf("load %d parts: %v", largeShelf, err)
	}
	router, err := api.New(api.Config{Store: st, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)),
		Registry: prometheus.NewRegistry()})
	if err != nil {
		b.Fatal(err)
	}
	srv := httptest.NewServer(router)
	defer srv.Close()
	for _, path := range []string{"/shelf?wall=1", "/shelf", "/shelf?wall=1&q=motor+drawer", "/shelf?kind=battery&bin=P1+battery+cabinet+17"} {
		b.Run(path, func(b *testing.B) {
			size := 0
			for b.Loop() {
				res, err := http.Get(srv.URL + path)
				if err != nil {
					b.Fatal(err)
				}
				body, err := io.ReadAll(res.Body)
				res.Body.Close()
				if err != nil || res.StatusCode != http.StatusOK {
					b.Fatalf("GET %s: %d, %v", path, res.StatusCode, err)
				}
				size = len(body)
			}
			b.ReportMetric(float64(size), "bytes/page")
		})
	}
}

// largeSnapshot is the demo shelf repeated to largeShelf parts, each copy
// in bins of its own, as an export file would hold it.
func largeSnapshot(b *testing.B) store.Snapshot {
	b.Helper()
	raw, err := fs.ReadFile(wattshelf.DemoFiles, "testdata/demo/components.json")
	if err != nil {
		b.Fatal(err)
	}
	var demo []domain.ComponentInput
	if err := json.Unmarshal(raw, &demo); err != nil {
		b.Fatal(err)
	}
	schema, err := store.SchemaVersion()
	if err != nil {
		b.Fatal(err)
	}
	snap := store.Snapshot{FormatVersion: store.ExportFormatVersion, SchemaVersion: schema}
	at := time.Date(2026, 3, 1, 12, 0, 0, 0, time.UTC)
	for i := range largeShelf {
		in := demo[i%len(demo)]
		in.Defaults()
		electrical, err := json.Marshal(in.Electrical)
		if err != nil {
			b.Fatal(err)
		}
		copyNo := i / len(demo)
		snap.Components = append(snap.Components, store.ExportedComponent{
			ID: int64(i + 1), Name: fmt.Sprintf("%s #%d", in.Name, copyNo), Kind: in.Kind, Description: in.Description,
			Origin: in.Origin, MainsOrigin: in.MainsOrigin, Bin: fmt.Sprintf("%s %d", in.Bin, copyNo%100),
			Quantity: in.Quantity, Condition: in.Condition, SpecSource: in.SpecSource, Notes: in.Notes,
			Electrical: electrical, Owner: "bench", CreatedAt: at, UpdatedAt: at, Version: 1,
		})
	}
	return snap
}
