package main

import (
	"strings"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

// snapshotCounts says what a snapshot holds, for export's and import's
// closing line: "24 components, 1 review, …".
func snapshotCounts(snap store.Snapshot) string {
	return strings.Join([]string{
		domain.CountOf(len(snap.Components), "component", "components"),
		domain.CountOf(len(snap.Measurements), "measurement", "measurements"),
		domain.CountOf(len(snap.Designs), "design", "designs"),
		domain.CountOf(len(snap.Reviews), "review", "reviews"),
		domain.CountOf(len(snap.Limits), "limits version", "limits versions"),
		domain.CountOf(len(snap.Users), "user", "users"),
		domain.CountOf(len(snap.Audit), "audit entry", "audit entries"),
	}, ", ")
}
