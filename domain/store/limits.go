package store

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"time"

	jsonv2 "github.com/go-json-experiment/json"
	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
	"wattshelf/domain/review"
)

// LimitsSet is one stored version of the limits a review applies. The body
// is kept as JSON so the store need not know the limits' shape; the review
// engine decodes and validates it.
type LimitsSet struct {
	Version   int             `json:"version"`
	Body      json.RawMessage `json:"limits"`
	Note      string          `json:"note,omitempty"`
	CreatedBy string          `json:"created_by"`
	CreatedAt time.Time       `json:"created_at"`
}

// LimitsVersionSummary describes a stored version without its body.
type LimitsVersionSummary struct {
	Version   int       `json:"version"`
	Note      string    `json:"note,omitempty"`
	CreatedBy string    `json:"created_by"`
	CreatedAt time.Time `json:"created_at"`
}

// defaultLimitsActor is who the audit names for the seeded version 1.
const defaultLimitsActor = "system"

// defaultLimitsNote is stored with the seeded version 1.
const defaultLimitsNote = "defaults seeded by wattshelf; every value names its source"

// SeedDefaultLimits stores the review engine's default limits as version 1
// unless a version 1 exists, and reports whether it stored them. When the
// current version predates some checks, it stores a new version with their
// default values added and every staff value kept (AddNewLimits). serve
// calls it as it starts and migrate up after migrating; nothing that
// answers a request does.
func (s *Store) SeedDefaultLimits(ctx context.Context) (bool, error) {
	body, err := jsonv2.Marshal(review.DefaultLimits(), domain.StrictJSON())
	if err != nil {
		return false, fmt.Errorf("encode default limits: %w", err)
	}
	seeded, err := s.EnsureDefaultLimits(ctx, body, defaultLimitsNote)
	if err != nil {
		return false, err
	}
	if _, err := s.AddNewLimits(ctx); err != nil {
		return false, err
	}
	return seeded, nil
}

// AddNewLimits stores, when the current limits version lacks values that
// checks added since need, a new version with the defaults' values added,
// and returns it (0 when nothing was missing). Two replicas starting
// together store it once: the second finds the first's version complete.
func (s *Store) AddNewLimits(ctx context.Context) (int, error) {
	cur, err := s.CurrentLimits(ctx)
	if err != nil {
		return 0, err
	}
	var l review.Limits
	if err := jsonv2.Unmarshal(cur.Body, &l); err != nil {
		return 0, fmt.Errorf("decode limits v%d: %w", cur.Version, err)
	}
	filled, added := l.WithNewDefaults()
	if len(added) == 0 {
		return 0, nil
	}
	body, err := jsonv2.Marshal(filled, domain.StrictJSON())
	if err != nil {
		return 0, fmt.Errorf("encode limits v%d with new defaults: %w", cur.Version, err)
	}
	note := fmt.Sprintf("v%d with the defaults added for checks it predates (%s); every staff value kept",
		cur.Version, strings.Join(added, ", "))
	put, err := s.PutLimits(ctx, domain.User{Name: defaultLimitsActor}, cur.Version, body, note)
	if errors.Is(err, domain.ErrPreconditionFailed) {
		return 0, nil // another replica stored it first
	}
	if err != nil {
		return 0, fmt.Errorf("store limits with new defaults: %w", err)
	}
	return put.Version, nil
}

// EnsureDefaultLimits stores body as version 1 unless a version 1 exists,
// and reports whether it stored it. Replicas starting together are safe:
// the insert yields to an existing row instead of failing.
func (s *Store) EnsureDefaultLimits(ctx context.Context, body []byte, note string) (bool, error) {
	if !json.Valid(body) {
		return false, errors.New("ensure default limits: body is not JSON")
	}
	inserted := false
	err := s.inTx(ctx, func(tx pgx.Tx) error {
		tag, err := tx.Exec(ctx, `INSERT INTO limits (version, body, note, created_by)
			VALUES (1, $1, $2, $3) ON CONFLICT (version) DO NOTHING`, body, note, defaultLimitsActor)
		if err != nil {
			return fmt.Errorf("insert default limits: %w", err)
		}
		if tag.RowsAffected() == 0 {
			return nil
		}
		inserted = true
		return audit(ctx, tx, defaultLimitsActor, "limits.seed", "limits", 1, map[string]any{"note": note})
	})
	return inserted, err
}

// CurrentLimitsVersion returns the newest version number; a database
// without limits is ErrNotFound.
func (s *Store) CurrentLimitsVersion(ctx context.Context) (int, error) {
	var v *int
	if err := s.pool.QueryRow(ctx, `SELECT max(version) FROM limits`).Scan(&v); err != nil {
		return 0, fmt.Errorf("read current limits version: %w", err)
	}
	if v == nil {
		return 0, fmt.Errorf("no limits are stored: %w", domain.ErrNotFound)
	}
	return *v, nil
}

// CurrentLimits returns the newest version.
func (s *Store) CurrentLimits(ctx context.Context) (LimitsSet, error) {
	l, err := scanLimits(s.pool.QueryRow(ctx, `SELECT version, body, note, created_by, created_at
		FROM limits ORDER BY version DESC LIMIT 1`))
	if err != nil {
		return l, notFound(err, "current limits")
	}
	return l, nil
}

// Limits returns one version.
func (s *Store) Limits(ctx context.Context, version int) (LimitsSet, error) {
	l, err := scanLimits(s.pool.QueryRow(ctx, `SELECT version, body, note, created_by, created_at
		FROM limits WHERE version = $1`, version))
	if err != nil {
		return l, notFound(err, fmt.Sprintf("limits version %d", version))
	}
	return l, nil
}

// LimitsVersions lists every version without bodies, newest first.
func (s *Store) LimitsVersions(ctx context.Context) ([]LimitsVersionSummary, error) {
	rows, err := s.pool.Query(ctx, `SELECT version, note, created_by, created_at FROM limits ORDER BY version DESC`)
	if err != nil {
		return nil, fmt.Errorf("list limits versions: %w", err)
	}
	list, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (LimitsVersionSummary, error) {
		var v LimitsVersionSummary
		err := r.Scan(&v.Version, &v.Note, &v.CreatedBy, &v.CreatedAt)
		return v, err
	})
	if err != nil {
		return nil, fmt.Errorf("list limits versions: %w", err)
	}
	return list, nil
}

// limitsLockKey serialises writers of new limits versions; readers are
// never blocked.
const limitsLockKey = 0x6c696d73 // "lims"

// PutLimits stores body as the next version (the newest plus one) and
// records it in the audit trail. When expectVersion is not 0 it must be
// the newest version, so a change made from a stale copy is refused
// rather than silently undoing a colleague's; with 0, two staff saving at
// once get two consecutive versions, never a clash.
func (s *Store) PutLimits(ctx context.Context, actor domain.User, expectVersion int, body []byte, note string) (LimitsSet, error) {
	if !json.Valid(body) {
		return LimitsSet{}, errors.New("put limits: body is not JSON")
	}
	var l LimitsSet
	err := s.inTx(ctx, func(tx pgx.Tx) error {
		if _, err := tx.Exec(ctx, `SELECT pg_advisory_xact_lock($1)`, limitsLockKey); err != nil {
			return fmt.Errorf("lock limits for a new version: %w", err)
		}
		if expectVersion != 0 {
			var newest int
			if err := tx.QueryRow(ctx, `SELECT coalesce(max(version), 0) FROM limits`).Scan(&newest); err != nil {
				return fmt.Errorf("read newest limits version: %w", err)
			}
			if newest != expectVersion {
				return fmt.Errorf("limits are at version %d, not %d: %w", newest, expectVersion, domain.ErrPreconditionFailed)
			}
		}
		var err error
		l, err = scanLimits(tx.QueryRow(ctx, `INSERT INTO limits (version, body, note, created_by)
			SELECT coalesce(max(version), 0) + 1, $1, $2, $3 FROM limits
			RETURNING version, body, note, created_by, created_at`, body, note, actor.Name))
		if err != nil {
			return fmt.Errorf("insert limits version: %w", err)
		}
		return audit(ctx, tx, actor.Name, "limits.put", "limits", l.Version, map[string]any{"note": note})
	})
	return l, err
}

func scanLimits(row pgx.Row) (LimitsSet, error) {
	var l LimitsSet
	var body []byte
	err := row.Scan(&l.Version, &body, &l.Note, &l.CreatedBy, &l.CreatedAt)
	l.Body = body
	return l, err
}
