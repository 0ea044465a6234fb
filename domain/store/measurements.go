package store

import (
	"context"
	"fmt"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
)

// AddMeasurement records a bench reading of a component. Anyone with a
// token may measure any part on the shelf; the reading is theirs.
func (s *Store) AddMeasurement(ctx context.Context, actor domain.User, componentID int64, in domain.MeasurementInput) (domain.Measurement, error) {
	var m domain.Measurement
	err := s.inTx(ctx, func(tx pgx.Tx) error {
		err := tx.QueryRow(ctx, `INSERT INTO measurements (component_id, voltage_v, current_a, speed_rpm, note, recorded_by)
			SELECT id, $2, $3, $4, $5, $6 FROM components WHERE id = $1
			RETURNING id, component_id, voltage_v, current_a, speed_rpm, note, recorded_by, recorded_at`,
			componentID, in.VoltageV, in.CurrentA, in.SpeedRPM, in.Note, actor.Name).
			Scan(&m.ID, &m.ComponentID, &m.VoltageV, &m.CurrentA, &m.SpeedRPM, &m.Note, &m.RecordedBy, &m.RecordedAt)
		if err != nil {
			return notFound(err, fmt.Sprintf("component %d", componentID))
		}
		return audit(ctx, tx, actor.Name, "measurement.create", "component", componentID, map[string]any{"measurement": m.ID})
	})
	return m, err
}

// Measurements lists a component's readings in the order taken.
func (s *Store) Measurements(ctx context.Context, componentID int64) ([]domain.Measurement, error) {
	if _, err := s.Component(ctx, componentID); err != nil {
		return nil, err
	}
	rows, err := s.pool.Query(ctx, `SELECT id, component_id, voltage_v, current_a, speed_rpm, note, recorded_by, recorded_at
		FROM measurements WHERE component_id = $1 ORDER BY id`, componentID)
	if err != nil {
		return nil, fmt.Errorf("list measurements of component %d: %w", componentID, err)
	}
	list, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (domain.Measurement, error) {
		var m domain.Measurement
		err := r.Scan(&m.ID, &m.ComponentID, &m.VoltageV, &m.CurrentA, &m.SpeedRPM, &m.Note, &m.RecordedBy, &m.RecordedAt)
		return m, err
	})
	if err != nil {
		return nil, fmt.Errorf("list measurements of component %d: %w", componentID, err)
	}
	return list, nil
}
