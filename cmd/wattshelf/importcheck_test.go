package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	jsonv2 "github.com/go-json-experiment/json"

	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// TestImportRefusesRecordsTheAPIWouldNotStore spoils a backup of the demo
// with the four records of issue 15 item 5, one at a time and all at
// once: each import fails with exit 1, names every bad record and leaves
// the database empty.
func TestImportRefusesRecordsTheAPIWouldNotStore(t *testing.T) {
	dir := t.TempDir()
	srcURL := storetest.NewDatabaseURL(t)
	srcEnv := envWith(srcURL)
	runOK(t, srcEnv, "seed-demo")
	storeDemoReviews(t, srcURL, 2)
	good := filepath.Join(dir, "good.json")
	runOK(t, srcEnv, "export", "--out", good)
	raw, err := os.ReadFile(good)
	if err != nil {
		t.Fatal(err)
	}
	var snap store.Snapshot
	if err := json.Unmarshal(raw, &snap); err != nil {
		t.Fatal(err)
	}
	if len(snap.Components) < 2 || len(snap.Reviews) < 2 {
		t.Fatalf("the demo has %d components and %d reviews; the test needs two of each", len(snap.Components), len(snap.Reviews))
	}
	type spoil struct {
		name   string
		apply  func(*store.Snapshot)
		record string // how the error names the record
	}
	spoils := []spoil{
		{"electrical is a string", func(s *store.Snapshot) { s.Components[0].Electrical = json.RawMessage(`"oops"`) },
			fmt.Sprintf("components[0] (id %d): /electrical", snap.Components[0].ID)},
		{"kind is markup", func(s *store.Snapshot) { s.Components[1].Kind = "<script>" },
			fmt.Sprintf("components[1] (id %d): ", snap.Components[1].ID)},
		{"report is not a report", func(s *store.Snapshot) { s.Reviews[0].Report = json.RawMessage(`"not a report"`) },
			fmt.Sprintf("reviews[0] (id %d): ", snap.Reviews[0].ID)},
		{"share id is one letter", func(s *store.Snapshot) { s.Reviews[1].ShareID = "a" },
			fmt.Sprintf("reviews[1] (id %d): /share_id", snap.Reviews[1].ID)},
	}
	all := spoil{name: "all four", apply: func(s *store.Snapshot) {
		for _, sp := range spoils {
			sp.apply(s)
		}
	}}
	for _, sp := range append(spoils, all) {
		t.Run(sp.name, func(t *testing.T) {
			var spoilt store.Snapshot
			if err := json.Unmarshal(raw, &spoilt); err != nil {
				t.Fatal(err)
			}
			sp.apply(&spoilt)
			file := filepath.Join(t.TempDir(), "spoilt.json")
			var b bytes.Buffer
			if err := spoilt.WriteJSON(&b); err != nil {
				t.Fatal(err)
			}
			if err := os.WriteFile(file, b.Bytes(), 0o600); err != nil {
				t.Fatal(err)
			}
			st, dbURL := storetest.NewStore(t)
			err := run(context.Background(), []string{"import", file}, envWith(dbURL), &bytes.Buffer{}, &bytes.Buffer{})
			var ee *exitError
			if !errors.As(err, &ee) || ee.code != 1 {
				t.Fatalf("import: %v, want exit 1", err)
			}
			want := []string{sp.record}
			if sp.record == "" {
				want = nil
				for _, s := range spoils {
					want = append(want, s.record)
				}
			}
			for _, w := range want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("the refusal does not name %q:\n%v", w, err)
				}
			}
			// All or nothing: not even the good records were stored.
			got, err := st.Export(context.Background())
			if err != nil {
				t.Fatal(err)
			}
			if n := len(got.Users) + len(got.Components) + len(got.Designs) + len(got.Reviews) + len(got.Limits); n != 0 {
				t.Errorf("%d records stored by a refused import", n)
			}
		})
	}
	// The backup as written imports.
	runOK(t, envWith(storetest.NewDatabaseURL(t)), "import", good)
}

// storeDemoReviews stores a review of each of the first n demo designs,
// as the API would: the engine's report under the current limits.
func storeDemoReviews(t *testing.T, dbURL string, n int) {
	t.Helper()
	ctx := context.Background()
	st, err := store.Open(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	designs, _, err := st.ListDesigns(ctx, store.DesignFilter{Limit: n})
	if err != nil || len(designs) < n {
		t.Fatalf("demo designs: %d, %v; want %d", len(designs), err, n)
	}
	// The API stores the default limits as version 1 on first use.
	limits, version := review.DefaultLimits(), 1
	body, err := jsonv2.Marshal(limits, domain.StrictJSON())
	if err != nil {
		t.Fatal(err)
	}
	if _, err := st.EnsureDefaultLimits(ctx, body, "defaults"); err != nil {
		t.Fatal(err)
	}
	staff := domain.User{Name: "keeper", Role: domain.RoleStaff}
	for _, summary := range designs {
		d, err := st.Design(ctx, summary.ID)
		if err != nil {
			t.Fatal(err)
		}
		doc, err := domain.DecodeDesign(d.Document)
		if err != nil {
			t.Fatal(err)
		}
		comps, err := st.ComponentsByID(ctx, doc.ComponentIDs())
		if err != nil {
			t.Fatal(err)
		}
		rep, err := review.Review(doc, limits, version, comps)
		if err != nil {
			t.Fatal(err)
		}
		encoded, err := jsonv2.Marshal(rep, domain.StrictJSON())
		if err != nil {
			t.Fatal(err)
		}
		if _, err := st.AddReview(ctx, staff, store.NewReview{DesignID: d.ID, Document: d.Document,
			Status: string(rep.Status), LimitsVersion: version, Report: encoded}); err != nil {
			t.Fatal(err)
		}
	}
}
