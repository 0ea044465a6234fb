package store_test

import (
	"context"
	"errors"
	"fmt"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

func TestDocumentDigest(t *testing.T) {
	// FIPS 180-2, appendix B.1: the SHA-256 of "abc".
	const want = "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
	if got := store.DocumentDigest([]byte("abc")); got != want {
		t.Fatalf("digest of abc = %s, want %s", got, want)
	}
}

func TestReviews(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	ada := domain.User{Name: "ada", Role: domain.RoleMember}
	bo := domain.User{Name: "bo", Role: domain.RoleMember}
	staff := domain.User{Name: "rowan", Role: domain.RoleStaff}
	if _, err := st.EnsureDefaultLimits(ctx, []byte(`{}`), "defaults"); err != nil {
		t.Fatal(err)
	}
	doc := []byte(`{"format":1,"name":"lamp","nodes":[]}`)
	d, err := st.CreateDesign(ctx, ada, "lamp", doc)
	if err != nil {
		t.Fatal(err)
	}
	in := store.NewReview{DesignID: d.ID, Document: doc, Status: "warn", LimitsVersion: 1,
		Report: []byte(`{"status":"warn","limits_version":1}`)}

	if _, err := st.AddReview(ctx, bo, in); !errors.Is(err, domain.ErrForbidden) {
		t.Fatalf("review of ada's design by bo: %v, want forbidden", err)
	}
	if _, err := st.AddReview(ctx, ada, store.NewReview{DesignID: 999, Document: doc, Status: "pass", LimitsVersion: 1, Report: []byte(`{}`)}); !errors.Is(err, domain.ErrNotFound) {
		t.Fatalf("review of a missing design: %v, want not found", err)
	}
	if _, err := st.AddReview(ctx, ada, store.NewReview{DesignID: d.ID, Document: doc, Status: "pass", LimitsVersion: 5, Report: []byte(`{}`)}); err == nil {
		t.Fatal("a review naming a limits version that does not exist was stored")
	}

	// A review of a copy read at another version is refused, so the
	// caller can read the design again.
	stale := in
	stale.DesignVersion = d.Version + 1
	if _, err := st.AddReview(ctx, ada, stale); !errors.Is(err, domain.ErrPreconditionFailed) {
		t.Fatalf("review of version %d while the design is at %d: %v, want precondition failed", stale.DesignVersion, d.Version, err)
	}
	if _, err := st.AddReview(ctx, bo, stale); !errors.Is(err, domain.ErrForbidden) {
		t.Fatalf("review of another member's design at a stale version: %v, want forbidden", err)
	}

	shareIDs := map[string]bool{}
	urlSafe := regexp.MustCompile(`^[A-Za-z0-9_-]{24}$`) // 18 random bytes in base64url
	var last store.StoredReview
	for i, actor := range []domain.User{ada, staff, ada} {
		sent := in
		if i == 0 {
			sent.DesignVersion = d.Version // the current version passes the check that 0 skips
		}
		r, err := st.AddReview(ctx, actor, sent)
		if err != nil {
			t.Fatalf("review %d: %v", i, err)
		}
		if !urlSafe.MatchString(r.ShareID) {
			t.Fatalf("share id %q is not 24 URL-safe characters", r.ShareID)
		}
		if shareIDs[r.ShareID] {
			t.Fatalf("share id %q issued twice", r.ShareID)
		}
		shareIDs[r.ShareID] = true
		if r.DocumentSHA256 != store.DocumentDigest(doc) || r.Status != "warn" || r.LimitsVersion != 1 ||
			r.CreatedBy != actor.Name || r.DesignName != "lamp" || !jsonEqual(t, r.Report, string(in.Report)) {
			t.Fatalf("stored review %+v does not match what was sent", r)
		}
		last = r
	}

	list, more, err := st.ReviewsOfDesign(ctx, d.ID, 0, 2)
	if err != nil {
		t.Fatal(err)
	}
	if len(list) != 2 || !more || list[0].ID != last.ID || list[0].ID <= list[1].ID {
		t.Fatalf("first page = %+v more=%t, want the newest two, newest first", list, more)
	}
	rest, more, err := st.ReviewsOfDesign(ctx, d.ID, list[1].ID, 2)
	if err != nil {
		t.Fatal(err)
	}
	if len(rest) != 1 || more || rest[0].ID >= list[1].ID {
		t.Fatalf("second page = %+v more=%t, want the oldest one", rest, more)
	}

	shared, err := st.ReviewByShareID(ctx, last.ShareID)
	if err != nil {
		t.Fatal(err)
	}
	if shared.ID != last.ID || shared.DesignName != "lamp" || shared.Document != string(doc) {
		t.Fatalf("by share id: %+v, want review %d of lamp with its document", shared, last.ID)
	}
	// The review keeps the document it read after the design changes.
	changed := []byte(`{"format":1,"name":"lamp, rewired","nodes":[]}`)
	if _, err := st.UpdateDesign(ctx, ada, d.ID, 0, "lamp", changed); err != nil {
		t.Fatal(err)
	}
	if shared, err = st.ReviewByShareID(ctx, last.ShareID); err != nil || shared.Document != string(doc) {
		t.Fatalf("after the design changed the review holds %q (%v), want %q", shared.Document, err, doc)
	}
	for _, bad := range []string{"", "nope", last.ShareID + "x", string(make([]byte, 200))} {
		if _, err := st.ReviewByShareID(ctx, bad); !errors.Is(err, domain.ErrNotFound) {
			t.Fatalf("share id %q: %v, want not found", bad, err)
		}
	}

	// Deleting a design takes its reviews and their shared pages with it.
	if err := st.DeleteDesign(ctx, ada, d.ID, 0); err != nil {
		t.Fatal(err)
	}
	if _, err := st.ReviewByShareID(ctx, last.ShareID); !errors.Is(err, domain.ErrNotFound) {
		t.Fatalf("share id after the design was deleted: %v, want not found", err)
	}
}

// TestAddReviewWritesItsAuditRowOrNothing: a stored review and its audit
// row come together, and a refused one leaves neither.
func TestAddReviewWritesItsAuditRowOrNothing(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)
	ada := domain.User{Name: "ada", Role: domain.RoleMember}
	if _, err := st.EnsureDefaultLimits(ctx, []byte(`{}`), "defaults"); err != nil {
		t.Fatal(err)
	}
	doc := []byte(`{"format":1,"name":"fan","nodes":[]}`)
	d, err := st.CreateDesign(ctx, ada, "fan", doc)
	if err != nil {
		t.Fatal(err)
	}
	in := store.NewReview{DesignID: d.ID, Document: doc, Status: "pass", LimitsVersion: 1, Report: []byte(`{"status":"pass"}`)}
	subject := strconv.FormatInt(d.ID, 10)
	for _, refused := range []struct {
		who  domain.User
		in   store.NewReview
		want error
	}{
		{domain.User{Name: "bo", Role: domain.RoleMember}, in, domain.ErrForbidden},
		{ada, store.NewReview{DesignID: d.ID, Document: doc, Status: "pass", LimitsVersion: 7, Report: in.Report}, nil},
		// A NUL byte is no text PostgreSQL will store: the insert fails after the lock.
		{ada, store.NewReview{DesignID: d.ID, Document: doc, Status: "pass", LimitsVersion: 1, Report: []byte("{\"status\":\"pass\x00\"}")}, nil},
	} {
		if _, err := st.AddReview(ctx, refused.who, refused.in); err == nil || (refused.want != nil && !errors.Is(err, refused.want)) {
			t.Errorf("review by %s of limits v%d: %v, want a refusal (%v)", refused.who.Name, refused.in.LimitsVersion, err, refused.want)
		}
	}
	if n := countRows(t, conn, `SELECT count(*) FROM reviews`); n != 0 {
		t.Fatalf("%d reviews stored by refused calls", n)
	}
	if n := countRows(t, conn, `SELECT count(*) FROM audit WHERE action = 'review.create'`); n != 0 {
		t.Fatalf("%d review audit rows written by refused calls", n)
	}
	r, err := st.AddReview(ctx, ada, in)
	if err != nil {
		t.Fatal(err)
	}
	trail, err := st.AuditTrail(ctx, "design", subject, 10)
	if err != nil {
		t.Fatal(err)
	}
	if len(trail) == 0 || trail[0].Action != "review.create" || trail[0].Actor != "ada" ||
		!jsonEqual(t, trail[0].Detail, fmt.Sprintf(`{"review": %d, "status": "pass", "limits_version": 1}`, r.ID)) {
		t.Fatalf("newest audit entry of design %d: %+v", d.ID, trail)
	}
	if r.CreatedAt.IsZero() || r.DesignName != "fan" || r.CreatedBy != "ada" {
		t.Errorf("stored review %+v lacks what the database gave it", r)
	}
}

// TestStoredReviewsAreCompressedWithLZ4 checks migration 0007 on a server
// that has lz4: a report large enough to be compressed is, with lz4.
func TestStoredReviewsAreCompressedWithLZ4(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)
	if _, err := conn.Exec(ctx, `CREATE TEMP TABLE lz4_probe (t text COMPRESSION lz4)`); err != nil {
		t.Skipf("this PostgreSQL has no lz4 (%v); migration 0007 leaves pglz", err)
	}
	ada := domain.User{Name: "ada", Role: domain.RoleMember}
	if _, err := st.EnsureDefaultLimits(ctx, []byte(`{}`), "defaults"); err != nil {
		t.Fatal(err)
	}
	doc := []byte(`{"format":1,"name":"big","nodes":[]}`)
	d, err := st.CreateDesign(ctx, ada, "big", doc)
	if err != nil {
		t.Fatal(err)
	}
	report := []byte(`{"checks":[` + strings.Repeat(`{"check":"wire.drop","message":"The feed loses 0.1 V."},`, 400) + `{}]}`)
	r, err := st.AddReview(ctx, ada, store.NewReview{DesignID: d.ID, Document: doc, Status: "pass", LimitsVersion: 1, Report: report})
	if err != nil {
		t.Fatal(err)
	}
	var method *string
	if err := conn.QueryRow(ctx, `SELECT pg_column_compression(report) FROM reviews WHERE id = $1`, r.ID).Scan(&method); err != nil {
		t.Fatal(err)
	}
	if method == nil || *method != "lz4" {
		t.Errorf("a %d-byte report is stored with compression %v, want lz4", len(report), method)
	}
}
