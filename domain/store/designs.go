package store

import (
	"context"
	"encoding/json"
	"fmt"
	"time"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
)

// DesignSummary describes a stored design without its document, for
// listings that would otherwise carry every document in full.
type DesignSummary struct {
	ID        int64     `json:"id"`
	Name      string    `json:"name"`
	Owner     string    `json:"owner"`
	CreatedAt time.Time `json:"created_at"`
	UpdatedAt time.Time `json:"updated_at"`
	Version   int64     `json:"version"`
}

// StoredDesign is a stored design with its document exactly as the member
// sent it.
type StoredDesign struct {
	DesignSummary
	Document json.RawMessage `json:"document"`
}

// DesignFilter narrows a listing. Zero values do not filter.
type DesignFilter struct {
	Owner   string
	AfterID int64 // cursor: list ids above this
	Limit   int
}

const designSummaryColumns = `id, name, owner, created_at, updated_at, version`

func scanDesignSummary(row pgx.Row) (DesignSummary, error) {
	var d DesignSummary
	err := row.Scan(&d.ID, &d.Name, &d.Owner, &d.CreatedAt, &d.UpdatedAt, &d.Version)
	return d, err
}

func scanStoredDesign(row pgx.Row) (StoredDesign, error) {
	var d StoredDesign
	var doc string
	err := row.Scan(&d.ID, &d.Name, &d.Owner, &d.CreatedAt, &d.UpdatedAt, &d.Version, &doc)
	d.Document = json.RawMessage(doc)
	return d, err
}

// CreateDesign stores a new design owned by actor. The caller has checked
// the document; it is kept byte for byte.
func (s *Store) CreateDesign(ctx context.Context, actor domain.User, name string, document []byte) (StoredDesign, error) {
	var d StoredDesign
	err := s.inTx(ctx, func(tx pgx.Tx) error {
		var err error
		d, err = scanStoredDesign(tx.QueryRow(ctx, `INSERT INTO designs (name, document, owner)
			VALUES ($1, $2, $3) RETURNING `+designSummaryColumns+`, document`,
			name, string(document), actor.Name))
		if err != nil {
			return fmt.Errorf("insert design: %w", err)
		}
		return audit(ctx, tx, actor.Name, "design.create", "design", d.ID, map[string]any{"name": name})
	})
	return d, err
}

// Design returns one design with its document. Whether the caller may see
// it is the caller's decision: the owner and staff may.
func (s *Store) Design(ctx context.Context, id int64) (StoredDesign, error) {
	d, err := scanStoredDesign(s.pool.QueryRow(ctx, `SELECT `+designSummaryColumns+`, document
		FROM designs WHERE id = $1`, id))
	if err != nil {
		return d, notFound(err, fmt.Sprintf("design %d", id))
	}
	return d, nil
}

// ListDesigns returns up to f.Limit designs in id order after f.AfterID,
// and whether more follow.
func (s *Store) ListDesigns(ctx context.Context, f DesignFilter) ([]DesignSummary, bool, error) {
	limit := f.Limit
	if limit <= 0 {
		limit = 50
	}
	rows, err := s.pool.Query(ctx, `SELECT `+designSummaryColumns+` FROM designs
		WHERE id > $1 AND ($2 = '' OR owner = $2)
		ORDER BY id LIMIT $3`, f.AfterID, f.Owner, limit+1)
	if err != nil {
		return nil, false, fmt.Errorf("list designs: %w", err)
	}
	list, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (DesignSummary, error) { return scanDesignSummary(r) })
	if err != nil {
		return nil, false, fmt.Errorf("list designs: %w", err)
	}
	more := len(list) > limit
	if more {
		list = list[:limit]
	}
	return list, more, nil
}

// UpdateDesign replaces a design's name and document when actor may change
// it and expectVersion is current (0 skips that check); the version then
// goes up by one.
func (s *Store) UpdateDesign(ctx context.Context, actor domain.User, id, expectVersion int64, name string, document []byte) (StoredDesign, error) {
	var d StoredDesign
	err := s.inTx(ctx, func(tx pgx.Tx) error {
		if err := lockOwned(ctx, tx, "designs", id, actor, expectVersion); err != nil {
			return err
		}
		var err error
		d, err = scanStoredDesign(tx.QueryRow(ctx, `UPDATE designs SET
			name = $2, document = $3, updated_at = now(), version = version + 1
			WHERE id = $1 RETURNING `+designSummaryColumns+`, document`, id, name, string(document)))
		if err != nil {
			return fmt.Errorf("update design %d: %w", id, err)
		}
		return audit(ctx, tx, actor.Name, "design.update", "design", id, map[string]any{"version": d.Version})
	})
	return d, err
}

// DeleteDesign removes a design and its stored reviews.
func (s *Store) DeleteDesign(ctx context.Context, actor domain.User, id, expectVersion int64) error {
	return s.inTx(ctx, func(tx pgx.Tx) error {
		if err := lockOwned(ctx, tx, "designs", id, actor, expectVersion); err != nil {
			return err
		}
		if _, err := tx.Exec(ctx, `DELETE FROM designs WHERE id = $1`, id); err != nil {
			return fmt.Errorf("delete design %d: %w", id, err)
		}
		return audit(ctx, tx, actor.Name, "design.delete", "design", id, nil)
	})
}
