-- A stored review keeps a report of tens of kilobytes and the document it
-- read. lz4 compresses them several times faster than the default pglz,
-- and every stored review pays that price while its request waits. A
-- server built without lz4 keeps pglz. Rows stored before keep theirs.
DO $$
BEGIN
    ALTER TABLE reviews ALTER COLUMN report SET COMPRESSION lz4;
    ALTER TABLE reviews ALTER COLUMN document SET COMPRESSION lz4;
EXCEPTION WHEN feature_not_supported THEN
    RAISE NOTICE 'this server has no lz4: stored reviews stay compressed with pglz';
END
$$;
