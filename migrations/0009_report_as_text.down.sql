ALTER TABLE reviews ALTER COLUMN report TYPE json USING report::json;
DO $$
BEGIN
    ALTER TABLE reviews ALTER COLUMN report SET COMPRESSION lz4;
EXCEPTION WHEN feature_not_supported THEN
    RAISE NOTICE 'this server has no lz4: stored reviews stay compressed with pglz';
END
$$;
