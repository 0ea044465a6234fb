package store

import (
	"context"
	"encoding/json"
	"fmt"
	"time"

	"github.com/jackc/pgx/v5"
)

// AuditEntry is one line of the trail of who did what.
type AuditEntry struct {
	ID          int64           `json:"id"`
	At          time.Time       `json:"at"`
	Actor       string          `json:"actor"`
	Action      string          `json:"action"`
	SubjectType string          `json:"subject_type"`
	SubjectID   string          `json:"subject_id"`
	Detail      json.RawMessage `json:"detail"`
}

// audit records an action inside the transaction that performs it, so the
// trail and the change commit or roll back together.
func audit(ctx context.Context, tx pgx.Tx, actor, action, subjectType string, subjectID any, detail any) error {
	if detail == nil {
		detail = map[string]any{}
	}
	body, err := json.Marshal(detail)
	if err != nil {
		return fmt.Errorf("encode audit detail: %w", err)
	}
	_, err = tx.Exec(ctx, `INSERT INTO audit (actor, action, subject_type, subject_id, detail)
		VALUES ($1, $2, $3, $4, $5)`, actor, action, subjectType, fmt.Sprint(subjectID), body)
	if err != nil {
		return fmt.Errorf("record audit %s: %w", action, err)
	}
	return nil
}

// AuditTrail returns the newest entries for one subject, or for all when
// subjectType is empty.
func (s *Store) AuditTrail(ctx context.Context, subjectType, subjectID string, limit int) ([]AuditEntry, error) {
	rows, err := s.pool.Query(ctx, `SELECT id, at, actor, action, subject_type, subject_id, detail
		FROM audit WHERE ($1 = '' OR (subject_type = $1 AND subject_id = $2))
		ORDER BY id DESC LIMIT $3`, subjectType, subjectID, limit)
	if err != nil {
		return nil, fmt.Errorf("read audit trail: %w", err)
	}
	entries, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (AuditEntry, error) {
		var e AuditEntry
		err := r.Scan(&e.ID, &e.At, &e.Actor, &e.Action, &e.SubjectType, &e.SubjectID, &e.Detail)
		return e, err
	})
	if err != nil {
		return nil, fmt.Errorf("read audit trail: %w", err)
	}
	return entries, nil
}
