package store_test

import (
	"context"
	"errors"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

func TestDesignLifecycle(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	ada := domain.User{Name: "ada", Role: domain.RoleMember}
	bo := domain.User{Name: "bo", Role: domain.RoleMember}
	staff := domain.User{Name: "rowan", Role: domain.RoleStaff}

	// Spacing, key order and a trailing newline must survive untouched.
	doc := []byte("{\n  \"name\": \"cart\",\n  \"format\": 1,   \"nodes\": []\n}\n")
	d, err := st.CreateDesign(ctx, ada, "cart", doc)
	if err != nil {
		t.Fatal(err)
	}
	if d.Version != 1 || d.Owner != "ada" || string(d.Document) != string(doc) {
		t.Fatalf("created %+v, want version 1 owned by ada with the document as sent", d)
	}
	got, err := st.Design(ctx, d.ID)
	if err != nil {
		t.Fatal(err)
	}
	if string(got.Document) != string(doc) {
		t.Fatalf("stored document %q, want %q byte for byte", got.Document, doc)
	}

	doc2 := []byte(`{"name":"cart two","format":1,"nodes":[]}`)
	tests := []struct {
		name    string
		actor   domain.User
		version int64
		want    error
	}{
		{"another member may not change it", bo, 1, domain.ErrForbidden},
		{"a stale version is refused", ada, 7, domain.ErrPreconditionFailed},
		{"the owner at the current version may", ada, 1, nil},
		{"staff may, without a version check", staff, 0, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := st.UpdateDesign(ctx, tc.actor, d.ID, tc.version, "cart two", doc2)
			if !errors.Is(err, tc.want) {
				t.Fatalf("update: got %v, want %v", err, tc.want)
			}
		})
	}
	after, err := st.Design(ctx, d.ID)
	if err != nil {
		t.Fatal(err)
	}
	if after.Version != 3 || after.Name != "cart two" || string(after.Document) != string(doc2) || after.Owner != "ada" {
		t.Fatalf("after two updates: %+v, want version 3 still owned by ada", after)
	}
	if _, err := st.UpdateDesign(ctx, ada, 9999, 0, "x", doc2); !errors.Is(err, domain.ErrNotFound) {
		t.Fatalf("update of a missing design: %v, want not found", err)
	}

	if err := st.DeleteDesign(ctx, bo, d.ID, 0); !errors.Is(err, domain.ErrForbidden) {
		t.Fatalf("delete by another member: %v, want forbidden", err)
	}
	if err := st.DeleteDesign(ctx, ada, d.ID, 2); !errors.Is(err, domain.ErrPreconditionFailed) {
		t.Fatalf("delete at a stale version: %v, want precondition failed", err)
	}
	if err := st.DeleteDesign(ctx, ada, d.ID, 3); err != nil {
		t.Fatal(err)
	}
	if _, err := st.Design(ctx, d.ID); !errors.Is(err, domain.ErrNotFound) {
		t.Fatalf("read after delete: %v, want not found", err)
	}
	trail, err := st.AuditTrail(ctx, "design", "1", 10)
	if err != nil {
		t.Fatal(err)
	}
	var actions []string
	for _, e := range trail {
		actions = append(actions, e.Action+" by "+e.Actor)
	}
	want := []string{"design.delete by ada", "design.update by rowan", "design.update by ada", "design.create by ada"}
	if len(actions) != len(want) {
		t.Fatalf("audit = %v, want %v", actions, want)
	}
	for i := range want {
		if actions[i] != want[i] {
			t.Fatalf("audit = %v, want %v", actions, want)
		}
	}
}

func TestListDesigns(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	ada := domain.User{Name: "ada", Role: domain.RoleMember}
	bo := domain.User{Name: "bo", Role: domain.RoleMember}
	for i, u := range []domain.User{ada, bo, ada, ada, bo} {
		if _, err := st.CreateDesign(ctx, u, "d", []byte(`{}`)); err != nil {
			t.Fatalf("design %d: %v", i, err)
		}
	}
	page, more, err := st.ListDesigns(ctx, store.DesignFilter{Owner: "ada", AfterID: 0, Limit: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(page) != 2 || !more || page[0].ID != 1 || page[1].ID != 3 {
		t.Fatalf("first page of ada's = %+v more=%t, want ids 1, 3 and more", page, more)
	}
	page, more, err = st.ListDesigns(ctx, store.DesignFilter{Owner: "ada", AfterID: page[1].ID, Limit: 2})
	if err != nil {
		t.Fatal(err)
	}
	if len(page) != 1 || more || page[0].ID != 4 {
		t.Fatalf("second page of ada's = %+v more=%t, want id 4 and no more", page, more)
	}
	all, _, err := st.ListDesigns(ctx, store.DesignFilter{Owner: "", AfterID: 0, Limit: 50})
	if err != nil {
		t.Fatal(err)
	}
	if len(all) != 5 {
		t.Fatalf("everyone's designs: %d, want 5", len(all))
	}
}
