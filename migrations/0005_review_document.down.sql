ALTER TABLE reviews DROP COLUMN document;
