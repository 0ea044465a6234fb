-- Per-member quotas (issue 15 item 14), one row that every replica reads,
-- so they all refuse alike. Staff change it with `wattshelf quota set`;
-- staff themselves are exempt. The defaults are generous for a makerspace
-- and far below what a script can do in a minute.
CREATE TABLE quotas (
    id               smallint PRIMARY KEY CHECK (id = 1),
    reviews_per_hour integer NOT NULL CHECK (reviews_per_hour >= 1),
    designs          integer NOT NULL CHECK (designs >= 0),
    stored_bytes     bigint  NOT NULL CHECK (stored_bytes >= 0),
    updated_by       text NOT NULL,
    updated_at       timestamptz NOT NULL DEFAULT now()
);
INSERT INTO quotas (id, reviews_per_hour, designs, stored_bytes, updated_by)
VALUES (1, 120, 200, 256 * 1024 * 1024, 'migration');

-- The hourly review quota counts audit rows, which deleting a design does
-- not remove; the byte quota sums a member's designs and stored reviews.
CREATE INDEX audit_actor_action_idx ON audit (actor, action, at);
CREATE INDEX reviews_created_by_idx ON reviews (created_by);
