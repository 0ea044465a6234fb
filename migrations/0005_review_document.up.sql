-- A review keeps the document it read, so its shared report can draw what
-- only the document holds (connectors, fuse speeds) after the design has
-- changed. Reviews stored before this keep an empty document.
ALTER TABLE reviews ADD COLUMN document text NOT NULL DEFAULT '';
