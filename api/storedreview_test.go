package api

import (
	"bytes"
	"encoding/json"
	"os"
	"testing"
	"time"

	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store"
)

// TestStoredReviewEncoding holds appendStoredReview to what encoding/json
// writes for the same view, with a real report and awkward text.
func TestStoredReviewEncoding(t *testing.T) {
	doc, err := os.ReadFile("../testdata/demo/designs/fume-fan.json")
	if err != nil {
		t.Fatal(err)
	}
	d, err := domain.DecodeDesign(doc)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := review.Review(d, review.DefaultLimits(), 3, nil)
	if err != nil {
		t.Fatal(err)
	}
	report, err := rep.AppendJSON(nil)
	if err != nil {
		t.Fatal(err)
	}
	zone := time.FixedZone("UTC+5:30", 5*3600+1800)
	for _, v := range []StoredReviewView{
		{StoredReview: store.StoredReview{ID: 7, DesignID: 3, DesignName: `fan <"test"> & co` + "\u2028", ShareID: "abc_-",
			Status: "warn", LimitsVersion: 3, DocumentSHA256: store.DocumentDigest(doc), Report: report, CreatedBy: "ada",
			CreatedAt: time.Date(2026, 3, 4, 5, 6, 7, 891011, zone)}, ReportURL: "http://shelf.local:8080/reports/abc_-"},
		{StoredReview: store.StoredReview{Report: json.RawMessage(`{}`)}},
	} {
		want, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		got, err := appendStoredReview([]byte("x"), v)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got[1:], want) || got[0] != 'x' {
			t.Errorf("appendStoredReview:\n%s\nencoding/json:\n%s", got, want)
		}
	}
}
