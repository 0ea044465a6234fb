package main

import (
	"testing"

	"wattshelf/domain/store"
)

func TestSnapshotCounts(t *testing.T) {
	snap := store.Snapshot{
		Components: make([]store.ExportedComponent, 24), Reviews: make([]store.ExportedReview, 1),
		Limits: make([]store.ExportedLimits, 1), Audit: make([]store.AuditEntry, 2),
	}
	want := "24 components, 0 measurements, 0 designs, 1 review, 1 limits version, 0 users, 2 audit entries"
	if got := snapshotCounts(snap); got != want {
		t.Errorf("snapshotCounts = %q, want %q", got, want)
	}
}
