package store_test

import (
	"context"
	"os"
	"strings"
	"testing"

	"github.com/go-json-experiment/json"

	"wattshelf/domain/review"
	"wattshelf/domain/store/storetest"
)

// A database whose limits were stored before the hazard checks gets, when
// serve starts, one new version with their defaults added and the staff's
// values kept; reviews under it run every check.
func TestServeAddsTheNewChecksLimits(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	old, err := os.ReadFile("../review/testdata/limits-before-hazards.json")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := st.EnsureDefaultLimits(ctx, old, "as stored before the hazard checks"); err != nil {
		t.Fatal(err)
	}
	for range 2 { // a second start finds nothing to add
		if _, err := st.SeedDefaultLimits(ctx); err != nil {
			t.Fatal(err)
		}
	}
	cur, err := st.CurrentLimits(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if cur.Version != 2 || cur.CreatedBy != "system" || !strings.Contains(cur.Note, "every staff value kept") {
		t.Fatalf("current limits v%d by %s (%q), want v2 by system naming what it kept", cur.Version, cur.CreatedBy, cur.Note)
	}
	var l review.Limits
	if err := json.Unmarshal(cur.Body, &l); err != nil {
		t.Fatal(err)
	}
	if err := l.Validate(); err != nil {
		t.Errorf("the stored v2 does not validate: %v", err)
	}
	ru, err := review.Prepare(l, cur.Version)
	if err != nil {
		t.Fatal(err)
	}
	if len(ru.NotRun()) > 0 {
		t.Errorf("v2 still skips %v", ru.NotRun())
	}
}
