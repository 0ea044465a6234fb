-- The public shelf is read in (bin, name, id) order a page at a time;
-- this index serves each page without sorting the whole table.
CREATE INDEX components_shelf_idx ON components (bin, name, id);
