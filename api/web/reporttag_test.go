package web

import (
	"bytes"
	"crypto/sha256"
	"io"
	"os"
	"testing"
	"time"

	"wattshelf/domain/store"
)

// A report page's tag is built from the digest of the program running,
// so a build that renders the page otherwise (a template or any Go code
// changed) tags it otherwise, with no version to bump by hand.
func TestReportTagFollowsTheBuild(t *testing.T) {
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(exe)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		t.Fatal(err)
	}
	v := mustViews(t)
	if !bytes.Equal(v.build, h.Sum(nil)) {
		t.Fatalf("the views' build digest %x is not the SHA-256 of %s", v.build, exe)
	}

	stamp := store.ReviewStamp{ID: 7, CreatedAt: time.Date(2026, 3, 2, 9, 30, 0, 0, time.UTC), ShelfRevision: 12}
	this := &pages{views: v}
	other := &pages{views: &views{build: append(bytes.Clone(v.build[:31]), v.build[31]^1)}}
	if this.reportTag("page", stamp) == other.reportTag("page", stamp) {
		t.Error("two builds give a stored review's page the same tag")
	}
	if this.reportTag("page", stamp) != (&pages{views: mustViews(t)}).reportTag("page", stamp) {
		t.Error("the same build gives a stored review's page two tags")
	}
}
