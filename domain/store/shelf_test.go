package store_test

import (
	"context"
	"maps"
	"slices"
	"testing"

	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// The shelf's filters run in the database: every word of the query in
// any of the five texts, in any case and taken literally; kind and bin
// exact; pages of a filtered shelf walk exactly the filtered shelf.
func TestShelfFilters(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	type row struct{ kind, name, bin, description, origin string }
	rows := []row{
		{"motor", "Gear motor", "M1", "worm stage removed", "cordless hand mixer"},
		{"motor", "Fan motor", "M1", "", "desk fan"},
		{"motor", "Wiper motor", "M2", "12 V", "car"},
		{"battery", "Li-ion cells", "P1", "use with a protection board", "laptop pack"},
		{"light", "LED strip 100%", "L1", "cut to length", "shelf light"},
		{"light", "LED strip 50_cm", "L1", "", "kit"},
		{"switch", "Mixer switch", "", "rocker", "stand mixer"},
	}
	byName := map[string]int64{}
	for _, r := range rows {
		in := part(r.kind, r.name)
		in.Bin, in.Description, in.Origin = r.bin, r.description, r.origin
		byName[r.name] = mustCreate(t, st, memberAda, in).ID
	}
	cases := []struct {
		f    store.ShelfFilter
		want []string // in shelf order: bin, then name
	}{
		{store.ShelfFilter{}, []string{"Mixer switch", "LED strip 100%", "LED strip 50_cm", "Fan motor", "Gear motor", "Wiper motor", "Li-ion cells"}},
		{store.ShelfFilter{Query: "MIXER"}, []string{"Mixer switch", "Gear motor"}},
		{store.ShelfFilter{Query: "mixer  stand"}, []string{"Mixer switch"}},
		{store.ShelfFilter{Query: "motor m1"}, []string{"Fan motor", "Gear motor"}},
		{store.ShelfFilter{Query: "protection"}, []string{"Li-ion cells"}},
		{store.ShelfFilter{Query: "100%"}, []string{"LED strip 100%"}},
		{store.ShelfFilter{Query: "%"}, []string{"LED strip 100%"}},
		{store.ShelfFilter{Query: "0_c"}, []string{"LED strip 50_cm"}},
		{store.ShelfFilter{Query: "_"}, []string{"LED strip 50_cm"}},
		{store.ShelfFilter{Kind: "motor"}, []string{"Fan motor", "Gear motor", "Wiper motor"}},
		{store.ShelfFilter{Kind: "motor", Query: "car"}, []string{"Wiper motor"}},
		{store.ShelfFilter{Bin: "M1"}, []string{"Fan motor", "Gear motor"}},
		{store.ShelfFilter{Bin: "M1", Kind: "light"}, nil},
		{store.ShelfFilter{Query: "nothing like this"}, nil},
	}
	for _, tc := range cases {
		items, err := st.ShelfMatching(ctx, tc.f)
		if err != nil {
			t.Fatal(err)
		}
		var got []string
		for _, it := range items {
			got = append(got, it.Name)
		}
		if !slices.Equal(got, tc.want) {
			t.Errorf("%+v: %q, want %q", tc.f, got, tc.want)
		}
		// The same, two at a time.
		var walked []string
		var after *store.ShelfCursor
		for range 10 {
			page, more, err := st.ShelfPage(ctx, tc.f, after, 2)
			if err != nil {
				t.Fatal(err)
			}
			for _, it := range page {
				walked = append(walked, it.Name)
			}
			if !more {
				break
			}
			last := page[len(page)-1]
			after = &store.ShelfCursor{Bin: last.Bin, Name: last.Name, ID: last.ID}
		}
		if !slices.Equal(walked, tc.want) {
			t.Errorf("%+v in pages of two: %q, want %q", tc.f, walked, tc.want)
		}
	}

	counts, err := st.ShelfKindCounts(ctx, store.ShelfFilter{Query: "mixer", Kind: "motor"})
	if err != nil {
		t.Fatal(err)
	}
	if want := map[string]int{"motor": 1, "switch": 1}; !maps.Equal(counts, want) {
		t.Errorf("kind counts for mixer: %v, want %v (the kind asked for is not applied)", counts, want)
	}
	counts, err = st.ShelfKindCounts(ctx, store.ShelfFilter{})
	if err != nil {
		t.Fatal(err)
	}
	if want := map[string]int{"motor": 3, "battery": 1, "light": 2, "switch": 1}; !maps.Equal(counts, want) {
		t.Errorf("kind counts: %v, want %v", counts, want)
	}
}
