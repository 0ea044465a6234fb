DROP TABLE reviews;
DROP TABLE designs;
DROP TABLE limits;
