-- Each replica keeps encoded shelf pages in memory, keyed by the shelf's
-- revision: the sum of these counters. Every statement that changes
-- components adds one to a counter in its own transaction, so a reader sees
-- a new revision exactly when it can see the change, whichever replica made
-- it. A writer bumps the counter of its backend (pid modulo 16): concurrent
-- writers on one row would queue on its lock until each commit is flushed.
CREATE TABLE shelf_revision (
    slot    smallint PRIMARY KEY CHECK (slot >= 0 AND slot < 16),
    changes bigint NOT NULL DEFAULT 0
);
INSERT INTO shelf_revision (slot) SELECT generate_series(0, 15);

CREATE FUNCTION bump_shelf_revision() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    UPDATE shelf_revision SET changes = changes + 1 WHERE slot = pg_backend_pid() % 16;
    RETURN NULL;
END
$$;

CREATE TRIGGER components_bump_shelf_revision
    AFTER INSERT OR UPDATE OR DELETE OR TRUNCATE ON components
    FOR EACH STATEMENT EXECUTE FUNCTION bump_shelf_revision();
