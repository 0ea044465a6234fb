-- Each limits set is kept whole; a change adds a version, never edits one.
CREATE TABLE limits (
    version    integer PRIMARY KEY,
    body       jsonb NOT NULL,
    note       text NOT NULL DEFAULT '',
    created_by text NOT NULL,
    created_at timestamptz NOT NULL DEFAULT now()
);

CREATE TABLE designs (
    id         bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    name       text NOT NULL,
    -- The document exactly as the member sent it.
    document   text NOT NULL,
    owner      text NOT NULL,
    created_at timestamptz NOT NULL DEFAULT now(),
    updated_at timestamptz NOT NULL DEFAULT now(),
    version    bigint NOT NULL DEFAULT 1
);
CREATE INDEX designs_owner_idx ON designs (owner, id);

CREATE TABLE reviews (
    id              bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    design_id       bigint NOT NULL REFERENCES designs (id) ON DELETE CASCADE,
    share_id        text NOT NULL UNIQUE,
    status          text NOT NULL,
    limits_version  integer NOT NULL REFERENCES limits (version),
    document_sha256 text NOT NULL,
    report          jsonb NOT NULL,
    created_by      text NOT NULL,
    created_at      timestamptz NOT NULL DEFAULT now()
);
CREATE INDEX reviews_design_idx ON reviews (design_id, id DESC);
