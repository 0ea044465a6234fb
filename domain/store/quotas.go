package store

import (
	"context"
	"fmt"
	"math"
	"time"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
)

// Quotas are the per-member quotas, one stored row (migration 0013) that
// every replica reads afresh, so a change is seen by all at once.
type Quotas struct {
	ReviewsPerHour int   `json:"reviews_per_hour"`
	Designs        int   `json:"designs"`
	StoredBytes    int64 `json:"stored_bytes"`
}

// The quotas' names, as stored and as problem documents name them.
const (
	QuotaReviewsPerHour = "reviews_per_hour"
	QuotaDesigns        = "designs"
	QuotaStoredBytes    = "stored_bytes"
)

// Validate refuses quotas the table would refuse, naming the setting.
func (q Quotas) Validate() error {
	var p domain.Problems
	if q.ReviewsPerHour < 1 || q.ReviewsPerHour > math.MaxInt32 {
		p.Add("/"+QuotaReviewsPerHour, "must be a whole number from 1 to %d", math.MaxInt32)
	}
	if q.Designs < 0 || q.Designs > math.MaxInt32 {
		p.Add("/"+QuotaDesigns, "must be a whole number from 0 to %d", math.MaxInt32)
	}
	if q.StoredBytes < 0 {
		p.Add("/"+QuotaStoredBytes, "must not be negative")
	}
	return p.Err()
}

// Quotas reads the stored quotas.
func (s *Store) Quotas(ctx context.Context) (Quotas, error) {
	var q Quotas
	err := s.pool.QueryRow(ctx, `SELECT reviews_per_hour, designs, stored_bytes FROM quotas WHERE id = 1`).
		Scan(&q.ReviewsPerHour, &q.Designs, &q.StoredBytes)
	if err != nil {
		return q, fmt.Errorf("read quotas: %w", err)
	}
	return q, nil
}

// SetQuotas stores new quotas and audits the change.
func (s *Store) SetQuotas(ctx context.Context, actor string, q Quotas) error {
	if err := q.Validate(); err != nil {
		return err
	}
	return s.inTx(ctx, func(tx pgx.Tx) error {
		if _, err := tx.Exec(ctx, `UPDATE quotas SET reviews_per_hour = $1, designs = $2, stored_bytes = $3,
			updated_by = $4, updated_at = now() WHERE id = 1`, q.ReviewsPerHour, q.Designs, q.StoredBytes, actor); err != nil {
			return fmt.Errorf("store quotas: %w", err)
		}
		return audit(ctx, tx, actor, "quotas.set", "quotas", 1, q)
	})
}

// QuotaNeed is what a write is about to add to a member's use.
type QuotaNeed struct {
	Review    bool  // one more stored review this hour
	NewDesign bool  // one more design
	AddBytes  int64 // more stored bytes (designs' documents, reviews' reports and documents)
}

// CheckQuota returns a *domain.QuotaError when need would take member
// past a quota, and nil when it fits. It reads the quotas and the
// member's use afresh, so every replica answers alike. It is a check
// before the write, not a lock: requests of one member racing each other
// can each pass it, so the overshoot is bounded by how many that member
// has in flight, not by time.
//
// Stored reviews are counted from the audit, which outlives a deleted
// design, so deleting designs does not reset the hourly quota.
func (s *Store) CheckQuota(ctx context.Context, member string, need QuotaNeed) error {
	var (
		q               Quotas
		designs         int64
		bytes           int64
		reviewFreesInMs *float64
	)
	err := s.pool.QueryRow(ctx, `SELECT q.reviews_per_hour, q.designs, q.stored_bytes,
			CASE WHEN $2 THEN (
				SELECT extract(epoch FROM a.at + interval '1 hour' - now())::float8 * 1000 FROM audit a
				WHERE a.actor = $1 AND a.action = 'review.create' AND a.at > now() - interval '1 hour'
				ORDER BY a.at DESC OFFSET q.reviews_per_hour - 1 LIMIT 1) END,
			CASE WHEN $3 THEN (SELECT count(*) FROM designs WHERE owner = $1) ELSE 0 END,
			CASE WHEN $4 THEN
				(SELECT coalesce(sum(octet_length(document)), 0) FROM designs WHERE owner = $1) +
				(SELECT coalesce(sum(octet_length(report)::bigint + octet_length(document)), 0) FROM reviews WHERE created_by = $1)
			ELSE 0 END
		FROM quotas q WHERE q.id = 1`, member, need.Review, need.NewDesign, need.AddBytes > 0).
		Scan(&q.ReviewsPerHour, &q.Designs, &q.StoredBytes, &reviewFreesInMs, &designs, &bytes)
	if err != nil {
		return fmt.Errorf("check quotas of %s: %w", member, err)
	}
	switch {
	case reviewFreesInMs != nil:
		// At least a second: Retry-After counts whole seconds.
		wait := max(time.Duration(math.Ceil(*reviewFreesInMs/1000))*time.Second, time.Second)
		return &domain.QuotaError{Quota: QuotaReviewsPerHour, Limit: int64(q.ReviewsPerHour), RetryAfter: wait}
	case need.NewDesign && designs >= int64(q.Designs):
		return &domain.QuotaError{Quota: QuotaDesigns, Limit: int64(q.Designs)}
	case need.AddBytes > 0 && bytes+need.AddBytes > q.StoredBytes:
		return &domain.QuotaError{Quota: QuotaStoredBytes, Limit: q.StoredBytes}
	}
	return nil
}
