DROP TABLE cursor_key;
