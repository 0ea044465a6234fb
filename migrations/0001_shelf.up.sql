CREATE EXTENSION IF NOT EXISTS pg_trgm;

CREATE TABLE users (
    id         bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    name       text NOT NULL UNIQUE,
    role       text NOT NULL CHECK (role IN ('member', 'staff')),
    created_at timestamptz NOT NULL DEFAULT now()
);

-- Tokens are kept only as a SHA-256 digest of the secret.
CREATE TABLE tokens (
    id         bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    user_id    bigint NOT NULL REFERENCES users (id) ON DELETE CASCADE,
    digest     bytea NOT NULL UNIQUE,
    created_at timestamptz NOT NULL DEFAULT now(),
    last_used  timestamptz,
    revoked_at timestamptz
);
CREATE INDEX tokens_user_idx ON tokens (user_id);

CREATE TABLE components (
    id           bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    name         text NOT NULL,
    kind         text NOT NULL,
    description  text NOT NULL DEFAULT '',
    origin       text NOT NULL DEFAULT '',
    mains_origin boolean NOT NULL DEFAULT false,
    bin          text NOT NULL DEFAULT '',
    quantity     integer NOT NULL DEFAULT 0 CHECK (quantity >= 0),
    condition    text NOT NULL,
    spec_source  text NOT NULL,
    notes        text NOT NULL DEFAULT '',
    electrical   jsonb NOT NULL DEFAULT '{}',
    owner        text NOT NULL,
    created_at   timestamptz NOT NULL DEFAULT now(),
    updated_at   timestamptz NOT NULL DEFAULT now(),
    version      bigint NOT NULL DEFAULT 1,
    -- The voltage window the fits_v filter searches: a part's own min/max,
    -- else a regulator's or driver's input window, else its rated voltage.
    window_low_v  double precision GENERATED ALWAYS AS (
        coalesce((electrical ->> 'min_v')::double precision,
                 (electrical ->> 'min_input_v')::double precision, 0)) STORED,
    window_high_v double precision GENERATED ALWAYS AS (
        coalesce((electrical ->> 'max_v')::double precision,
                 (electrical ->> 'max_input_v')::double precision,
                 (electrical ->> 'rated_v')::double precision,
                 (electrical ->> 'rating_v')::double precision)) STORED
);
CREATE INDEX components_kind_idx ON components (kind, id);
CREATE INDEX components_bin_idx ON components (bin, id);
CREATE INDEX components_window_idx ON components (window_low_v, window_high_v);
CREATE INDEX components_text_idx ON components USING gin ((name || ' ' || description) gin_trgm_ops);

CREATE TABLE measurements (
    id           bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    component_id bigint NOT NULL REFERENCES components (id) ON DELETE CASCADE,
    voltage_v    double precision NOT NULL,
    current_a    double precision NOT NULL,
    speed_rpm    double precision,
    note         text NOT NULL DEFAULT '',
    recorded_by  text NOT NULL,
    recorded_at  timestamptz NOT NULL DEFAULT now()
);
CREATE INDEX measurements_component_idx ON measurements (component_id, id);

-- Who created, changed or deleted what, and every token event.
CREATE TABLE audit (
    id           bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    at           timestamptz NOT NULL DEFAULT now(),
    actor        text NOT NULL,
    action       text NOT NULL,
    subject_type text NOT NULL,
    subject_id   text NOT NULL,
    detail       jsonb NOT NULL DEFAULT '{}'
);
CREATE INDEX audit_subject_idx ON audit (subject_type, subject_id);
