-- The report is written by the review engine's encoder, which is tested
-- against encoding/json, and imports check theirs before inserting. The
-- json type parsed it once more on every stored review: tens of kilobytes,
-- which under load cost the database more time than the rest of the
-- insert (issue 6). text keeps the bytes exactly as json did.
ALTER TABLE reviews ALTER COLUMN report TYPE text;
-- Changing the type must not lose migration 0007's choice of lz4.
DO $$
BEGIN
    ALTER TABLE reviews ALTER COLUMN report SET COMPRESSION lz4;
EXCEPTION WHEN feature_not_supported THEN
    RAISE NOTICE 'this server has no lz4: stored reviews stay compressed with pglz';
END
$$;
