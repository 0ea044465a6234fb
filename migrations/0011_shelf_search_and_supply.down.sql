ALTER TABLE components
    ADD COLUMN window_low_v  double precision GENERATED ALWAYS AS (
        coalesce((electrical ->> 'min_v')::double precision,
                 (electrical ->> 'min_input_v')::double precision, 0)) STORED,
    ADD COLUMN window_high_v double precision GENERATED ALWAYS AS (
        coalesce((electrical ->> 'max_v')::double precision,
                 (electrical ->> 'max_input_v')::double precision,
                 (electrical ->> 'rated_v')::double precision,
                 (electrical ->> 'rating_v')::double precision)) STORED;
CREATE INDEX components_window_idx ON components (window_low_v, window_high_v);
DROP INDEX components_shelf_text_idx;
