package store

import (
	"context"
	"sync"
	"sync/atomic"
	"time"

	"wattshelf/domain"
)

// Writer stores the reviews, and creates the components, that requests
// hand it at about the same time with one statement of each kind, and so
// one commit. Under load that halves what the database spends on each
// write; one that arrives alone goes alone, at once, so nothing waits for
// company. Each caller is answered only after the statement that stored
// its write has committed, as with the Store's own methods, which give
// the same answers one write at a time.
type Writer struct {
	store    *Store
	writers  int
	maxBatch int

	reviews    chan queued[reviewToStore, StoredReview]
	components chan queued[componentToStore, domain.Component]
	stopped    chan struct{}

	statements, writes atomic.Uint64
}

// outcome is what became of one write.
type outcome[V any] struct {
	value V
	err   error
}

// queued is a write waiting for a writer, and where to answer it.
type queued[T, V any] struct {
	item T
	done chan outcome[V] // buffered: a writer never waits for a caller that gave up
}

// NewWriter writes through s with up to writers statements at once, each
// of up to maxBatch writes. It writes nothing until Run starts.
func NewWriter(s *Store, writers, maxBatch int) *Writer {
	return &Writer{store: s, writers: max(writers, 1), maxBatch: max(maxBatch, 1),
		reviews:    make(chan queued[reviewToStore, StoredReview]),
		components: make(chan queued[componentToStore, domain.Component]),
		stopped:    make(chan struct{})}
}

// Run writes batches until ctx ends. Afterwards every write goes alone
// through the Store, so a server shutting down can still finish the
// requests it holds.
func (w *Writer) Run(ctx context.Context) {
	defer close(w.stopped)
	var wg sync.WaitGroup
	for range w.writers {
		wg.Go(func() { w.write(ctx) })
	}
	wg.Wait()
}

// AddReview is Store.AddReview, sharing a statement with the reviews that
// arrive while it waits for a writer.
func (w *Writer) AddReview(ctx context.Context, actor domain.User, in NewReview) (StoredReview, error) {
	r, err := newReviewToStore(actor, in)
	if err != nil {
		return StoredReview{}, err
	}
	return submit(ctx, w, w.reviews, r, addReviews)
}

// CreateComponent is Store.CreateComponent, sharing a statement with the
// components that arrive while it waits for a writer.
func (w *Writer) CreateComponent(ctx context.Context, actor domain.User, in domain.ComponentInput) (domain.Component, error) {
	c, err := newComponentToStore(actor, in)
	if err != nil {
		return domain.Component{}, err
	}
	return submit(ctx, w, w.components, c, createComponents)
}

// Stats returns how many statements carried how many writes.
func (w *Writer) Stats() (statements, writes uint64) {
	return w.statements.Load(), w.writes.Load()
}

// submit hands item to a writer and waits for its outcome; once the
// writers have stopped it writes item alone instead, with write.
func submit[T, V any](ctx context.Context, w *Writer, queue chan queued[T, V], item T,
	write func(context.Context, querier, []T) ([]outcome[V], error)) (V, error) {
	var none V
	q := queued[T, V]{item: item, done: make(chan outcome[V], 1)}
	select {
	case queue <- q:
	case <-w.stopped:
		return writeAlone(ctx, w.store.pool, item, write)
	case <-ctx.Done():
		return none, ctx.Err()
	}
	select {
	case res := <-q.done:
		return res.value, res.err
	case <-ctx.Done():
		// The write may still be stored; the caller is no longer told.
		return none, ctx.Err()
	}
}

// writeAlone writes one item with a statement made for batches.
func writeAlone[T, V any](ctx context.Context, db querier, item T,
	write func(context.Context, querier, []T) ([]outcome[V], error)) (V, error) {
	results, err := write(ctx, db, []T{item})
	if err != nil {
		var none V
		return none, err
	}
	return results[0].value, results[0].err
}

// batchWriteLimit bounds one statement, as api.DatabaseWaitLimit bounds a
// request: when it has passed, no caller in the batch is waiting any more.
const batchWriteLimit = 5 * time.Second

func (w *Writer) write(ctx context.Context) {
	for {
		var batch func(context.Context)
		select {
		case <-ctx.Done():
			return
		case q := <-w.reviews:
			batch = func(ctx context.Context) {
				writeBatch(ctx, w.store.pool, w, gather(q, w.reviews, w.maxBatch), addReviews)
			}
		case q := <-w.components:
			batch = func(ctx context.Context) {
				writeBatch(ctx, w.store.pool, w, gather(q, w.components, w.maxBatch), createComponents)
			}
		}
		// A taken write is written even when ctx has just ended: its
		// caller is waiting for it.
		writeCtx, cancel := context.WithTimeout(context.WithoutCancel(ctx), batchWriteLimit)
		batch(writeCtx)
		cancel()
	}
}

// gather takes first and whatever else is waiting in queue, up to most.
func gather[T, V any](first queued[T, V], queue chan queued[T, V], most int) []queued[T, V] {
	batch := []queued[T, V]{first}
	for len(batch) < most {
		select {
		case q := <-queue:
			batch = append(batch, q)
		default:
			return batch
		}
	}
	return batch
}

// writeBatch writes batch with write, which stores every item or none,
// and answers every caller in it. When the statement fails for a reason
// other than the connection, each item is tried alone, so one bad write
// cannot fail the others.
func writeBatch[T, V any](ctx context.Context, db querier, w *Writer, batch []queued[T, V],
	write func(context.Context, querier, []T) ([]outcome[V], error)) {
	items := make([]T, len(batch))
	for i, q := range batch {
		items[i] = q.item
	}
	results, err := write(ctx, db, items)
	w.statements.Add(1)
	w.writes.Add(uint64(len(batch)))
	if err == nil || len(batch) == 1 || IsUnavailable(err) {
		answer(batch, results, err)
		return
	}
	for _, q := range batch {
		v, err := writeAlone(ctx, db, q.item, write)
		q.done <- outcome[V]{value: v, err: err}
	}
}

// answer tells each caller in batch its outcome, or err for all.
func answer[T, V any](batch []queued[T, V], results []outcome[V], err error) {
	for i, q := range batch {
		if err != nil {
			q.done <- outcome[V]{err: err}
		} else {
			q.done <- results[i]
		}
	}
}
