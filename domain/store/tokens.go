package store

import (
	"context"
	"crypto/rand"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/base64"
	"errors"
	"fmt"
	"strings"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
)

// tokenPrefix makes a leaked token recognisable in a scan of logs or code.
const tokenPrefix = "wsh_"

// digestToken hashes a token secret. Tokens are 32 random bytes, so a fast
// hash is enough: a slow password hash defends guessable secrets, and
// 256 random bits cannot be guessed however fast each guess is.
func digestToken(secret string) []byte {
	d := sha256.Sum256([]byte(secret))
	return d[:]
}

// CreateToken mints a token for the user called name, creating the user
// with role when new. It returns the secret, which is never stored.
func (s *Store) CreateToken(ctx context.Context, actor, name string, role domain.Role) (string, error) {
	if !role.Valid() {
		return "", &domain.ValidationError{Problems: []domain.FieldProblem{{Pointer: "/role", Detail: "must be member or staff"}}}
	}
	name = strings.TrimSpace(name)
	if name == "" || len(name) > domain.MaxShortFieldLen {
		return "", &domain.ValidationError{Problems: []domain.FieldProblem{{Pointer: "/name", Detail: fmt.Sprintf("must be 1 to %d characters", domain.MaxShortFieldLen)}}}
	}
	var raw [32]byte
	if _, err := rand.Read(raw[:]); err != nil {
		return "", fmt.Errorf("read random token: %w", err)
	}
	secret := tokenPrefix + base64.RawURLEncoding.EncodeToString(raw[:])
	err := s.inTx(ctx, func(tx pgx.Tx) error {
		var userID int64
		var existing domain.Role
		err := tx.QueryRow(ctx, `INSERT INTO users (name, role) VALUES ($1, $2)
			ON CONFLICT (name) DO UPDATE SET name = EXCLUDED.name
			RETURNING id, role`, name, role).Scan(&userID, &existing)
		if err != nil {
			return fmt.Errorf("find or add user %q: %w", name, err)
		}
		if existing != role {
			return fmt.Errorf("user %q already holds role %s: %w", name, existing, domain.ErrConflict)
		}
		if _, err := tx.Exec(ctx, `INSERT INTO tokens (user_id, digest) VALUES ($1, $2)`, userID, digestToken(secret)); err != nil {
			return fmt.Errorf("store token: %w", err)
		}
		return audit(ctx, tx, actor, "token.create", "user", name, map[string]any{"role": role})
	})
	if err != nil {
		return "", err
	}
	return secret, nil
}

// Authenticate finds the live token matching secret and marks it used.
// It asks the database every time (one indexed query), so a revocation
// takes effect on the next request.
func (s *Store) Authenticate(ctx context.Context, secret string) (domain.User, error) {
	want := digestToken(secret)
	var (
		u       domain.User
		tokenID int64
		stored  []byte
		stale   bool
	)
	err := s.pool.QueryRow(ctx, `SELECT t.id, t.digest, u.id, u.name, u.role,
			t.last_used IS NULL OR t.last_used < now() - interval '1 minute'
		FROM tokens t JOIN users u ON u.id = t.user_id
		WHERE t.digest = $1 AND t.revoked_at IS NULL`, want).Scan(&tokenID, &stored, &u.ID, &u.Name, &u.Role, &stale)
	if errors.Is(err, pgx.ErrNoRows) {
		return domain.User{}, domain.ErrUnauthorized
	}
	if err != nil {
		return domain.User{}, fmt.Errorf("look up token: %w", err)
	}
	// The index lookup matched on the digest; comparing again in constant
	// time keeps the final decision free of timing differences.
	if subtle.ConstantTimeCompare(stored, want) != 1 {
		return domain.User{}, domain.ErrUnauthorized
	}
	// A minute's resolution is plenty for last_used: the lookup says
	// whether it is due, so most requests cost one round trip, not two.
	if stale {
		if _, err := s.pool.Exec(ctx, `UPDATE tokens SET last_used = now()
			WHERE id = $1 AND (last_used IS NULL OR last_used < now() - interval '1 minute')`, tokenID); err != nil {
			return domain.User{}, fmt.Errorf("mark token used: %w", err)
		}
	}
	return u, nil
}

// ListTokens describes every token, newest first, without secrets.
func (s *Store) ListTokens(ctx context.Context) ([]domain.TokenInfo, error) {
	rows, err := s.pool.Query(ctx, `SELECT u.name, u.role, t.created_at, t.last_used, t.revoked_at
		FROM tokens t JOIN users u ON u.id = t.user_id ORDER BY t.id DESC`)
	if err != nil {
		return nil, fmt.Errorf("list tokens: %w", err)
	}
	infos, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (domain.TokenInfo, error) {
		var ti domain.TokenInfo
		err := r.Scan(&ti.Name, &ti.Role, &ti.CreatedAt, &ti.LastUsed, &ti.RevokedAt)
		return ti, err
	})
	if err != nil {
		return nil, fmt.Errorf("list tokens: %w", err)
	}
	return infos, nil
}

// RevokeTokens revokes every live token of the user called name and
// returns how many it revoked.
func (s *Store) RevokeTokens(ctx context.Context, actor, name string) (int64, error) {
	var n int64
	err := s.inTx(ctx, func(tx pgx.Tx) error {
		tag, err := tx.Exec(ctx, `UPDATE tokens SET revoked_at = now()
			WHERE revoked_at IS NULL AND user_id = (SELECT id FROM users WHERE name = $1)`, name)
		if err != nil {
			return fmt.Errorf("revoke tokens of %q: %w", name, err)
		}
		n = tag.RowsAffected()
		if n == 0 {
			return fmt.Errorf("no live token named %q: %w", name, domain.ErrNotFound)
		}
		return audit(ctx, tx, actor, "token.revoke", "user", name, map[string]any{"revoked": n})
	})
	return n, err
}
