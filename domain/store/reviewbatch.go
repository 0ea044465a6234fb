package store

import (
	"context"
	"sync"
	"sync/atomic"
	"time"

	"github.com/jackc/pgx/v5/pgxpool"

	"wattshelf/domain"
)

// ReviewBatcher stores the reviews that requests hand it at about the same
// time with one statement and so one commit. Under load that halves what
// the database spends on each stored review; a review that arrives alone
// goes alone, at once, so nothing waits for company. A review is answered
// only after the statement that stores it has committed, as with
// Store.AddReview.
type ReviewBatcher struct {
	store    *Store
	writers  int
	maxBatch int
	queue    chan queuedReview
	stopped  chan struct{}

	batches, reviews atomic.Uint64
}

type queuedReview struct {
	review reviewToStore
	done   chan reviewStored // buffered: a writer never waits for a caller that gave up
}

// NewReviewBatcher stores reviews through s with up to writers statements
// at once, each of up to maxBatch reviews. Each writer keeps a connection,
// so they take at most half of a pool that leaves one over; in a smaller
// pool there are none, and every review is stored on its own. It stores
// nothing until Run starts.
func NewReviewBatcher(s *Store, writers, maxBatch int) *ReviewBatcher {
	writers = min(writers, int(s.pool.Config().MaxConns-1)/2)
	return &ReviewBatcher{store: s, writers: max(writers, 0), maxBatch: max(maxBatch, 1),
		queue: make(chan queuedReview), stopped: make(chan struct{})}
}

// Run writes batches until ctx ends. Afterwards AddReview stores each
// review on its own, so a server shutting down can still finish the
// requests it holds.
func (b *ReviewBatcher) Run(ctx context.Context) {
	defer close(b.stopped)
	var wg sync.WaitGroup
	for range b.writers {
		wg.Go(func() { b.write(ctx) })
	}
	wg.Wait()
}

// AddReview is Store.AddReview, sharing a statement with the reviews that
// arrive while it waits for a writer.
func (b *ReviewBatcher) AddReview(ctx context.Context, actor domain.User, in NewReview) (StoredReview, error) {
	r, err := newReviewToStore(actor, in)
	if err != nil {
		return StoredReview{}, err
	}
	q := queuedReview{review: r, done: make(chan reviewStored, 1)}
	select {
	case b.queue <- q:
	case <-b.stopped:
		return b.store.AddReview(ctx, actor, in)
	case <-ctx.Done():
		return StoredReview{}, ctx.Err()
	}
	select {
	case res := <-q.done:
		return res.review, res.err
	case <-ctx.Done():
		// The review may still be stored; the caller is no longer told.
		return StoredReview{}, ctx.Err()
	}
}

// Stats returns how many statements stored how many reviews.
func (b *ReviewBatcher) Stats() (batches, reviews uint64) {
	return b.batches.Load(), b.reviews.Load()
}

// batchWriteLimit bounds one statement, so a lost database connection
// does not hold a writer forever.
const batchWriteLimit = 30 * time.Second

func (b *ReviewBatcher) write(ctx context.Context) {
	batch := make([]queuedReview, 0, b.maxBatch)
	// The writer keeps a connection of its own: a batch that queued for
	// one behind the reads would keep all its reviews waiting twice.
	var conn *pgxpool.Conn
	defer func() {
		if conn != nil {
			conn.Release()
		}
	}()
	for {
		batch = batch[:0]
		select {
		case <-ctx.Done():
			return
		case q := <-b.queue:
			batch = append(batch, q)
		}
	gather:
		for len(batch) < b.maxBatch {
			select {
			case q := <-b.queue:
				batch = append(batch, q)
			default:
				break gather
			}
		}
		// A taken review is written even when ctx has just ended: its
		// caller is waiting for it.
		writeCtx, cancel := context.WithTimeout(context.WithoutCancel(ctx), batchWriteLimit)
		if conn == nil {
			var err error
			if conn, err = b.store.pool.Acquire(writeCtx); err != nil {
				conn = nil
				b.answer(batch, nil, err)
				cancel()
				continue
			}
		}
		if err := b.writeBatch(writeCtx, conn, batch); err != nil && IsUnavailable(err) {
			conn.Release() // the pool drops it if it is broken
			conn = nil
		}
		cancel()
	}
}

// writeBatch stores batch through conn and answers every caller in it.
// When the statement fails for a reason other than the connection, each
// review is tried alone, so one bad review cannot fail the others. It
// returns the statement's error.
func (b *ReviewBatcher) writeBatch(ctx context.Context, conn *pgxpool.Conn, batch []queuedReview) error {
	reviews := make([]reviewToStore, len(batch))
	for i, q := range batch {
		reviews[i] = q.review
	}
	results, err := addReviews(ctx, conn, reviews)
	b.batches.Add(1)
	b.reviews.Add(uint64(len(batch)))
	if err == nil || len(batch) == 1 || IsUnavailable(err) {
		b.answer(batch, results, err)
		return err
	}
	for i, q := range batch {
		alone, aloneErr := addReviews(ctx, conn, reviews[i:i+1])
		b.answer([]queuedReview{q}, alone, aloneErr)
	}
	return err
}

// answer tells each caller in batch its result, or err for all.
func (b *ReviewBatcher) answer(batch []queuedReview, results []reviewStored, err error) {
	for i, q := range batch {
		if err != nil {
			q.done <- reviewStored{err: err}
		} else {
			q.done <- results[i]
		}
	}
}
