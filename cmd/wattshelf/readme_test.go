package main

import (
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"

	"wattshelf/domain/store/storetest"
)

// readmeBlocks are the fenced blocks of one language in the README's
// sections of the given titles, in order.
func readmeBlocks(t *testing.T, lang string, sections ...string) []string {
	t.Helper()
	raw, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	fence := regexp.MustCompile("(?ms)^```" + lang + "\n(.*?)^```\n")
	var blocks []string
	for _, part := range strings.Split(string(raw), "\n## ") {
		title, _, _ := strings.Cut(part, "\n")
		if !slices.Contains(sections, title) {
			continue
		}
		for _, m := range fence.FindAllStringSubmatch(part, -1) {
			blocks = append(blocks, m[1])
		}
	}
	if len(blocks) == 0 {
		t.Fatalf("README.md has no %s blocks", lang)
	}
	return blocks
}

// The shell blocks of the README's walkthrough (Quick start, Reviewing
// designs, and Limits where jq is installed) run as written on a fresh clone, one after another in one
// shell as a reader types them, against a server started as Quick start
// says (`serve --demo`), and no request in them is refused: an answer
// that is a problem document would show a reader something the README
// does not promise. Only the two lines that start the server and run the
// tests are left to the test itself, and the server's address is the
// test's own. (The Performance section's block is the load harness, run
// by its own test.)
func TestREADMEShellBlocksRunAsWritten(t *testing.T) {
	if _, err := exec.LookPath("curl"); err != nil {
		t.Skip("the README's examples use curl")
	}
	dbURL := storetest.NewDatabaseURL(t)
	bin := buildBinary(t)
	srv := startProcess(t, bin, dbURL, "--demo")
	addr := strings.TrimPrefix(srv.url, "http://")

	var script strings.Builder
	script.WriteString("set -eu -o pipefail\n")
	sections := []string{"Quick start", "Reviewing designs"}
	if _, err := exec.LookPath("jq"); err == nil {
		sections = append(sections, "Limits") // its example edits the limits with jq
	} else {
		t.Log("jq is not installed: the Limits section's example is not run")
	}
	for _, block := range readmeBlocks(t, "sh", sections...) {
		for _, line := range strings.Split(block, "\n") {
			switch {
			case strings.HasPrefix(line, "go run ./cmd/wattshelf serve"), strings.HasPrefix(line, "go test "):
				continue // the test started the server, and is the tests
			}
			line = strings.ReplaceAll(line, "localhost:8080", addr)
			line = strings.ReplaceAll(line, "127.0.0.1:8080", addr)
			script.WriteString(line + "\n")
		}
	}
	home := t.TempDir()
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, "bash", "-c", script.String())
	cmd.Stdin = nil
	cmd.Dir = "../.."
	cmd.Env = []string{"HOME=" + home, "PATH=" + os.Getenv("PATH"), "DATABASE_URL=" + dbURL,
		"GOCACHE=" + goEnv(t, "GOCACHE"), "GOMODCACHE=" + goEnv(t, "GOMODCACHE"), "GOFLAGS=" + os.Getenv("GOFLAGS")}
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("the README's shell blocks failed: %v\n%s", err, out)
	}
	if problem := regexp.MustCompile(`"type":"urn:wattshelf:problem:[^"]*"[^}]*`).Find(out); problem != nil {
		t.Errorf("a README example was refused: %s\n\nwhole output:\n%s", problem, out)
	}
	if _, err := os.Stat(filepath.Join(home, ".local", "bin", "wattshelf")); err != nil {
		t.Errorf("the README's install step left no wattshelf: %v", err)
	}
	wants := []string{`"points":2`, `"share_id"`, `"status":"warn"`, `"proposed_status":"`, "    fix: ", "proposed design written to "}
	if slices.Contains(sections, "Limits") {
		wants = append(wants, `staff change by alex on`)
	}
	for _, want := range wants {
		if !strings.Contains(string(out), want) {
			t.Errorf("the README's examples never showed %s:\n%s", want, out)
		}
	}
}

func goEnv(t *testing.T, name string) string {
	t.Helper()
	out, err := exec.Command("go", "env", name).Output()
	if err != nil {
		t.Fatal(err)
	}
	return strings.TrimSpace(string(out))
}
