DROP TRIGGER components_bump_shelf_revision ON components;
DROP FUNCTION bump_shelf_revision();
DROP TABLE shelf_revision;
