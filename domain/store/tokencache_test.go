package store_test

import (
	"context"
	"errors"
	"testing"
	"time"

	"wattshelf/domain"
	"wattshelf/domain/store"
	"wattshelf/domain/store/storetest"
)

// listeningCache starts a cache's listener for the test's lifetime and
// waits until it listens.
func listeningCache(t *testing.T, st *store.Store, ttl time.Duration) *store.TokenCache {
	t.Helper()
	cache := store.NewTokenCache(st, ttl)
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- cache.Listen(ctx, 20*time.Millisecond, nil) }()
	t.Cleanup(func() {
		cancel()
		if err := <-done; err != nil {
			t.Errorf("Listen returned %v after cancellation, want nil", err)
		}
	})
	eventually(t, "the cache listens", cache.Listening)
	return cache
}

// eventually polls cond for up to five seconds: notifications and
// reconnections arrive asynchronously, within milliseconds here.
func eventually(t *testing.T, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(5 * time.Second)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("timed out waiting until %s", what)
		}
		time.Sleep(5 * time.Millisecond)
	}
}

func authenticateOK(t *testing.T, c *store.TokenCache, secret, wantName string) {
	t.Helper()
	u, err := c.Authenticate(context.Background(), secret)
	if err != nil || u.Name != wantName {
		t.Fatalf("Authenticate = %+v, %v; want %s", u, err, wantName)
	}
}

func TestTokenCacheAnswersFromMemoryUntilTheDatabaseSaysOtherwise(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)
	ada, err := st.CreateToken(ctx, "host-cli", "ada", domain.RoleMember)
	if err != nil {
		t.Fatal(err)
	}
	bo, err := st.CreateToken(ctx, "host-cli", "bo", domain.RoleStaff)
	if err != nil {
		t.Fatal(err)
	}
	cache := listeningCache(t, st, time.Minute)

	authenticateOK(t, cache, ada, "ada")
	authenticateOK(t, cache, ada, "ada")
	if hits, misses := cache.Stats(); hits != 1 || misses != 1 {
		t.Fatalf("after two checks of one token: %d remembered, %d asked; want 1 and 1", hits, misses)
	}

	// Revoked behind the triggers' backs, the token is still accepted:
	// the answer came from memory, and only the notification makes the
	// cache forget.
	if _, err := conn.Exec(ctx, `ALTER TABLE tokens DISABLE TRIGGER tokens_notify_change;
		UPDATE tokens SET revoked_at = now() WHERE user_id = (SELECT id FROM users WHERE name = 'ada');
		ALTER TABLE tokens ENABLE TRIGGER tokens_notify_change`); err != nil {
		t.Fatal(err)
	}
	authenticateOK(t, cache, ada, "ada")

	// Any notified change makes it forget every token: revoking bo's
	// brings ada's revocation to light too.
	authenticateOK(t, cache, bo, "bo")
	if _, err := st.RevokeTokens(ctx, "host-cli", "bo"); err != nil {
		t.Fatal(err)
	}
	for _, secret := range []string{ada, bo} {
		eventually(t, "a revoked token is refused", func() bool {
			_, err := cache.Authenticate(ctx, secret)
			return errors.Is(err, domain.ErrUnauthorized)
		})
	}

	// Refusals are never remembered: each one asks the database.
	_, before := cache.Stats()
	for range 3 {
		if _, err := cache.Authenticate(ctx, "wsh_not-a-token"); !errors.Is(err, domain.ErrUnauthorized) {
			t.Fatalf("unknown token: %v", err)
		}
	}
	if _, after := cache.Stats(); after != before+3 {
		t.Errorf("three refusals asked the database %d times, want 3", after-before)
	}
}

func TestTokenCacheRemembersNothingWithoutItsListener(t *testing.T) {
	ctx := context.Background()
	st, dbURL := storetest.NewStore(t)
	conn := rawConn(t, dbURL)
	secret, err := st.CreateToken(ctx, "host-cli", "cy", domain.RoleMember)
	if err != nil {
		t.Fatal(err)
	}

	idle := store.NewTokenCache(st, time.Minute)
	authenticateOK(t, idle, secret, "cy")
	authenticateOK(t, idle, secret, "cy")
	if hits, misses := idle.Stats(); hits != 0 || misses != 2 {
		t.Errorf("cache that never listened: %d remembered, %d asked; want 0 and 2", hits, misses)
	}

	cache := listeningCache(t, st, time.Minute)
	authenticateOK(t, cache, secret, "cy")
	authenticateOK(t, cache, secret, "cy")
	if hits, _ := cache.Stats(); hits != 1 {
		t.Fatalf("listening cache remembered %d times, want 1", hits)
	}

	// Cut the listener's connection from the server side.
	if _, err := conn.Exec(ctx, `SELECT pg_terminate_backend(pid) FROM pg_stat_activity
		WHERE datname = current_database() AND query LIKE 'LISTEN wattshelf_token_change%'`); err != nil {
		t.Fatal(err)
	}
	eventually(t, "the cache notices its listener is gone", func() bool { return !cache.Listening() })
	// While it is gone nothing is trusted; the retry brings it back.
	eventually(t, "the cache listens again", cache.Listening)
	hits, misses := cache.Stats()
	authenticateOK(t, cache, secret, "cy")
	authenticateOK(t, cache, secret, "cy")
	if h, m := cache.Stats(); h-hits != 1 || m-misses != 1 {
		t.Errorf("after reconnecting: %d remembered, %d asked; want 1 and 1 (memory starts empty)", h-hits, m-misses)
	}
}

func TestTokenCacheForgetsAfterItsTTL(t *testing.T) {
	ctx := context.Background()
	st, _ := storetest.NewStore(t)
	secret, err := st.CreateToken(ctx, "host-cli", "di", domain.RoleMember)
	if err != nil {
		t.Fatal(err)
	}
	// A second is long enough that the first two checks fall inside it
	// even on a slow, busy test machine.
	const ttl = time.Second
	cache := listeningCache(t, st, ttl)
	authenticateOK(t, cache, secret, "di")
	authenticateOK(t, cache, secret, "di")
	time.Sleep(ttl + 50*time.Millisecond)
	authenticateOK(t, cache, secret, "di")
	if hits, misses := cache.Stats(); hits != 1 || misses != 2 {
		t.Errorf("%d remembered, %d asked; want 1 and 2 (the third check is past the TTL)", hits, misses)
	}
}
