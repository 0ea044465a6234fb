package api_test

import (
	"context"
	"fmt"
	"io"
	"log/slog"
	"net/http"
	"testing"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
	"wattshelf/domain/store"
)

// secondReplica is another router, with its own pool and caches, on a's
// database; the tokens a minted work on it too.
func secondReplica(t *testing.T, a *shelfAPI) *shelfAPI {
	t.Helper()
	st, err := store.Open(context.Background(), a.dbURL)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(st.Close)
	e, err := api.New(api.Config{Store: st, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)), Registry: prometheus.NewRegistry()})
	if err != nil {
		t.Fatal(err)
	}
	return &shelfAPI{t: t, echo: e, store: st, dbURL: a.dbURL, logs: &lockedBuffer{},
		staff: a.staff, owner: a.owner, other: a.other}
}

// TestShelfCacheFollowsAnotherReplica runs two routers on one database:
// whatever one of them has cached, a change made through the other shows
// on its very next answer, page or whole shelf, with a new ETag.
func TestShelfCacheFollowsAnotherReplica(t *testing.T) {
	a := startShelfAPI(t)
	b := secondReplica(t, a)
	for _, name := range []string{"Gear motor", "Fan motor", "Buck board"} {
		a.created(a.owner, component(name, "other", "bin", "M1"))
	}
	type view struct {
		Items []struct {
			ID   int64  `json:"id"`
			Name string `json:"name"`
		} `json:"items"`
	}
	read := func(a *shelfAPI, path string) (view, string) {
		t.Helper()
		r := a.do(http.MethodGet, path, "", nil)
		if r.status != http.StatusOK {
			t.Fatalf("%s: %d %s", path, r.status, r.body)
		}
		var v view
		r.decode(t, &v)
		return v, r.header.Get("ETag")
	}
	for _, path := range []string{"/v1/shelf", "/v1/shelf?limit=2"} {
		before, etag := read(b, path)
		if again, etagAgain := read(b, path); etagAgain != etag || len(again.Items) != len(before.Items) {
			t.Fatalf("%s changed without a write: %q then %q", path, etag, etagAgain)
		}
		first := before.Items[0]
		a.do(http.MethodPatch, fmt.Sprintf("/v1/components/%d", first.ID), a.owner, map[string]any{"name": first.Name + " (tested)"},
			"If-Match", "*")
		after, etagAfter := read(b, path)
		if etagAfter == etag || after.Items[0].Name != first.Name+" (tested)" {
			t.Errorf("%s on the other replica after a rename: ETag %q (was %q), first item %q", path, etagAfter, etag, after.Items[0].Name)
		}
		if r := b.do(http.MethodGet, path, "", nil, "If-None-Match", etag); r.status != http.StatusOK {
			t.Errorf("%s with the ETag from before the rename: %d", path, r.status)
		}
		if r := b.do(http.MethodGet, path, "", nil, "If-None-Match", etagAfter); r.status != http.StatusNotModified || len(r.body) != 0 {
			t.Errorf("%s with the current ETag: %d, %d bytes", path, r.status, len(r.body))
		}
	}
	// A delete through the other replica empties a page that was cached here.
	whole, _ := read(b, "/v1/shelf")
	for _, it := range whole.Items {
		if r := a.do(http.MethodDelete, fmt.Sprintf("/v1/components/%d", it.ID), a.owner, nil); r.status != http.StatusNoContent {
			t.Fatalf("delete %d: %d %s", it.ID, r.status, r.body)
		}
	}
	if v, _ := read(b, "/v1/shelf?limit=2"); len(v.Items) != 0 {
		t.Errorf("page after every component was deleted elsewhere: %v", v.Items)
	}
}
