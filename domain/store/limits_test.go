package store_test

import (
	"context"
	"encoding/json"
	"errors"
	"slices"
	"sync"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store/storetest"
)

func TestLimitsVersions(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	staff := domain.User{Name: "rowan", Role: domain.RoleStaff}

	if _, err := st.CurrentLimitsVersion(ctx); !errors.Is(err, domain.ErrNotFound) {
		t.Fatalf("current version of an empty table: got %v, want not found", err)
	}

	// Two replicas starting together: exactly one of them seeds version 1.
	var wg sync.WaitGroup
	inserted := make([]bool, 8)
	errs := make([]error, 8)
	for i := range inserted {
		wg.Add(1)
		go func() {
			defer wg.Done()
			inserted[i], errs[i] = st.EnsureDefaultLimits(ctx, []byte(`{"seed":1}`), "defaults")
		}()
	}
	wg.Wait()
	if err := errors.Join(errs...); err != nil {
		t.Fatal(err)
	}
	if n := countTrue(inserted); n != 1 {
		t.Fatalf("concurrent seeding inserted %d times, want 1", n)
	}
	again, err := st.EnsureDefaultLimits(ctx, []byte(`{"seed":2}`), "defaults")
	if err != nil || again {
		t.Fatalf("seeding a seeded table: inserted %t, err %v", again, err)
	}
	v1, err := st.Limits(ctx, 1)
	if err != nil {
		t.Fatal(err)
	}
	if !jsonEqual(t, v1.Body, `{"seed":1}`) || v1.CreatedBy != "system" {
		t.Fatalf("version 1 = %s by %s, want the first seed by system", v1.Body, v1.CreatedBy)
	}

	put, err := st.PutLimits(ctx, staff, 1, []byte(`{"seed":1,"changed":true}`), "raise the drop limit")
	if err != nil {
		t.Fatal(err)
	}
	if put.Version != 2 || put.CreatedBy != "rowan" || put.Note != "raise the drop limit" {
		t.Fatalf("put limits = %+v, want version 2 by rowan", put)
	}
	if _, err := st.PutLimits(ctx, staff, 1, []byte(`{}`), "from a stale copy"); !errors.Is(err, domain.ErrPreconditionFailed) {
		t.Fatalf("put from version 1 when 2 is newest: %v, want precondition failed", err)
	}
	cur, err := st.CurrentLimits(ctx)
	if err != nil || cur.Version != 2 {
		t.Fatalf("current limits = %d, %v; want version 2", cur.Version, err)
	}
	if v1again, _ := st.Limits(ctx, 1); !jsonEqual(t, v1again.Body, `{"seed":1}`) {
		t.Fatalf("version 1 changed to %s after a put", v1again.Body)
	}

	// Concurrent puts get consecutive versions, none lost.
	for i := range 5 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			_, errs[i] = st.PutLimits(ctx, staff, 0, []byte(`{}`), "")
		}()
	}
	wg.Wait()
	if err := errors.Join(errs[:5]...); err != nil {
		t.Fatal(err)
	}
	versions, err := st.LimitsVersions(ctx)
	if err != nil {
		t.Fatal(err)
	}
	var got []int
	for _, v := range versions {
		got = append(got, v.Version)
	}
	if want := []int{7, 6, 5, 4, 3, 2, 1}; !slices.Equal(got, want) {
		t.Fatalf("versions = %v, want %v", got, want)
	}
	if n, err := st.CurrentLimitsVersion(ctx); err != nil || n != 7 {
		t.Fatalf("current version = %d, %v; want 7", n, err)
	}
	if _, err := st.Limits(ctx, 99); !errors.Is(err, domain.ErrNotFound) {
		t.Fatalf("limits v99: got %v, want not found", err)
	}

	trail, err := st.AuditTrail(ctx, "limits", "2", 10)
	if err != nil {
		t.Fatal(err)
	}
	if len(trail) != 1 || trail[0].Action != "limits.put" || trail[0].Actor != "rowan" {
		t.Fatalf("audit of version 2 = %+v, want one limits.put by rowan", trail)
	}
	if seedTrail, _ := st.AuditTrail(ctx, "limits", "1", 10); len(seedTrail) != 1 || seedTrail[0].Action != "limits.seed" {
		t.Fatalf("audit of version 1 = %+v, want one limits.seed", seedTrail)
	}
}

func TestPutLimitsRejectsNonJSON(t *testing.T) {
	st, _ := storetest.NewStore(t)
	if _, err := st.PutLimits(context.Background(), domain.User{Name: "rowan", Role: domain.RoleStaff}, 0, []byte(`{`), ""); err == nil {
		t.Fatal("a body that is not JSON was stored")
	}
	if _, err := st.CurrentLimitsVersion(context.Background()); !errors.Is(err, domain.ErrNotFound) {
		t.Fatalf("after a rejected put: %v, want no limits stored", err)
	}
}

func countTrue(bs []bool) int {
	n := 0
	for _, b := range bs {
		if b {
			n++
		}
	}
	return n
}

// jsonEqual compares JSON by value: jsonb does not keep key order or spacing.
func jsonEqual(t *testing.T, got []byte, want string) bool {
	t.Helper()
	var g, w any
	if err := json.Unmarshal(got, &g); err != nil {
		t.Fatalf("decode %s: %v", got, err)
	}
	if err := json.Unmarshal([]byte(want), &w); err != nil {
		t.Fatalf("decode %s: %v", want, err)
	}
	gb, _ := json.Marshal(g)
	wb, _ := json.Marshal(w)
	return string(gb) == string(wb)
}
