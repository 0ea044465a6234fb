ALTER TABLE limits ALTER COLUMN body TYPE jsonb USING body::jsonb;
ALTER TABLE reviews ALTER COLUMN report TYPE jsonb USING report::jsonb;
