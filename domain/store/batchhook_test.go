package store

import (
	"context"

	"wattshelf/domain"
)

// AddReviewsTogether stores reviews with one statement, as a
// Writer does when they arrive together, so tests can hold that
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
		reviews[i], errs[i] = r.value, r.err
	}
	return reviews, errs, nil
}

// WriteReviewBatch hands reviews to one of w's writers as a single batch
// and returns what each caller was told.
func WriteReviewBatch(ctx context.Context, w *Writer, actors []domain.User, ins []NewReview) ([]StoredReview, []error, error) {
	batch := make([]queued[reviewToStore, StoredReview], len(ins))
	for i, in := range ins {
		r, err := newReviewToStore(actors[i], in)
		if err != nil {
			return nil, nil, err
		}
		batch[i] = queued[reviewToStore, StoredReview]{item: r, done: make(chan outcome[StoredReview], 1)}
	}
	writeBatch(ctx, w.store.pool, w, batch, addReviews)
	reviews, errs := make([]StoredReview, len(batch)), make([]error, len(batch))
	for i, q := range batch {
		res := <-q.done
		reviews[i], errs[i] = res.value, res.err
	}
	return reviews, errs, nil
}

// CreateComponentsTogether creates components with one statement, as a
// Writer does when they arrive together.
func CreateComponentsTogether(ctx context.Context, s *Store, actor domain.User, ins []domain.ComponentInput) ([]domain.Component, error) {
	batch := make([]componentToStore, len(ins))
	for i, in := range ins {
		c, err := newComponentToStore(actor, in)
		if err != nil {
			return nil, err
		}
		batch[i] = c
	}
	results, err := createComponents(ctx, s.pool, batch)
	if err != nil {
		return nil, err
	}
	created := make([]domain.Component, len(results))
	for i, r := range results {
		created[i] = r.value
	}
	return created, nil
}
