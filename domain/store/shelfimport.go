package store

import (
	"context"
	"encoding/json"
	"fmt"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
)

// ComponentChange replaces component ID, which must still be at Version.
type ComponentChange struct {
	ID      int64
	Version int64
	In      domain.ComponentInput
}

// ApplyComponents creates and replaces components in one transaction:
// all of them are stored, or, on any error (a component gone or changed
// since it was read), none. Each write is audited as actor's.
func (s *Store) ApplyComponents(ctx context.Context, actor domain.User, creates []domain.ComponentInput, changes []ComponentChange) error {
	return s.inTx(ctx, func(tx pgx.Tx) error {
		for _, in := range creates {
			electrical, err := json.Marshal(in.Electrical)
			if err != nil {
				return fmt.Errorf("encode electrical fields: %w", err)
			}
			var id int64
			if err := tx.QueryRow(ctx, `INSERT INTO components
				(name, kind, description, origin, mains_origin, bin, quantity, condition, spec_source, notes, electrical, owner)
				VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12) RETURNING id`,
				in.Name, in.Kind, in.Description, in.Origin, in.MainsOrigin, in.Bin, in.Quantity,
				in.Condition, in.SpecSource, in.Notes, electrical, actor.Name).Scan(&id); err != nil {
				return fmt.Errorf("insert component %q: %w", in.Name, err)
			}
			if err := audit(ctx, tx, actor.Name, "component.create", "component", id, map[string]any{"name": in.Name}); err != nil {
				return err
			}
		}
		for _, ch := range changes {
			if err := lockOwned(ctx, tx, "components", ch.ID, actor, ch.Version); err != nil {
				return fmt.Errorf("component %d: %w", ch.ID, err)
			}
			electrical, err := json.Marshal(ch.In.Electrical)
			if err != nil {
				return fmt.Errorf("encode electrical fields: %w", err)
			}
			in := ch.In
			if _, err := tx.Exec(ctx, `UPDATE components SET
				name = $2, kind = $3, description = $4, origin = $5, mains_origin = $6, bin = $7,
				quantity = $8, condition = $9, spec_source = $10, notes = $11, electrical = $12,
				updated_at = now(), version = version + 1
				WHERE id = $1`,
				ch.ID, in.Name, in.Kind, in.Description, in.Origin, in.MainsOrigin, in.Bin, in.Quantity,
				in.Condition, in.SpecSource, in.Notes, electrical); err != nil {
				return fmt.Errorf("update component %d: %w", ch.ID, err)
			}
			if err := audit(ctx, tx, actor.Name, "component.update", "component", ch.ID, map[string]any{"version": ch.Version + 1}); err != nil {
				return err
			}
		}
		return nil
	})
}
