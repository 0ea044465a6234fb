-- The key that signs page cursors, so a cursor one replica issued is taken
-- by every other and no client can forge one. It is drawn once, here, from
-- the server's strong random source (gen_random_uuid, core since
-- PostgreSQL 13): two version-4 UUIDs carry 244 random bits. It is never
-- exported; a restored database draws its own, and cursors issued before
-- the restore are refused as any stale cursor would be.
CREATE TABLE cursor_key (
    id     smallint PRIMARY KEY CHECK (id = 1),
    secret bytea NOT NULL CHECK (length(secret) = 32)
);
INSERT INTO cursor_key (id, secret)
VALUES (1, decode(replace(gen_random_uuid()::text || gen_random_uuid()::text, '-', ''), 'hex'));
