-- Puts back migration 0008's notifications, for a server that remembers
-- checked tokens.
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
