-- Each replica remembers the tokens it has recently checked, so most
-- requests skip the database. It trusts what it remembers only while it
-- listens on this channel: whatever could make a remembered token wrong
-- (a revocation, a deleted token or user, a changed role) notifies it in
-- the same transaction, and every listener forgets all it remembers. Using
-- a token (last_used) changes none of the columns named here.
CREATE FUNCTION notify_token_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    PERFORM pg_notify('wattshelf_token_change', TG_TABLE_NAME);
    RETURN NULL;
END
$$;

CREATE TRIGGER tokens_notify_change
    AFTER UPDATE OF revoked_at, digest, user_id OR DELETE OR TRUNCATE ON tokens
    FOR EACH STATEMENT EXECUTE FUNCTION notify_token_change();

CREATE TRIGGER users_notify_change
    AFTER UPDATE OF role, name OR DELETE OR TRUNCATE ON users
    FOR EACH STATEMENT EXECUTE FUNCTION notify_token_change();
