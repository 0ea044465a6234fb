-- Tokens are checked against the database on every request (one indexed
-- query), so a revocation takes effect on the next one and no server
-- listens for token changes any more.
DROP TRIGGER users_notify_change ON users;
DROP TRIGGER tokens_notify_change ON tokens;
DROP FUNCTION notify_token_change();
