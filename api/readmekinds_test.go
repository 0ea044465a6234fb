package api

import (
	"os"
	"strings"
	"testing"
)

// The README's API section names every problem type the service answers
// with, so a client author learns of each from it.
func TestREADMEListsEveryProblemType(t *testing.T) {
	readme, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	for kind := range problemKinds() {
		if !strings.Contains(string(readme), "`…:"+kind+"`") && !strings.Contains(string(readme), "`urn:wattshelf:problem:"+kind+"`") {
			t.Errorf("README.md does not list the problem type %q", kind)
		}
	}
}
