package store

import (
	"context"
	"fmt"
)

// CursorKey returns the secret that signs page cursors. Migration 0010
// draws it once per database, so every replica signs alike.
func (s *Store) CursorKey(ctx context.Context) ([]byte, error) {
	var key []byte
	if err := s.pool.QueryRow(ctx, `SELECT secret FROM cursor_key WHERE id = 1`).Scan(&key); err != nil {
		return nil, fmt.Errorf("read cursor key: %w", err)
	}
	return key, nil
}
