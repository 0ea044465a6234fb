package store

import (
	"context"
	"crypto/sha256"
	"errors"
	"fmt"
	"sync"
	"sync/atomic"
	"time"

	"github.com/jackc/pgx/v5/pgconn"

	"wattshelf/domain"
)

// tokenChangeChannel is the channel migration 0008's triggers notify when a
// token is revoked or deleted or a user changes.
const tokenChangeChannel = "wattshelf_token_change"

// TokenCache answers Authenticate from memory for tokens it checked
// recently, so a request with a token usually costs no database round
// trip. It trusts its memory only while it holds LISTEN on the channel the
// database notifies whenever a remembered token could have become wrong:
// on any notification it forgets everything, and while it is not
// listening it remembers nothing and every call goes to the database. So
// a revoked token stops working as soon as the notification arrives,
// whichever replica or command revoked it.
//
// Entries also expire after a while, so the token's last_used keeps about
// the resolution the store gives it.
type TokenCache struct {
	store *Store
	ttl   time.Duration

	mu         sync.Mutex
	listening  bool
	generation uint64 // bumped whenever everything is forgotten
	entries    map[[sha256.Size]byte]rememberedUser

	hits, misses atomic.Uint64
}

type rememberedUser struct {
	user    domain.User
	checked time.Time
}

// TokenCacheTTL is how long a checked token is remembered at most: under
// the store's one-minute resolution for last_used.
const TokenCacheTTL = 30 * time.Second

// NewTokenCache remembers tokens checked against s for at most ttl. It
// remembers nothing until Listen has started listening.
func NewTokenCache(s *Store, ttl time.Duration) *TokenCache {
	return &TokenCache{store: s, ttl: ttl, entries: map[[sha256.Size]byte]rememberedUser{}}
}

// Authenticate finds the user behind a live token, from memory when it
// can.
func (c *TokenCache) Authenticate(ctx context.Context, secret string) (domain.User, error) {
	key := sha256.Sum256([]byte(secret)) // the digest the store keeps
	now := time.Now()
	c.mu.Lock()
	if c.listening {
		if e, ok := c.entries[key]; ok && now.Sub(e.checked) < c.ttl {
			c.mu.Unlock()
			c.hits.Add(1)
			return e.user, nil
		}
	}
	generation := c.generation
	c.mu.Unlock()
	c.misses.Add(1)

	u, err := c.store.authenticateDigest(ctx, key[:])
	if err != nil {
		return u, err
	}
	c.mu.Lock()
	// A notification that arrived while the database was asked may be
	// about this very token: remember the answer only if none did.
	if c.listening && c.generation == generation {
		c.forgetExpired(now)
		c.entries[key] = rememberedUser{user: u, checked: now}
	}
	c.mu.Unlock()
	return u, nil
}

// forgetExpired drops expired entries once there are enough to matter;
// only live tokens are remembered, so the map stays as small as the
// tokens in use. The caller holds mu.
func (c *TokenCache) forgetExpired(now time.Time) {
	if len(c.entries) < 256 {
		return
	}
	for k, e := range c.entries {
		if now.Sub(e.checked) >= c.ttl {
			delete(c.entries, k)
		}
	}
}

// Stats returns how many calls were answered from memory and how many
// went to the database.
func (c *TokenCache) Stats() (hits, misses uint64) {
	return c.hits.Load(), c.misses.Load()
}

// Listening reports whether the cache is listening, and so remembering.
func (c *TokenCache) Listening() bool {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.listening
}

// setListening forgets everything and records whether the cache may
// remember from now on.
func (c *TokenCache) setListening(on bool) {
	c.mu.Lock()
	c.listening = on
	c.forgetLocked()
	c.mu.Unlock()
}

// forget drops every remembered token, as any notification asks.
func (c *TokenCache) forget() {
	c.mu.Lock()
	c.forgetLocked()
	c.mu.Unlock()
}

func (c *TokenCache) forgetLocked() {
	c.generation++
	clear(c.entries)
}

// Listen holds LISTEN on the token-change channel until ctx ends, taking
// one connection out of the pool for it. When the connection is lost it
// stops remembering, waits retry, and listens again. It returns nil when
// ctx ends.
func (c *TokenCache) Listen(ctx context.Context, retry time.Duration, lost func(error)) error {
	for {
		err := c.listenOnce(ctx)
		c.setListening(false)
		if ctx.Err() != nil {
			return nil
		}
		if lost != nil {
			lost(err)
		}
		select {
		case <-ctx.Done():
			return nil
		case <-time.After(retry):
		}
	}
}

func (c *TokenCache) listenOnce(ctx context.Context) error {
	pooled, err := c.store.pool.Acquire(ctx)
	if err != nil {
		return fmt.Errorf("token cache: take a connection to listen on: %w", err)
	}
	conn := pooled.Hijack()
	defer conn.Close(context.WithoutCancel(ctx))
	if _, err := conn.Exec(ctx, "LISTEN "+tokenChangeChannel); err != nil {
		return fmt.Errorf("token cache: listen: %w", err)
	}
	c.setListening(true)
	for {
		// A connection that dies without a word (a cable pulled between
		// here and the database) would leave the cache trusting a
		// listener that hears nothing, so a quiet spell is a reason to
		// check that the connection still answers.
		waitCtx, cancel := context.WithTimeout(ctx, listenQuietSpell)
		_, err := conn.WaitForNotification(waitCtx)
		cancel()
		switch {
		case err == nil:
			// Any change may concern any remembered token; they are
			// few and cheap to check again.
			c.forget()
		case ctx.Err() != nil:
			return ctx.Err()
		case errors.Is(err, context.DeadlineExceeded) || pgconn.Timeout(err):
			pingCtx, cancel := context.WithTimeout(ctx, 5*time.Second)
			err := conn.Ping(pingCtx)
			cancel()
			if err != nil {
				return fmt.Errorf("token cache: listening connection does not answer: %w", err)
			}
		default:
			return fmt.Errorf("token cache: wait for token changes: %w", err)
		}
	}
}

// listenQuietSpell is how long the listener waits for a notification
// before it checks that its connection is alive.
const listenQuietSpell = 15 * time.Second
