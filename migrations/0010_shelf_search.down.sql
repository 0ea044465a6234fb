DROP INDEX components_shelf_text_idx;
