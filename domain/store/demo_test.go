package store_test

import (
	"context"
	"sync"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

func smallDemo() store.DemoData {
	return store.DemoData{
		ShelfKeeper: "demo-keeper",
		Components:  []domain.ComponentInput{part("motor", "Demo motor"), part("battery", "Demo pack"), part("fuse", "Demo fuse")},
		Designs:     []store.DemoDesign{{Name: "Demo cart", Owner: "demo-member", Document: []byte(`{"format":1,"name":"Demo cart","nodes":[]}`)}},
	}
}

func TestSeedDemoOnlyIntoAnEmptyDatabase(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)

	seeded, err := st.SeedDemo(ctx, smallDemo())
	if err != nil || !seeded {
		t.Fatalf("first seed: %t, %v", seeded, err)
	}
	shelf, err := st.Shelf(ctx)
	if err != nil || len(shelf) != 3 {
		t.Fatalf("shelf after seeding: %d items, %v", len(shelf), err)
	}
	list, _, _ := st.ListComponents(ctx, store.ComponentFilter{})
	for _, c := range list {
		if c.Owner != "demo-keeper" || c.Version != 1 {
			t.Errorf("demo component %q owned by %q at version %d", c.Name, c.Owner, c.Version)
		}
	}
	var doc, owner string
	if err := conn.QueryRow(ctx, `SELECT document, owner FROM designs`).Scan(&doc, &owner); err != nil {
		t.Fatal(err)
	}
	if doc != `{"format":1,"name":"Demo cart","nodes":[]}` || owner != "demo-member" {
		t.Errorf("demo design stored as %q by %q", doc, owner)
	}
	trail, err := st.AuditTrail(ctx, "database", "demo", 5)
	if err != nil || len(trail) != 1 || trail[0].Action != "demo.seed" {
		t.Errorf("audit of seeding: %+v, %v", trail, err)
	}

	again, err := st.SeedDemo(ctx, smallDemo())
	if err != nil || again {
		t.Errorf("second seed: %t, %v; want nothing loaded", again, err)
	}
	if n, _ := st.CountComponents(ctx); n != 3 {
		t.Errorf("%d components after seeding twice, want 3", n)
	}
	if n := countRows(t, conn, `SELECT count(*) FROM designs`); n != 1 {
		t.Errorf("%d designs after seeding twice, want 1", n)
	}
}

func TestSeedDemoLeavesRealDataAlone(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	mustCreate(t, st, memberAda, part("sensor", "Members' own sensor"))
	if seeded, err := st.SeedDemo(ctx, smallDemo()); err != nil || seeded {
		t.Fatalf("seed into a database with a component: %t, %v", seeded, err)
	}
	if n, _ := st.CountComponents(ctx); n != 1 {
		t.Errorf("%d components, want only the member's 1", n)
	}

	// A database holding only a design is not empty either.
	st2, dbURL2 := storetest.NewStore(t)
	if _, err := rawConn(t, dbURL2).Exec(ctx, `INSERT INTO designs (name, document, owner) VALUES ('mine', '{}', 'ada')`); err != nil {
		t.Fatal(err)
	}
	if seeded, err := st2.SeedDemo(ctx, smallDemo()); err != nil || seeded {
		t.Errorf("seed into a database with a design: %t, %v", seeded, err)
	}
}

// TestSeedDemoConcurrently stands for replicas starting together: the
// advisory lock lets exactly one of them load the demo.
func TestSeedDemoConcurrently(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	const replicas = 6
	results := make([]bool, replicas)
	errs := make([]error, replicas)
	var wg sync.WaitGroup
	for i := range replicas {
		wg.Go(func() { results[i], errs[i] = st.SeedDemo(ctx, smallDemo()) })
	}
	wg.Wait()
	loads := 0
	for i := range replicas {
		if errs[i] != nil {
			t.Errorf("replica %d: %v", i, errs[i])
		}
		if results[i] {
			loads++
		}
	}
	if loads != 1 {
		t.Errorf("%d replicas loaded the demo, want 1", loads)
	}
	if n, _ := st.CountComponents(ctx); n != 3 {
		t.Errorf("%d components, want 3", n)
	}
}
