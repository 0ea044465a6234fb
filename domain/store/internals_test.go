package store

// ShelfSearchText is the shelf search's expression, for the test that
// holds it to migration 0011's index.
const ShelfSearchText = shelfSearchText
