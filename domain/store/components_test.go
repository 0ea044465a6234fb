package store_test

import (
	"context"
	"errors"
	"slices"
	"sync"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

var (
	shelfKeeper = domain.User{Name: "kim", Role: domain.RoleStaff}
	memberAda   = domain.User{Name: "ada", Role: domain.RoleMember}
	memberBo    = domain.User{Name: "bo", Role: domain.RoleMember}
)

func volts(v float64) *float64 { return &v }

// part is a valid component input of the given kind and name.
func part(kind, name string) domain.ComponentInput {
	in := domain.ComponentInput{Name: name, Kind: kind, Quantity: 1}
	in.Defaults()
	return in
}

// rawConn opens a plain connection to the test database for checks the
// store has no query for.
func rawConn(t *testing.T, dbURL string) *pgx.Conn {
	t.Helper()
	conn, err := pgx.Connect(context.Background(), dbURL)
	if err != nil {
		t.Fatalf("connect to test database: %v", err)
	}
	t.Cleanup(func() { conn.Close(context.Background()) })
	return conn
}

func countRows(t *testing.T, conn *pgx.Conn, query string, args ...any) int {
	t.Helper()
	var n int
	if err := conn.QueryRow(context.Background(), query, args...).Scan(&n); err != nil {
		t.Fatalf("%s: %v", query, err)
	}
	return n
}

func mustCreate(t *testing.T, st *store.Store, who domain.User, in domain.ComponentInput) domain.Component {
	t.Helper()
	c, err := st.CreateComponent(context.Background(), who, in)
	if err != nil {
		t.Fatalf("create %q: %v", in.Name, err)
	}
	return c
}

func TestComponentLifecycle(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)

	in := part("regulator", "Buck module from a car phone charger")
	in.Description, in.Origin, in.Bin, in.Quantity = "Adjustable output", "car phone charger", "R2", 4
	in.Condition, in.SpecSource, in.Notes = "working", "datasheet", "two have a cracked pot"
	in.MinInputV, in.MaxInputV, in.OutputV, in.MaxOutputA = volts(4.5), volts(28), volts(5), volts(3)
	series := 2
	in.Series, in.Topology = &series, "buck"

	before := time.Now().Add(-time.Minute)
	created := mustCreate(t, st, memberAda, in)
	if created.ID < 1 || created.Version != 1 || created.Owner != "ada" {
		t.Fatalf("created id %d version %d owner %q; want a positive id, version 1, owner ada", created.ID, created.Version, created.Owner)
	}
	if created.CreatedAt.Before(before) || !created.UpdatedAt.Equal(created.CreatedAt) {
		t.Errorf("timestamps created %v updated %v", created.CreatedAt, created.UpdatedAt)
	}
	got, err := st.Component(ctx, created.ID)
	if err != nil {
		t.Fatal(err)
	}
	// Every field survives the round trip, the JSON-held electrical ones too.
	if got.ComponentInput.Name != in.Name || got.Description != in.Description || got.Origin != in.Origin ||
		got.Bin != in.Bin || got.Quantity != 4 || got.Condition != "working" || got.SpecSource != "datasheet" ||
		got.Notes != in.Notes || got.Topology != "buck" || *got.MinInputV != 4.5 || *got.MaxInputV != 28 ||
		*got.OutputV != 5 || *got.MaxOutputA != 3 || *got.Series != 2 || got.MinV != nil || got.StallA != nil {
		t.Errorf("read back %+v, want the input %+v", got.ComponentInput, in)
	}

	changed := in
	changed.Quantity, changed.MaxOutputA, changed.OutputV = 3, volts(2.5), nil
	updated, err := st.UpdateComponent(ctx, memberAda, created.ID, 1, changed)
	if err != nil {
		t.Fatal(err)
	}
	if updated.Version != 2 || updated.Quantity != 3 || *updated.MaxOutputA != 2.5 || updated.OutputV != nil {
		t.Errorf("after update: version %d quantity %d max_output_a %v output_v %v", updated.Version, updated.Quantity, updated.MaxOutputA, updated.OutputV)
	}
	if !updated.CreatedAt.Equal(created.CreatedAt) || updated.UpdatedAt.Before(created.UpdatedAt) {
		t.Errorf("update moved created_at or not updated_at: %v / %v", updated.CreatedAt, updated.UpdatedAt)
	}
	if updated.Owner != "ada" {
		t.Errorf("update changed the owner to %q", updated.Owner)
	}

	if err := st.DeleteComponent(ctx, memberAda, created.ID, 2); err != nil {
		t.Fatal(err)
	}
	for name, err := range map[string]error{
		"get":    func() error { _, err := st.Component(ctx, created.ID); return err }(),
		"update": func() error { _, err := st.UpdateComponent(ctx, memberAda, created.ID, 0, in); return err }(),
		"delete": st.DeleteComponent(ctx, memberAda, created.ID, 0),
	} {
		if !errors.Is(err, domain.ErrNotFound) {
			t.Errorf("%s after delete: %v, want not found", name, err)
		}
	}
}

func TestComponentOwnershipAndVersions(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	c := mustCreate(t, st, memberAda, part("motor", "Window-winder motor"))
	staffs := mustCreate(t, st, shelfKeeper, part("fuse", "Blade fuse 5 A"))

	tests := []struct {
		name    string
		who     domain.User
		id      int64
		version int64
		want    error
	}{
		{"other member", memberBo, c.ID, 1, domain.ErrForbidden},
		{"member on staff's record", memberAda, staffs.ID, 1, domain.ErrForbidden},
		// Ownership is checked before the version, so a stranger learns nothing from it.
		{"other member with a stale version", memberBo, c.ID, 9, domain.ErrForbidden},
		{"owner with a stale version", memberAda, c.ID, 9, domain.ErrPreconditionFailed},
		{"missing record", memberAda, c.ID + 1000, 1, domain.ErrNotFound},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := st.UpdateComponent(ctx, tt.who, tt.id, tt.version, part("motor", "renamed"))
			if !errors.Is(err, tt.want) {
				t.Errorf("update: %v, want %v", err, tt.want)
			}
			if err := st.DeleteComponent(ctx, tt.who, tt.id, tt.version); !errors.Is(err, tt.want) {
				t.Errorf("delete: %v, want %v", err, tt.want)
			}
		})
	}
	for _, id := range []int64{c.ID, staffs.ID} {
		got, err := st.Component(ctx, id)
		if err != nil || got.Version != 1 || got.Name == "renamed" {
			t.Errorf("refused changes altered component %d: %+v, %v", id, got, err)
		}
	}

	// Staff may change anyone's record; version 0 skips the version check.
	up, err := st.UpdateComponent(ctx, shelfKeeper, c.ID, 0, part("motor", "Window-winder motor, relabelled"))
	if err != nil || up.Version != 2 || up.Owner != "ada" {
		t.Fatalf("staff update: %+v, %v", up, err)
	}
	if err := st.DeleteComponent(ctx, shelfKeeper, c.ID, 1); !errors.Is(err, domain.ErrPreconditionFailed) {
		t.Errorf("staff delete with stale version: %v", err)
	}
	if err := st.DeleteComponent(ctx, shelfKeeper, c.ID, 2); err != nil {
		t.Errorf("staff delete: %v", err)
	}
}

func TestConcurrentUpdatesOfOneVersion(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	c := mustCreate(t, st, memberAda, part("battery", "Drill pack"))

	const writers = 12
	start := make(chan struct{})
	errs := make([]error, writers)
	var wg sync.WaitGroup
	for i := range writers {
		wg.Go(func() {
			in := part("battery", "Drill pack")
			in.Quantity = i + 10
			<-start
			_, errs[i] = st.UpdateComponent(ctx, memberAda, c.ID, 1, in)
		})
	}
	close(start)
	wg.Wait()

	winners := 0
	winner := -1
	for i, err := range errs {
		switch {
		case err == nil:
			winners++
			winner = i
		case !errors.Is(err, domain.ErrPreconditionFailed):
			t.Errorf("writer %d: %v, want precondition failed", i, err)
		}
	}
	if winners != 1 {
		t.Fatalf("%d writers won, want exactly 1", winners)
	}
	got, err := st.Component(ctx, c.ID)
	if err != nil {
		t.Fatal(err)
	}
	if got.Version != 2 || got.Quantity != winner+10 {
		t.Errorf("stored version %d quantity %d, want version 2 with the winner's quantity %d", got.Version, got.Quantity, winner+10)
	}
}

func TestListComponentsFilters(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)

	type fixture struct {
		kind, name, desc, bin string
		set                   func(*domain.ComponentInput)
	}
	fixtures := []fixture{
		{"motor", "Hand-mixer gear motor", "brushed can motor", "M1", func(c *domain.ComponentInput) { c.MinV, c.MaxV = volts(3), volts(8.4) }},
		{"motor", "Blind winder motor", "metal gears", "M1", func(c *domain.ComponentInput) { c.RatedV = volts(12) }},
		{"regulator", "Buck board", "adjustable", "R2", func(c *domain.ComponentInput) { c.MinInputV, c.MaxInputV = volts(4.5), volts(28) }},
		{"connector", "Ring terminal", "crimped", "C1", func(c *domain.ComponentInput) { c.RatingV = volts(60) }},
		{"sensor", "Reed switch", "no voltage known", "S1", nil},
		// Names with LIKE and SQL metacharacters, and decoys that would match
		// if those characters were taken as wildcards.
		{"light", "100% bright strip", "", "L1", nil},
		{"light", "1000 lumen lamp", "", "L1", nil},
		{"audio", "amp_board", "", "A1", nil},
		{"audio", "ampXboard", "", "A1", nil},
		{"switch", "O'Brien toggle", "", "S2", nil},
		{"switch", "OBrien rocker", "", "S2", nil},
		{"other", `probe\tip`, "", "X1", nil},
		{"other", "probe tip", "", "X1", nil},
	}
	for _, f := range fixtures {
		in := part(f.kind, f.name)
		in.Description, in.Bin = f.desc, f.bin
		if f.set != nil {
			f.set(&in)
		}
		mustCreate(t, st, shelfKeeper, in)
	}

	tests := []struct {
		name   string
		filter store.ComponentFilter
		want   []string
	}{
		{"kind", store.ComponentFilter{Kind: "motor"}, []string{"Hand-mixer gear motor", "Blind winder motor"}},
		{"kind with no parts", store.ComponentFilter{Kind: "camera"}, nil},
		{"bin is exact", store.ComponentFilter{Bin: "S"}, nil},
		{"bin", store.ComponentFilter{Bin: "R2"}, []string{"Buck board"}},
		{"q in name, any case", store.ComponentFilter{Query: "GEAR MOTOR"}, []string{"Hand-mixer gear motor"}},
		{"q in description", store.ComponentFilter{Query: "metal gears"}, []string{"Blind winder motor"}},
		{"q percent is literal", store.ComponentFilter{Query: "100%"}, []string{"100% bright strip"}},
		{"q lone percent", store.ComponentFilter{Query: "%"}, []string{"100% bright strip"}},
		{"q underscore is literal", store.ComponentFilter{Query: "amp_board"}, []string{"amp_board"}},
		{"q quote", store.ComponentFilter{Query: "O'Brien"}, []string{"O'Brien toggle"}},
		{"q backslash", store.ComponentFilter{Query: `probe\t`}, []string{`probe\tip`}},
		{"q lone backslash", store.ComponentFilter{Query: `\`}, []string{`probe\tip`}},
		{"q SQL injection attempt", store.ComponentFilter{Query: `' OR 1=1 --`}, nil},
		// Rated 12 V with the ±10 % of domain.RatedVoltageTolerance: 10.8–13.2 V.
		{"fits inside a min/max window", store.ComponentFilter{FitsV: volts(5)}, []string{"Hand-mixer gear motor", "Buck board"}},
		{"fits at the window's top edge", store.ComponentFilter{FitsV: volts(8.4)}, []string{"Hand-mixer gear motor", "Buck board"}},
		{"fits above a motor's max_v", store.ComponentFilter{FitsV: volts(9)}, []string{"Buck board"}},
		{"fits below a regulator's input window", store.ComponentFilter{FitsV: volts(4)}, []string{"Hand-mixer gear motor"}},
		{"fits around a rated voltage", store.ComponentFilter{FitsV: volts(13)}, []string{"Blind winder motor", "Buck board"}},
		{"a connector's rating is no supply", store.ComponentFilter{FitsV: volts(48)}, nil},
		{"fits nothing", store.ComponentFilter{FitsV: volts(61)}, nil},
		{"kind and fits together", store.ComponentFilter{Kind: "motor", FitsV: volts(11)}, []string{"Blind winder motor"}},
		{"bin and q together", store.ComponentFilter{Bin: "S2", Query: "rocker"}, []string{"OBrien rocker"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			list, more, err := st.ListComponents(ctx, tt.filter)
			if err != nil {
				t.Fatal(err)
			}
			var names []string
			for _, c := range list {
				names = append(names, c.Name)
			}
			if !slices.Equal(names, tt.want) || more {
				t.Errorf("got %q (more %t), want %q", names, more, tt.want)
			}
		})
	}
}

func TestListComponentsPages(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	var ids []int64
	for i := range 7 {
		kind := "wire"
		if i%2 == 1 {
			kind = "fuse"
		}
		ids = append(ids, mustCreate(t, st, shelfKeeper, part(kind, "part")).ID)
	}

	var seen []int64
	after := int64(0)
	var pageSizes []int
	for range 10 {
		list, more, err := st.ListComponents(ctx, store.ComponentFilter{AfterID: after, Limit: 3})
		if err != nil {
			t.Fatal(err)
		}
		pageSizes = append(pageSizes, len(list))
		for _, c := range list {
			seen = append(seen, c.ID)
		}
		if !more {
			break
		}
		after = list[len(list)-1].ID
	}
	if !slices.Equal(pageSizes, []int{3, 3, 1}) || !slices.Equal(seen, ids) {
		t.Errorf("pages of %v holding %v, want pages 3,3,1 holding %v in order", pageSizes, seen, ids)
	}

	// A page that ends exactly at the last row says no more follow.
	list, more, err := st.ListComponents(ctx, store.ComponentFilter{AfterID: ids[3], Limit: 3})
	if err != nil || len(list) != 3 || more {
		t.Errorf("last full page: %d items, more %t, %v", len(list), more, err)
	}
	// Filters and cursors combine.
	list, more, err = st.ListComponents(ctx, store.ComponentFilter{Kind: "fuse", AfterID: ids[1], Limit: 1})
	if err != nil || len(list) != 1 || list[0].ID != ids[3] || !more {
		t.Errorf("filtered page after %d: %v, more %t, %v", ids[1], list, more, err)
	}
	// No limit means the default page, which holds all seven.
	list, more, err = st.ListComponents(ctx, store.ComponentFilter{})
	if err != nil || len(list) != 7 || more {
		t.Errorf("default page: %d items, more %t, %v", len(list), more, err)
	}
}

func TestComponentsByIDShelfAndCount(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)

	if n, err := st.CountComponents(ctx); err != nil || n != 0 {
		t.Fatalf("empty count %d, %v", n, err)
	}
	if shelf, err := st.Shelf(ctx); err != nil || len(shelf) != 0 {
		t.Fatalf("empty shelf %v, %v", shelf, err)
	}
	mk := func(name, bin string) domain.Component {
		in := part("light", name)
		in.Bin, in.Notes = bin, "internal note"
		return mustCreate(t, st, memberAda, in)
	}
	b := mk("Beta lamp", "B")
	a2 := mk("Zeta lamp", "A")
	a1 := mk("Alpha lamp", "A")

	found, err := st.ComponentsByID(ctx, []int64{a1.ID, b.ID, 99999})
	if err != nil {
		t.Fatal(err)
	}
	if len(found) != 2 || found[a1.ID].Name != "Alpha lamp" || found[b.ID].Name != "Beta lamp" {
		t.Errorf("by id: %v", found)
	}
	if found, err := st.ComponentsByID(ctx, nil); err != nil || len(found) != 0 {
		t.Errorf("no ids: %v, %v", found, err)
	}

	shelf, err := st.Shelf(ctx)
	if err != nil {
		t.Fatal(err)
	}
	var order []int64
	for _, it := range shelf {
		order = append(order, it.ID)
	}
	if want := []int64{a1.ID, a2.ID, b.ID}; !slices.Equal(order, want) {
		t.Errorf("shelf order %v, want by bin then name %v", order, want)
	}
	if n, err := st.CountComponents(ctx); err != nil || n != 3 {
		t.Errorf("count %d, %v", n, err)
	}
}

// TestShelfRevisionFollowsEveryChange holds the promise the shelf cache
// rests on: the revision moves with every committed change to the
// components, whoever makes it, and stays put otherwise.
func TestShelfRevisionFollowsEveryChange(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	// A second pool on the same database stands for another replica.
	other, err := store.Open(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer other.Close()
	rev := func(s *store.Store) int64 {
		t.Helper()
		r, err := s.ShelfRevision(ctx)
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	last := rev(st)
	moved := func(what string) {
		t.Helper()
		now, seen := rev(st), rev(other)
		if now <= last || seen != now {
			t.Errorf("after %s: revision %d here, %d on the other replica; was %d", what, now, seen, last)
		}
		last = now
	}
	still := func(what string) {
		t.Helper()
		if now := rev(other); now != last {
			t.Errorf("after %s: revision %d, want it to stay %d", what, now, last)
		}
	}

	c := mustCreate(t, st, memberAda, part("motor", "Wiper motor"))
	moved("a create")
	if _, err := st.Shelf(ctx); err != nil {
		t.Fatal(err)
	}
	if _, err := st.AddMeasurement(ctx, memberAda, c.ID, domain.MeasurementInput{VoltageV: 12, CurrentA: 1.1}); err != nil {
		t.Fatal(err)
	}
	still("a shelf read and a measurement")
	if _, err := other.UpdateComponent(ctx, memberAda, c.ID, 1, part("motor", "Wiper motor, 12 V")); err != nil {
		t.Fatal(err)
	}
	moved("an update on the other replica")
	if _, err := st.UpdateComponent(ctx, memberAda, c.ID, 1, part("motor", "stale")); !errors.Is(err, domain.ErrPreconditionFailed) {
		t.Fatalf("stale update: %v", err)
	}
	still("a refused update")

	// A change whose transaction rolls back leaves the revision alone.
	conn := rawConn(t, dbURL)
	if _, err := conn.Exec(ctx, `ALTER TABLE audit ADD CONSTRAINT refuse_for_test CHECK (action <> 'component.delete')`); err != nil {
		t.Fatal(err)
	}
	if err := st.DeleteComponent(ctx, memberAda, c.ID, 2); err == nil {
		t.Fatal("delete succeeded although its audit row was refused")
	}
	still("a delete that rolled back")
	if _, err := conn.Exec(ctx, `ALTER TABLE audit DROP CONSTRAINT refuse_for_test`); err != nil {
		t.Fatal(err)
	}
	if err := st.DeleteComponent(ctx, memberAda, c.ID, 2); err != nil {
		t.Fatal(err)
	}
	moved("a delete")

	// Concurrent writers (spread over the counters) each move it once.
	const writers = 8
	var wg sync.WaitGroup
	for i := range writers {
		wg.Go(func() {
			if _, err := st.CreateComponent(ctx, memberBo, part("light", "Lamp "+string(rune('A'+i)))); err != nil {
				t.Error(err)
			}
		})
	}
	wg.Wait()
	if now := rev(other); now != last+writers {
		t.Errorf("after %d concurrent creates: revision %d, want %d", writers, now, last+writers)
	}
}
