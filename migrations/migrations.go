// Package migrations holds the numbered schema changes, embedded so the
// binary migrates its own database without files beside it.
package migrations

import "embed"

// Files are the up and down SQL files, named for golang-migrate.
//
//go:embed *.sql
var Files embed.FS
