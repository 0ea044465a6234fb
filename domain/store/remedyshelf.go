package store

import (
	"context"
	"fmt"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
	"wattshelf/domain/review"
)

// ShelfCandidates returns the parts of the given kinds that could serve a
// remedy: at least one on the shelf and not marked faulty, in id order.
// Which of them fit a remedy's ratings is review.PartNeed.Fits's to say.
func (s *Store) ShelfCandidates(ctx context.Context, kinds []string) ([]domain.Component, error) {
	if len(kinds) == 0 {
		return nil, nil
	}
	rows, err := s.pool.Query(ctx, `SELECT `+componentColumns+` FROM components
		WHERE kind = ANY($1) AND quantity > 0 AND condition <> 'faulty' ORDER BY id`, kinds)
	if err != nil {
		return nil, fmt.Errorf("read shelf parts for remedies: %w", err)
	}
	list, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (domain.Component, error) { return scanComponent(r) })
	if err != nil {
		return nil, fmt.Errorf("read shelf parts for remedies: %w", err)
	}
	return list, nil
}

// FillShelf lists under each of rep's remedies that calls for a part the
// shelf's parts that fit it, as the shelf holds them now. A report whose
// remedies call for no part costs no query.
func (s *Store) FillShelf(ctx context.Context, rep *review.Report) error {
	kinds := rep.PartKinds()
	if len(kinds) == 0 {
		return nil
	}
	shelf, err := s.ShelfCandidates(ctx, kinds)
	if err != nil {
		return err
	}
	rep.FillShelf(shelf)
	return nil
}
