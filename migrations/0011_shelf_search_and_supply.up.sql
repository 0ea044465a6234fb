-- The kiosk and GET /v1/shelf search a part's name, kind, bin,
-- description and origin on the server, one ILIKE '%word%' per word
-- (domain/store: shelfSearchText); this index finds such words without
-- reading every row of a large shelf.
CREATE INDEX components_shelf_text_idx ON components
    USING gin ((name || ' ' || kind || ' ' || bin || ' ' || description || ' ' || origin) gin_trgm_ops);

-- fits_v now reads a part's supply window from its electrical fields
-- (domain.Electrical.SupplyWindow): these columns took a connector's
-- rating for a supply voltage and a lone rated voltage for a window from
-- 0 V up, so they go.
DROP INDEX components_window_idx;
ALTER TABLE components DROP COLUMN window_low_v, DROP COLUMN window_high_v;
