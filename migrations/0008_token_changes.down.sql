DROP TRIGGER users_notify_change ON users;
DROP TRIGGER tokens_notify_change ON tokens;
DROP FUNCTION notify_token_change();
