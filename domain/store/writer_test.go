package store_test

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"sync"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// reviewCase is one review handed to the store and what must become of it.
type reviewCase struct {
	who  domain.User
	in   store.NewReview
	want error // nil: stored, unless refused
	// refused: the database refuses it, for whatever reason it gives
	refused bool
}

// batchCases reviews two of ada's designs: some that must be stored and
// one of each refusal AddReview gives alone.
func batchCases(t *testing.T, st *store.Store) []reviewCase {
	t.Helper()
	ctx := context.Background()
	if _, err := st.EnsureDefaultLimits(ctx, []byte(`{}`), "defaults"); err != nil {
		t.Fatal(err)
	}
	ada := domain.User{Name: "ada", Role: domain.RoleMember}
	bo := domain.User{Name: "bo", Role: domain.RoleMember}
	staff := domain.User{Name: "rowan", Role: domain.RoleStaff}
	var designs []store.StoredDesign
	for _, name := range []string{"lamp", "fan"} {
		doc := []byte(fmt.Sprintf(`{"format":1,"name":%q,"nodes":[]}`, name))
		d, err := st.CreateDesign(ctx, ada, name, doc)
		if err != nil {
			t.Fatal(err)
		}
		designs = append(designs, d)
	}
	review := func(d store.StoredDesign, version int64, status string) store.NewReview {
		return store.NewReview{DesignID: d.ID, DesignVersion: version, Document: d.Document, Status: status,
			LimitsVersion: 1, Report: []byte(`{"status":"` + status + `"}`)}
	}
	lamp, fan := designs[0], designs[1]
	return []reviewCase{
		{who: ada, in: review(lamp, lamp.Version, "pass"), want: nil},
		{who: bo, in: review(lamp, 0, "pass"), want: domain.ErrForbidden},
		{who: staff, in: review(fan, 0, "warn"), want: nil},
		{who: ada, in: review(fan, fan.Version+1, "pass"), want: domain.ErrPreconditionFailed},
		{who: ada, in: store.NewReview{DesignID: fan.ID + 100, Document: fan.Document, Status: "pass", LimitsVersion: 1,
			Report: []byte(`{}`)}, want: domain.ErrNotFound},
		{who: ada, in: review(fan, fan.Version, "fail"), want: nil},
		{who: ada, in: review(lamp, 0, "warn"), want: nil},
	}
}

// checkStored fails unless got is what storing c should give, and is in
// the database with its design's name and document.
func checkStored(t *testing.T, st *store.Store, i int, c reviewCase, got store.StoredReview, err error) {
	t.Helper()
	if c.want != nil {
		if !errors.Is(err, c.want) {
			t.Errorf("review %d: %v, want %v", i, err, c.want)
		}
		return
	}
	if err != nil {
		t.Errorf("review %d: %v, want it stored", i, err)
		return
	}
	shared, err := st.ReviewByShareID(context.Background(), got.ShareID)
	if err != nil {
		t.Errorf("review %d: read back by share id: %v", i, err)
		return
	}
	if shared.ID != got.ID || shared.DesignID != c.in.DesignID || shared.Status != c.in.Status ||
		shared.CreatedBy != c.who.Name || shared.Document != string(c.in.Document) || shared.DesignName == "" ||
		got.DesignName != shared.DesignName || string(shared.Report) != string(c.in.Report) {
		t.Errorf("review %d: stored %+v, answered %+v, for %+v", i, shared, got, c.in)
	}
}

// TestReviewsStoredTogether holds the one statement that stores several
// reviews to what AddReview does for each alone: every refusal is the
// refused review's own, and the others are stored with their audit rows.
func TestReviewsStoredTogether(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	cases := batchCases(t, st)
	actors, ins := make([]domain.User, len(cases)), make([]store.NewReview, len(cases))
	for i, c := range cases {
		actors[i], ins[i] = c.who, c.in
	}
	got, errs, err := store.AddReviewsTogether(ctx, st, actors, ins)
	if err != nil {
		t.Fatal(err)
	}
	stored, lastID := 0, int64(0)
	for i, c := range cases {
		checkStored(t, st, i, c, got[i], errs[i])
		if c.want == nil {
			stored++
			if got[i].ID <= lastID {
				t.Errorf("review %d has id %d after %d: ids should follow the order given", i, got[i].ID, lastID)
			}
			lastID = got[i].ID
		}
	}
	trail, err := st.AuditTrail(ctx, "", "", 100)
	if err != nil {
		t.Fatal(err)
	}
	audited := 0
	for _, e := range trail {
		if e.Action == "review.create" {
			audited++
		}
	}
	if audited != stored {
		t.Errorf("%d review.create audit rows for %d stored reviews", audited, stored)
	}
}

// withUnstorable adds to cases a review naming a limits version that does
// not exist: a statement carrying it fails whole.
func withUnstorable(cases []reviewCase) []reviewCase {
	bad := cases[0]
	bad.in.LimitsVersion = 99
	bad.refused = true
	return append(cases[:len(cases):len(cases)], bad)
}

// TestReviewBatchWithAnUnstorableReview writes one batch in which one
// review cannot be stored: the statement fails, and every other review
// must then be stored alone, each told its own outcome.
func TestReviewBatchWithAnUnstorableReview(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	cases := withUnstorable(batchCases(t, st))
	actors, ins := make([]domain.User, len(cases)), make([]store.NewReview, len(cases))
	for i, c := range cases {
		actors[i], ins[i] = c.who, c.in
	}
	got, errs, err := store.WriteReviewBatch(ctx, store.NewWriter(st, 1, len(cases)), actors, ins)
	if err != nil {
		t.Fatal(err)
	}
	checkOutcomes(t, st, cases, got, errs)
}

// checkOutcomes checks every case's outcome.
func checkOutcomes(t *testing.T, st *store.Store, cases []reviewCase, got []store.StoredReview, errs []error) {
	t.Helper()
	for i, c := range cases {
		if c.refused {
			if errs[i] == nil {
				t.Errorf("review %d names limits version %d, which does not exist, and was stored", i, c.in.LimitsVersion)
			}
			continue
		}
		checkStored(t, st, i, c, got[i], errs[i])
	}
}

// TestWriterReviews sends reviews from many goroutines at once; however
// the writer groups them, each must get its own outcome. After the
// writer stops, AddReview still stores.
func TestWriterReviews(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	cases := withUnstorable(batchCases(t, st))

	writer := store.NewWriter(st, 1, 4)
	runCtx, stop := context.WithCancel(ctx)
	ran := make(chan struct{})
	go func() { defer close(ran); writer.Run(runCtx) }()

	got := make([]store.StoredReview, len(cases))
	errs := make([]error, len(cases))
	var wg sync.WaitGroup
	for i, c := range cases {
		wg.Go(func() { got[i], errs[i] = writer.AddReview(ctx, c.who, c.in) })
	}
	wg.Wait()
	checkOutcomes(t, st, cases, got, errs)
	if _, writes := writer.Stats(); writes != uint64(len(cases)) {
		t.Errorf("statements carried %d reviews, want each of the %d once", writes, len(cases))
	}

	stop()
	<-ran
	after := cases[0]
	r, err := writer.AddReview(ctx, after.who, after.in)
	checkStored(t, st, -1, after, r, err)
}

// shelfPart is a component input as a member would enter it.
func shelfPart(name, kind, bin string, quantity int) domain.ComponentInput {
	in := domain.ComponentInput{Name: name, Kind: kind, Bin: bin, Quantity: quantity, Condition: "good", SpecSource: "datasheet",
		Description: "test part " + name, Notes: "kept off the shelf"}
	in.Electrical.MaxV = ptr(12.0)
	return in
}

// checkCreated fails unless got is in and stored as it, owned by owner.
func checkCreated(t *testing.T, st *store.Store, owner string, in domain.ComponentInput, got domain.Component) {
	t.Helper()
	read, err := st.Component(context.Background(), got.ID)
	if err != nil {
		t.Fatalf("%s: read back: %v", in.Name, err)
	}
	if got.ComponentInput.Name != in.Name || read.Name != in.Name || read.Kind != in.Kind || read.Bin != in.Bin ||
		read.Quantity != in.Quantity || read.Notes != in.Notes || read.Owner != owner || got.Owner != owner ||
		read.Electrical.MaxV == nil || *read.Electrical.MaxV != *in.Electrical.MaxV || !read.CreatedAt.Equal(got.CreatedAt) {
		t.Errorf("%s: answered %+v, stored %+v", in.Name, got, read)
	}
}

// TestComponentsCreatedTogether holds the one statement that creates
// several components to creating each alone: each comes back in the order
// given, as sent, with its audit row.
func TestComponentsCreatedTogether(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	ada := domain.User{Name: "ada", Role: domain.RoleMember}
	ins := []domain.ComponentInput{shelfPart("Fan", "motor", "M1", 2), shelfPart("Fan", "motor", "M2", 0),
		shelfPart("Buck board", "regulator", "R1", 5)}
	got, err := store.CreateComponentsTogether(ctx, st, ada, ins)
	if err != nil {
		t.Fatal(err)
	}
	for i, in := range ins {
		checkCreated(t, st, ada.Name, in, got[i])
		if i > 0 && got[i].ID <= got[i-1].ID {
			t.Errorf("component %d has id %d after %d", i, got[i].ID, got[i-1].ID)
		}
		trail, err := st.AuditTrail(ctx, "component", strconv.FormatInt(got[i].ID, 10), 10)
		if err != nil {
			t.Fatal(err)
		}
		if len(trail) != 1 || trail[0].Action != "component.create" || trail[0].Actor != ada.Name {
			t.Errorf("component %d: audit trail %+v, want one component.create by ada", got[i].ID, trail)
		}
	}
}

// TestWriterComponents creates components from many goroutines at once:
// each caller gets its own component, however the writer groups them.
func TestWriterComponents(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	writer := store.NewWriter(st, 1, 4)
	runCtx, stop := context.WithCancel(ctx)
	ran := make(chan struct{})
	go func() { defer close(ran); writer.Run(runCtx) }()
	defer func() { stop(); <-ran }()

	owners := []domain.User{{Name: "ada", Role: domain.RoleMember}, {Name: "bo", Role: domain.RoleMember}}
	ins := make([]domain.ComponentInput, 10)
	got := make([]domain.Component, len(ins))
	errs := make([]error, len(ins))
	var wg sync.WaitGroup
	for i := range ins {
		ins[i] = shelfPart(fmt.Sprintf("Part %d", i), "load", fmt.Sprintf("B%d", i%3), i)
		wg.Go(func() { got[i], errs[i] = writer.CreateComponent(ctx, owners[i%2], ins[i]) })
	}
	wg.Wait()
	for i, in := range ins {
		if errs[i] != nil {
			t.Fatalf("%s: %v", in.Name, errs[i])
		}
		checkCreated(t, st, owners[i%2].Name, in, got[i])
	}
}
