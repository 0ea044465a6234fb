package store_test

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/base64"
	"errors"
	"strings"
	"testing"

	"wattshelf/domain"
	"wattshelf/domain/store/storetest"
)

func TestTokenLifecycle(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)

	secret, err := st.CreateToken(ctx, "host-cli", "ada", domain.RoleMember)
	if err != nil {
		t.Fatal(err)
	}
	// 32 random bytes, URL-safe base64 without padding, behind the prefix.
	raw, err := base64.RawURLEncoding.DecodeString(strings.TrimPrefix(secret, "wsh_"))
	if !strings.HasPrefix(secret, "wsh_") || err != nil || len(raw) != 32 {
		t.Fatalf("secret %q is not wsh_ + 32 bytes in base64url (%v)", secret, err)
	}
	second, err := st.CreateToken(ctx, "host-cli", "ada", domain.RoleMember)
	if err != nil || second == secret {
		t.Fatalf("second token %q (%v) must differ from the first", second, err)
	}

	// Only the SHA-256 digest is stored, never the secret.
	var digest []byte
	if err := conn.QueryRow(ctx, `SELECT digest FROM tokens ORDER BY id LIMIT 1`).Scan(&digest); err != nil {
		t.Fatal(err)
	}
	if want := sha256.Sum256([]byte(secret)); !bytes.Equal(digest, want[:]) {
		t.Errorf("stored digest %x, want SHA-256 of the secret %x", digest, want)
	}
	for _, table := range []string{"tokens", "users", "audit"} {
		if n := countRows(t, conn, `SELECT count(*) FROM `+table+` r WHERE strpos(row_to_json(r)::text, $1) > 0`, secret); n != 0 {
			t.Errorf("the secret appears in %d rows of %s", n, table)
		}
	}

	infos, err := st.ListTokens(ctx)
	if err != nil || len(infos) != 2 {
		t.Fatalf("list: %v, %v", infos, err)
	}
	for _, ti := range infos {
		if ti.Name != "ada" || ti.Role != domain.RoleMember || ti.LastUsed != nil || ti.RevokedAt != nil || ti.CreatedAt.IsZero() {
			t.Errorf("fresh token listed as %+v", ti)
		}
	}

	u, err := st.Authenticate(ctx, secret)
	if err != nil || u.Name != "ada" || u.Role != domain.RoleMember || u.ID < 1 {
		t.Fatalf("authenticate: %+v, %v", u, err)
	}
	infos, _ = st.ListTokens(ctx)
	// Newest first: the second token is unused, the first now has last_used.
	if infos[0].LastUsed != nil || infos[1].LastUsed == nil {
		t.Errorf("last_used after one use: newest %v, oldest %v", infos[0].LastUsed, infos[1].LastUsed)
	}
	if _, err := st.Authenticate(ctx, second); err != nil {
		t.Fatal(err)
	}

	for _, bad := range []string{"", "wsh_", secret + "x", strings.ToUpper(secret), "wsh_" + strings.Repeat("A", 43)} {
		if _, err := st.Authenticate(ctx, bad); !errors.Is(err, domain.ErrUnauthorized) {
			t.Errorf("authenticate %q: %v, want unauthorized", bad, err)
		}
	}

	n, err := st.RevokeTokens(ctx, "host-cli", "ada")
	if err != nil || n != 2 {
		t.Fatalf("revoke: %d, %v; want both tokens", n, err)
	}
	for _, s := range []string{secret, second} {
		if _, err := st.Authenticate(ctx, s); !errors.Is(err, domain.ErrUnauthorized) {
			t.Errorf("revoked token authenticates: %v", err)
		}
	}
	infos, _ = st.ListTokens(ctx)
	for _, ti := range infos {
		if ti.RevokedAt == nil {
			t.Errorf("token listed as live after revoke: %+v", ti)
		}
	}
	if _, err := st.RevokeTokens(ctx, "host-cli", "ada"); !errors.Is(err, domain.ErrNotFound) {
		t.Errorf("revoking again: %v, want not found", err)
	}
	if _, err := st.RevokeTokens(ctx, "host-cli", "nobody"); !errors.Is(err, domain.ErrNotFound) {
		t.Errorf("revoking an unknown name: %v, want not found", err)
	}

	// A revoked user may get a new token, which works.
	third, err := st.CreateToken(ctx, "host-cli", "ada", domain.RoleMember)
	if err != nil {
		t.Fatal(err)
	}
	if u, err := st.Authenticate(ctx, third); err != nil || u.Name != "ada" {
		t.Errorf("new token after revoke: %+v, %v", u, err)
	}

	trail, err := st.AuditTrail(ctx, "user", "ada", 10)
	if err != nil {
		t.Fatal(err)
	}
	var actions []string
	for _, e := range trail {
		actions = append(actions, e.Action)
		if e.Actor != "host-cli" {
			t.Errorf("audit entry %s by %q, want host-cli", e.Action, e.Actor)
		}
	}
	if got := strings.Join(actions, ","); got != "token.create,token.revoke,token.create,token.create" {
		t.Errorf("audit trail of ada, newest first: %s", got)
	}
}

func TestCreateTokenRefusals(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)
	if _, err := st.CreateToken(ctx, "host-cli", "kim", domain.RoleStaff); err != nil {
		t.Fatal(err)
	}

	tests := []struct {
		name, user string
		role       domain.Role
		pointer    string // for validation errors
		want       error
	}{
		{"unknown role", "bo", "admin", "/role", nil},
		{"empty name", "  ", domain.RoleMember, "/name", nil},
		{"name too long", strings.Repeat("n", domain.MaxShortFieldLen+1), domain.RoleMember, "/name", nil},
		// One person holds one role; a second token cannot quietly promote or demote them.
		{"existing user, other role", "kim", domain.RoleMember, "", domain.ErrConflict},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			secret, err := st.CreateToken(ctx, "host-cli", tt.user, tt.role)
			if secret != "" {
				t.Errorf("a refused request returned a secret")
			}
			if tt.want != nil {
				if !errors.Is(err, tt.want) {
					t.Errorf("got %v, want %v", err, tt.want)
				}
				return
			}
			var ve *domain.ValidationError
			if !errors.As(err, &ve) || len(ve.Problems) != 1 || ve.Problems[0].Pointer != tt.pointer {
				t.Errorf("got %v, want a validation problem at %s", err, tt.pointer)
			}
		})
	}
	// The refusals stored nothing: one user, one token, one audit row.
	for query, want := range map[string]int{
		`SELECT count(*) FROM users`:  1,
		`SELECT count(*) FROM tokens`: 1,
		`SELECT count(*) FROM audit`:  1,
	} {
		if n := countRows(t, conn, query); n != want {
			t.Errorf("%s = %d, want %d", query, n, want)
		}
	}
	// The name is trimmed before it is stored.
	secret, err := st.CreateToken(ctx, "host-cli", "  bo ", domain.RoleMember)
	if err != nil {
		t.Fatal(err)
	}
	if u, err := st.Authenticate(ctx, secret); err != nil || u.Name != "bo" {
		t.Errorf("trimmed name: %+v, %v", u, err)
	}
}
