package store_test

import (
	"slices"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/review"
	"wattshelf/domain/store/storetest"
)

// The shelf offers a remedy only parts of the kinds asked for that it
// holds at least one of and that are not marked faulty.
func TestShelfCandidates(t *testing.T) {
	st, _ := storetest.NewStore(t)
	ctx := t.Context()
	add := func(kind, name string, qty int, condition string, rating float64) domain.Component {
		in := part(kind, name)
		in.Quantity, in.Condition, in.RatingA = qty, condition, volts(rating)
		return mustCreate(t, st, shelfKeeper, in)
	}
	fuse10 := add("fuse", "blade 10 A", 3, "working", 10)
	fuse15 := add("fuse", "blade 15 A", 1, "untested", 15)
	add("fuse", "blade 7.5 A, used up", 0, "working", 7.5)
	add("fuse", "blade 20 A, blown", 2, "faulty", 20)
	wire := add("wire", "red 14AWG", 1, "working", 0)
	add("connector", "xt60 pair", 4, "working", 60)

	got, err := st.ShelfCandidates(ctx, []string{"fuse", "wire"})
	if err != nil {
		t.Fatal(err)
	}
	var ids []int64
	for _, c := range got {
		ids = append(ids, c.ID)
	}
	if want := []int64{fuse10.ID, fuse15.ID, wire.ID}; !slices.Equal(ids, want) {
		t.Errorf("candidates %v, want %v", ids, want)
	}
	if none, err := st.ShelfCandidates(ctx, nil); err != nil || len(none) != 0 {
		t.Errorf("no kinds: %v, %v", none, err)
	}

	// A fuse that must carry 1.25 × 6 A = 7.5 A (continuous-load factor,
	// common practice): the 10 A part first, then the 15 A one.
	rep := review.Report{Checks: []review.Check{{Check: review.CheckFuseRating, Node: "drv", Status: review.Fail,
		Remedies: []review.Remedy{{Change: "fit a 10 A fuse",
			Part: &review.PartNeed{Kind: "fuse", AtLeast: map[string]float64{"rating_a": 7.5}}}}}}}
	if err := st.FillShelf(ctx, &rep); err != nil {
		t.Fatal(err)
	}
	shelf := rep.Checks[0].Remedies[0].Shelf
	if len(shelf) != 2 || shelf[0].ID != fuse10.ID || shelf[0].Quantity != 3 || shelf[1].ID != fuse15.ID {
		t.Errorf("shelf under the remedy: %+v", shelf)
	}
}
