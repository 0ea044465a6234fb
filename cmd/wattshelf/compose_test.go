package main

import (
	"os"
	"regexp"
	"slices"
	"strings"
	"testing"

	"go.yaml.in/yaml/v3"
)

// The compose file never carries a database password of its own: every
// use of it is ${WATTSHELF_DB_PASSWORD:?…}, which compose refuses to start
// (and `docker compose config` refuses to print) without. The demo data
// loads only under the demo profile, so a space's first `docker compose
// up` starts with an empty shelf.
func TestComposeTakesThePasswordFromTheEnvironment(t *testing.T) {
	raw, err := os.ReadFile("../../docker-compose.yml")
	if err != nil {
		t.Fatal(err)
	}
	var compose struct {
		Services map[string]struct {
			Command     []string          `yaml:"command"`
			Profiles    []string          `yaml:"profiles"`
			Environment map[string]string `yaml:"environment"`
		} `yaml:"services"`
	}
	if err := yaml.Unmarshal(raw, &compose); err != nil {
		t.Fatal(err)
	}
	required := regexp.MustCompile(`\$\{WATTSHELF_DB_PASSWORD:\?[^}]+\}`)
	uses := 0
	for name, svc := range compose.Services {
		for key, value := range svc.Environment {
			if !strings.Contains(key, "PASSWORD") && !strings.Contains(value, "@db:") {
				continue
			}
			uses++
			if !required.MatchString(value) {
				t.Errorf("%s: %s = %q does not require WATTSHELF_DB_PASSWORD from the environment", name, key, value)
			}
		}
		demo := slices.Contains(svc.Command, "--demo") || slices.Contains(svc.Command, "seed-demo")
		if demo && !slices.Contains(svc.Profiles, "demo") {
			t.Errorf("%s loads the demo data outside the demo profile: %v", name, svc.Command)
		}
	}
	if uses < 2 {
		t.Errorf("found %d uses of the database password; the database and the service both need it", uses)
	}
}
