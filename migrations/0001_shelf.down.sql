DROP TABLE audit;
DROP TABLE measurements;
DROP TABLE components;
DROP TABLE tokens;
DROP TABLE users;
