package store

import (
	"context"
	"encoding/json"
	"fmt"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
)

// DemoDesign is a design document to seed, stored as given.
type DemoDesign struct {
	Name     string
	Owner    string
	Document []byte
}

// DemoData is the invented scenario `serve --demo` loads.
type DemoData struct {
	ShelfKeeper string // owner of the demo components
	Components  []domain.ComponentInput
	Designs     []DemoDesign
}

// seedLockKey serialises demo loading between replicas starting together.
const seedLockKey = 0x77617473 // "wats"

// SeedDemo loads demo into an empty database and reports whether it did.
// A database holding any component or design is left alone.
func (s *Store) SeedDemo(ctx context.Context, demo DemoData) (bool, error) {
	seeded := false
	err := s.inTx(ctx, func(tx pgx.Tx) error {
		if _, err := tx.Exec(ctx, `SELECT pg_advisory_xact_lock($1)`, seedLockKey); err != nil {
			return fmt.Errorf("lock for demo seeding: %w", err)
		}
		var empty bool
		if err := tx.QueryRow(ctx, `SELECT NOT EXISTS (SELECT 1 FROM components) AND NOT EXISTS (SELECT 1 FROM designs)`).Scan(&empty); err != nil {
			return fmt.Errorf("check database is empty: %w", err)
		}
		if !empty {
			return nil
		}
		for i, c := range demo.Components {
			electrical, err := json.Marshal(c.Electrical)
			if err != nil {
				return fmt.Errorf("encode demo component %d: %w", i, err)
			}
			if _, err := tx.Exec(ctx, `INSERT INTO components
				(name, kind, description, origin, mains_origin, bin, quantity, condition, spec_source, notes, electrical, owner)
				VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12)`,
				c.Name, c.Kind, c.Description, c.Origin, c.MainsOrigin, c.Bin, c.Quantity,
				c.Condition, c.SpecSource, c.Notes, electrical, demo.ShelfKeeper); err != nil {
				return fmt.Errorf("insert demo component %q: %w", c.Name, err)
			}
		}
		for _, d := range demo.Designs {
			if _, err := tx.Exec(ctx, `INSERT INTO designs (name, document, owner) VALUES ($1, $2, $3)`,
				d.Name, string(d.Document), d.Owner); err != nil {
				return fmt.Errorf("insert demo design %q: %w", d.Name, err)
			}
		}
		seeded = true
		return audit(ctx, tx, "system", "demo.seed", "database", "demo",
			map[string]any{"components": len(demo.Components), "designs": len(demo.Designs)})
	})
	return seeded, err
}
