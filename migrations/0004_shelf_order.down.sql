DROP INDEX components_shelf_idx;
