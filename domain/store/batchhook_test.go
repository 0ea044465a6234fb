package store

import (
	"context"

	"wattshelf/domain"
)

// AddReviewsTogether stores reviews with one statement, as a
// ReviewBatcher does when they arrive together, so tests can hold that
// statement to what AddReview does for each alone.
func AddReviewsTogether(ctx context.Context, s *Store, actors []domain.User, ins []NewReview) ([]StoredReview, []error, error) {
	batch := make([]reviewToStore, len(ins))
	for i, in := range ins {
		r, err := newReviewToStore(actors[i], in)
		if err != nil {
			return nil, nil, err
		}
		batch[i] = r
	}
	results, err := addReviews(ctx, s.pool, batch)
	if err != nil {
		return nil, nil, err
	}
	reviews, errs := make([]StoredReview, len(results)), make([]error, len(results))
	for i, r := range results {
		reviews[i], errs[i] = r.review, r.err
	}
	return reviews, errs, nil
}

// WriteBatch hands reviews to one of b's writers as a single batch and
// returns what each caller was told.
func WriteBatch(ctx context.Context, b *ReviewBatcher, actors []domain.User, ins []NewReview) ([]StoredReview, []error, error) {
	batch := make([]queuedReview, len(ins))
	for i, in := range ins {
		r, err := newReviewToStore(actors[i], in)
		if err != nil {
			return nil, nil, err
		}
		batch[i] = queuedReview{review: r, done: make(chan reviewStored, 1)}
	}
	conn, err := b.store.pool.Acquire(ctx)
	if err != nil {
		return nil, nil, err
	}
	defer conn.Release()
	_ = b.writeBatch(ctx, conn, batch) // each caller is told its own outcome
	reviews, errs := make([]StoredReview, len(batch)), make([]error, len(batch))
	for i, q := range batch {
		res := <-q.done
		reviews[i], errs[i] = res.review, res.err
	}
	return reviews, errs, nil
}
