package api

import (
	"bytes"
	"strconv"
	"testing"
)

func TestShelfCacheKeepsOneRevisionWithinItsBounds(t *testing.T) {
	sc := newShelfCache()
	page := func(n int) shelfPage { return shelfPage{body: bytes.Repeat([]byte("x"), n), etag: `"e"`} }
	whole, first := shelfKey{}, shelfKey{limit: 50}

	sc.put(7, whole, page(10))
	sc.put(7, first, page(20))
	if p, ok := sc.get(7, whole); !ok || len(p.body) != 10 {
		t.Fatalf("whole shelf at 7: %d bytes, %t", len(p.body), ok)
	}
	if _, ok := sc.get(8, whole); ok {
		t.Error("revision 8 served what was read at 7")
	}
	sc.put(6, whole, page(30))
	if p, _ := sc.get(7, whole); len(p.body) != 10 {
		t.Error("a view read at an older revision replaced the current one")
	}
	sc.put(8, whole, page(40))
	if _, ok := sc.get(8, first); ok {
		t.Error("the page read at 7 survived the move to 8")
	}
	if _, ok := sc.get(7, whole); ok {
		t.Error("revision 7 still answers after the move to 8")
	}

	// Many distinct cursors (a crawler, or a client making them up) stay
	// within the entry bound; big views stay within the byte bound.
	for i := range 3 * shelfCacheMaxEntries {
		sc.put(8, shelfKey{limit: 50, cursor: strconv.Itoa(i)}, page(100))
		if len(sc.pages) > shelfCacheMaxEntries || sc.bytes > shelfCacheMaxBytes {
			t.Fatalf("after %d puts: %d entries, %d bytes", i+1, len(sc.pages), sc.bytes)
		}
	}
	for i := range 20 {
		sc.put(8, shelfKey{limit: 200, cursor: strconv.Itoa(i)}, page(shelfCacheMaxBytes/5))
		if sc.bytes > shelfCacheMaxBytes {
			t.Fatalf("after %d big puts: %d bytes", i+1, sc.bytes)
		}
	}
	sc.put(8, whole, page(shelfCacheMaxBytes))
	if p, ok := sc.get(8, whole); ok && len(p.body) == shelfCacheMaxBytes {
		t.Error("a view larger than half the cache was kept")
	}
	var sum int
	for k, p := range sc.pages {
		sum += len(p.body) + len(k.cursor) + len(p.etag)
	}
	if sum != sc.bytes {
		t.Errorf("cache counts %d bytes, holds %d", sc.bytes, sum)
	}
}
