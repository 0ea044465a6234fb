package api

import (
	"sync"

	"wattshelf/domain/store"
)

// Bounds of the shelf cache: a page of 200 items encodes to about 120 KB,
// so a few megabytes hold every page anyone reads between two changes.
const (
	shelfCacheMaxBytes   = 8 << 20
	shelfCacheMaxEntries = 512
)

// shelfKey names one shelf view: the whole filtered shelf (limit 0) or a
// page of it.
type shelfKey struct {
	filter store.ShelfFilter
	limit  int
	cursor string
}

// size is about what the key itself holds in memory.
func (k shelfKey) size() int {
	return len(k.cursor) + len(k.filter.Query) + len(k.filter.Kind) + len(k.filter.Bin)
}

// shelfPage is an encoded shelf view and its ETag.
type shelfPage struct {
	body []byte
	etag string
}

// shelfCache keeps encoded shelf views for the one shelf revision they were
// read at. The revision comes from the database on every request, so a
// change made through any replica empties the cache of every replica at
// its next request. It is bounded in bytes and entries; when either bound
// would be passed it starts over, which costs one query per view.
type shelfCache struct {
	mu    sync.Mutex
	rev   int64
	pages map[shelfKey]shelfPage
	bytes int
}

func newShelfCache() *shelfCache { return &shelfCache{pages: map[shelfKey]shelfPage{}} }

// get returns the view stored for key at revision rev.
func (sc *shelfCache) get(rev int64, key shelfKey) (shelfPage, bool) {
	sc.mu.Lock()
	defer sc.mu.Unlock()
	if rev != sc.rev {
		return shelfPage{}, false
	}
	p, ok := sc.pages[key]
	return p, ok
}

// put stores a view read at revision rev or later (the page query runs
// after the revision was read, so it may include a newer change: it is then
// fresher than rev, never older). A revision older than the one cached is
// not stored: the cache only moves forward.
func (sc *shelfCache) put(rev int64, key shelfKey, p shelfPage) {
	size := len(p.body) + key.size() + len(p.etag)
	if size > shelfCacheMaxBytes/2 {
		return
	}
	sc.mu.Lock()
	defer sc.mu.Unlock()
	switch {
	case rev < sc.rev:
		return
	case rev > sc.rev:
		sc.rev = rev
		clear(sc.pages)
		sc.bytes = 0
	}
	if old, ok := sc.pages[key]; ok {
		sc.bytes -= len(old.body) + key.size() + len(old.etag)
	}
	if sc.bytes+size > shelfCacheMaxBytes || len(sc.pages) >= shelfCacheMaxEntries {
		clear(sc.pages)
		sc.bytes = 0
	}
	sc.pages[key] = p
	sc.bytes += size
}
