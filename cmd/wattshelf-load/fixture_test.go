package main

import (
	"bytes"
	"flag"
	"os"
	"testing"
)

var updateFixture = flag.Bool("update", false, "rewrite the review package's copy of the 30-node design")

// reviewFixture is the review package's copy of the 30-node design, which
// its Propose benchmarks use: that package cannot import this one.
const reviewFixture = "../../domain/review/testdata/load-30.json"

func TestReviewPackageHasTheLoadDesign(t *testing.T) {
	want := append(reviewDesign("load", loadReviewDesignNodes), '\n')
	if *updateFixture {
		if err := os.WriteFile(reviewFixture, want, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	got, err := os.ReadFile(reviewFixture)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s is not the %d-node design this harness sends; run go test ./cmd/wattshelf-load -run ReviewPackage -update",
			reviewFixture, loadReviewDesignNodes)
	}
}
