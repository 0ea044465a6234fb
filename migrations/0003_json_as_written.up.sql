-- Reports and limits are returned as the engine and staff wrote them:
-- json keeps the text, where jsonb would reorder keys (a report would
-- start with "feeds" instead of "status").
ALTER TABLE reviews ALTER COLUMN report TYPE json USING report::json;
ALTER TABLE limits ALTER COLUMN body TYPE json USING body::json;
