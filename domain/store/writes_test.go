package store_test

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// reviewCase is one review handed to the store and what must become of it.
type reviewCase struct {
	who  domain.User
	in   store.NewReview
	want error // nil: stored
}

// reviewCases reviews two of ada's designs: some that must be stored and
// one of each refusal AddReview gives.
func reviewCases(t *testing.T, st *store.Store) []reviewCase {
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

// TestAddReviewOutcomes stores reviews one after another: each refused
// one gets its reason, and the others are stored with their audit rows.
func TestAddReviewOutcomes(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	cases := reviewCases(t, st)
	stored := 0
	for i, c := range cases {
		got, err := st.AddReview(ctx, c.who, c.in)
		checkStored(t, st, i, c, got, err)
		if c.want == nil {
			stored++
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

// TestCreateComponent creates components one after another: each comes
// back as sent, with its audit row.
func TestCreateComponent(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	ada := domain.User{Name: "ada", Role: domain.RoleMember}
	ins := []domain.ComponentInput{shelfPart("Fan", "motor", "M1", 2), shelfPart("Fan", "motor", "M2", 0),
		shelfPart("Buck board", "regulator", "R1", 5)}
	for _, in := range ins {
		got, err := st.CreateComponent(ctx, ada, in)
		if err != nil {
			t.Fatal(err)
		}
		checkCreated(t, st, ada.Name, in, got)
		trail, err := st.AuditTrail(ctx, "component", strconv.FormatInt(got.ID, 10), 10)
		if err != nil {
			t.Fatal(err)
		}
		if len(trail) != 1 || trail[0].Action != "component.create" || trail[0].Actor != ada.Name {
			t.Errorf("component %d: audit trail %+v, want one component.create by ada", got.ID, trail)
		}
	}
}
