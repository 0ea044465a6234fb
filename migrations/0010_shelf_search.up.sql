-- The kiosk and GET /v1/shelf search a part's name, kind, bin,
-- description and origin on the server, one ILIKE '%word%' per word
-- (domain/store: shelfSearchText); this index finds such words without
-- reading every row of a large shelf.
CREATE INDEX components_shelf_text_idx ON components
    USING gin ((name || ' ' || kind || ' ' || bin || ' ' || description || ' ' || origin) gin_trgm_ops);
