package main

import (
	"os"
	"regexp"
	"strings"
	"testing"
)

// The README's cron lines are lines cron takes: five time fields, every %
// escaped (cron ends the command at a bare %), and a wattshelf command
// whose subcommand and flags the program's usage lists.
func TestREADMECronLinesAreValid(t *testing.T) {
	raw, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	lines := regexp.MustCompile("`((?:[0-9*/,-]+ ){5}[^`]*wattshelf [^`]*)`").FindAllStringSubmatch(string(raw), -1)
	if len(lines) == 0 {
		t.Fatal("README.md has no cron line")
	}
	for _, m := range lines {
		line := m[1]
		fields := strings.Fields(line)
		for _, f := range fields[:5] {
			if !regexp.MustCompile(`^[0-9*/,-]+$`).MatchString(f) {
				t.Errorf("%q: time field %q", line, f)
			}
		}
		if strings.Count(line, "%") != strings.Count(line, `\%`) {
			t.Errorf("%q has a %% that is not escaped; cron would end the command there", line)
		}
		_, command, _ := strings.Cut(line, "wattshelf ")
		words := strings.Fields(command)
		if !strings.Contains(usage, "wattshelf "+words[0]) {
			t.Errorf("%q: the usage has no subcommand %q", line, words[0])
		}
		for _, w := range words[1:] {
			if strings.HasPrefix(w, "--") && !strings.Contains(usage, w) {
				t.Errorf("%q: the usage has no flag %s", line, w)
			}
		}
	}
}
