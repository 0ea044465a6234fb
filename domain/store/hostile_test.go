package store_test

import (
	"context"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// TestAddReviewRefusesAReportThatIsNotAnObject: an empty, cut-off or
// non-object report is refused and leaves neither a review nor its audit
// entry behind.
func TestAddReviewRefusesAReportThatIsNotAnObject(t *testing.T) {
	ctx := context.Background()
	s, dbURL := storetest.NewStore(t)
	if _, err := s.EnsureDefaultLimits(ctx, []byte(`{}`), "test"); err != nil {
		t.Fatal(err)
	}
	ada := domain.User{Name: "ada", Role: domain.RoleMember}
	d, err := s.CreateDesign(ctx, ada, "Cart", []byte(`{"format": 1, "name": "Cart", "nodes": []}`))
	if err != nil {
		t.Fatal(err)
	}
	for _, report := range []string{`{"status": "pass"`, `not json`, ``, ` `, `{`, `[{"status": "pass"}]`} {
		_, err := s.AddReview(ctx, ada, store.NewReview{DesignID: d.ID, Document: []byte(`{}`), Status: "pass",
			LimitsVersion: 1, Report: []byte(report)})
		if err == nil {
			t.Errorf("report %q was stored", report)
		}
	}
	if n := queryText(t, dbURL, `SELECT count(*)::text FROM reviews`); n != "0" {
		t.Errorf("%s reviews stored", n)
	}
	if n := queryText(t, dbURL, `SELECT count(*)::text FROM audit WHERE action = 'review.create'`); n != "0" {
		t.Errorf("%s review audit entries", n)
	}
	if _, err := s.AddReview(ctx, ada, store.NewReview{DesignID: d.ID, Document: []byte(`{}`), Status: "pass",
		LimitsVersion: 1, Report: []byte(`{"status": "pass"}`)}); err != nil {
		t.Errorf("a whole report: %v", err)
	}
}
