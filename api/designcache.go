package api

import (
	"sync"

	"wattshelf/domain/store"
)

// designCacheMaxBytes bounds the documents remembered: a 30-node design is
// about 5 KB, so this holds well over a thousand.
const designCacheMaxBytes = 8 << 20

// designCache remembers the designs reviewed lately, so storing a review
// usually costs one database round trip instead of two. A remembered copy
// is never trusted on its own: the store keeps a review only if the
// design is still at the version the copy was read at, and when it is not
// the handler forgets the copy and reads the design again. So an edit
// through any replica takes effect at the next review.
type designCache struct {
	mu      sync.Mutex
	designs map[int64]store.StoredDesign
	bytes   int
}

func newDesignCache() *designCache {
	return &designCache{designs: map[int64]store.StoredDesign{}}
}

func (dc *designCache) get(id int64) (store.StoredDesign, bool) {
	dc.mu.Lock()
	defer dc.mu.Unlock()
	d, ok := dc.designs[id]
	return d, ok
}

// put remembers d, starting over when the bound would be passed: that
// costs one read per design, and keeps the cache free of bookkeeping.
func (dc *designCache) put(d store.StoredDesign) {
	dc.mu.Lock()
	defer dc.mu.Unlock()
	dc.forgetLocked(d.ID)
	size := designBytes(d)
	if dc.bytes+size > designCacheMaxBytes {
		clear(dc.designs)
		dc.bytes = 0
	}
	dc.designs[d.ID] = d
	dc.bytes += size
}

func (dc *designCache) forget(id int64) {
	dc.mu.Lock()
	defer dc.mu.Unlock()
	dc.forgetLocked(id)
}

func (dc *designCache) forgetLocked(id int64) {
	if old, ok := dc.designs[id]; ok {
		dc.bytes -= designBytes(old)
		delete(dc.designs, id)
	}
}

func designBytes(d store.StoredDesign) int { return len(d.Document) + len(d.Name) + len(d.Owner) }
