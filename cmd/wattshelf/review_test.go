package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/api"
	"wattshelf/domain"
	"wattshelf/domain/store/storetest"
)

// Designs for the review command, each with the reason for its status.
var reviewCLIDesigns = map[string]string{
	// A 5 V bench supply to a 5 V lamp over a short, fused lead: 0.5 A in
	// 0.3 m of 22 AWG drops about 0.016 V, nothing near any limit; a blade
	// fuse breaks 1,000 A at 32 V DC (ISO 8820-3, from memory).
	"pass.json": `{"format": 1, "name": "Bench lamp", "ambient_c": 25,
	 "nodes": [
	  {"id": "bench", "type": "supply", "output_v": 5, "max_a": 2},
	  {"id": "lamp", "type": "load", "min_v": 4.5, "max_v": 5.5, "current_a": 0.5,
	   "feed": {"from": "bench", "wire": {"gauge": "22AWG", "length_m": 0.3},
	            "fuse": {"rating_a": 1, "speed": "fast", "family": "blade", "voltage_rating_v": 32, "distance_from_source_m": 0.05}}}]}`,
	// Four 2000 mAh cells at 1 A average last at most 2 h, short of the
	// 10 h asked: a source.runtime warning (DESIGN section 7).
	"warn.json": `{"format": 1, "name": "Desk fan", "ambient_c": 25, "target_runtime_h": 10,
	 "nodes": [
	  {"id": "pack", "type": "battery", "chemistry": "nimh", "series": 4, "parallel": 1, "cell_capacity_mah": 2000,
	   "cell_full_v": 1.4, "cell_nominal_v": 1.2, "cell_cutoff_v": 1.0},
	  {"id": "fan", "type": "load", "min_v": 3, "max_v": 6, "current_a": 1,
	   "feed": {"from": "pack", "wire": {"gauge": "22AWG", "length_m": 0.2},
	            "fuse": {"rating_a": 2, "speed": "slow", "family": "blade", "voltage_rating_v": 32, "distance_from_source_m": 0.05}}}]}`,
	// Ten NiMH cells (10 × 1.4 V = 14 V full) on a part rated 5.5 V at most.
	"fail.json": `{"format": 1, "name": "Cooked sensor",
	 "nodes": [
	  {"id": "pack", "type": "battery", "chemistry": "nimh", "series": 10, "parallel": 1,
	   "cell_capacity_mah": 2000, "cell_full_v": 1.4, "cell_nominal_v": 1.2, "cell_cutoff_v": 1.0},
	  {"id": "sensor", "type": "load", "min_v": 4.5, "max_v": 5.5, "current_a": 0.05,
	   "feed": {"from": "pack", "wire": {"gauge": "22AWG", "length_m": 0.2},
	            "fuse": {"rating_a": 1, "speed": "fast", "family": "blade", "voltage_rating_v": 32, "distance_from_source_m": 0.05}}}]}`,
	// A supply that includes its mains side is out of scope (DESIGN section 7).
	"mains.json": `{"format": 1, "name": "Wall adapter lamp",
	 "nodes": [
	  {"id": "adapter", "type": "supply", "output_v": 12, "max_a": 1, "mains": true},
	  {"id": "lamp", "type": "load", "min_v": 11, "max_v": 13, "current_a": 0.2,
	   "feed": {"from": "adapter", "wire": {"gauge": "22AWG", "length_m": 0.5},
	            "fuse": {"rating_a": 0.5, "speed": "fast", "voltage_rating_v": 32, "distance_from_source_m": 0.05}}}]}`,
	"malformed.json": `{"format": 1, "name": "Toaster", "nodes": [{"id": "t", "type": "toaster"}]}`,
	"broken.json":    `{"format": 1, "nodes": [`,
}

// reviewCLIServer serves the real router on a database of the test's own
// and writes the designs into a directory, returning both.
func reviewCLIServer(t *testing.T, cfg api.Config) (url, dir, memberToken string) {
	t.Helper()
	st, _ := storetest.NewStore(t)
	// serve stores the default limits as it starts; so does the harness.
	if _, err := st.SeedDefaultLimits(t.Context()); err != nil {
		t.Fatal(err)
	}
	cfg.Store, cfg.Logger, cfg.Registry = st, slog.New(slog.NewTextHandler(io.Discard, nil)), prometheus.NewRegistry()
	router, err := api.New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	srv := httptest.NewServer(router)
	t.Cleanup(srv.Close)
	secret, err := st.CreateToken(context.Background(), "test", "ada", domain.RoleMember)
	if err != nil {
		t.Fatal(err)
	}
	dir = t.TempDir()
	for name, doc := range reviewCLIDesigns {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(doc), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return srv.URL, dir, secret
}

// closedPort returns an address where nothing listens.
func closedPort(t *testing.T) string {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	addr := ln.Addr().String()
	ln.Close()
	return "http://" + addr
}

func reviewExitOf(err error) int {
	if err == nil {
		return 0
	}
	var ee *exitError
	if errors.As(err, &ee) {
		return ee.code
	}
	return -1
}

func TestReviewCommandExitCodes(t *testing.T) {
	url, dir, token := reviewCLIServer(t, api.Config{ReviewBurst: 1000})
	file := func(name string) string { return filepath.Join(dir, name) }
	noEnv := func(string) string { return "" }
	cases := []struct {
		name   string
		args   []string
		getenv func(string) string
		want   int
		stdout []string // each must appear on standard output
		stderr []string // each must appear on standard error
	}{
		{"pass", []string{file("pass.json"), "--server", url}, noEnv, 0, []string{"pass.json: PASS"}, nil},
		{"warn under the default fail-on", []string{file("warn.json"), "--server", url}, noEnv, 0,
			[]string{"warn.json: WARN", "warn source.runtime at pack: 2 h (warn at 10 h)"}, nil},
		{"warn with --fail-on warn", []string{"--fail-on", "warn", file("warn.json"), "--server", url}, noEnv, 1, []string{"WARN"}, nil},
		{"fail", []string{"--server", url, file("fail.json")}, noEnv, 1,
			[]string{"fail.json: FAIL", "fail voltage.range at sensor: 14 V (limit 5.5 V)"}, nil},
		{"out of scope has its own exit", []string{file("mains.json"), "--server", url}, noEnv, 4,
			[]string{"OUT_OF_SCOPE", "out_of_scope scope.mains at adapter"}, nil},
		{"out of scope whatever --fail-on says", []string{"--fail-on", "warn", file("mains.json"), "--server", url}, noEnv, 4,
			[]string{"OUT_OF_SCOPE"}, nil},
		{"out of scope outranks a failing design", []string{file("fail.json"), file("mains.json"), "--server", url}, noEnv, 4,
			[]string{"FAIL", "OUT_OF_SCOPE"}, nil},
		{"the worst file decides", []string{file("pass.json"), file("fail.json"), "--server", url}, noEnv, 1,
			[]string{"PASS", "FAIL"}, nil},
		{"a document the service rejects", []string{file("malformed.json"), "--server", url}, noEnv, 2,
			nil, []string{"rejected (HTTP 422)", "/nodes/0/type"}},
		{"broken JSON", []string{file("broken.json"), "--server", url}, noEnv, 2, nil, []string{"rejected (HTTP 400)"}},
		{"rejection outranks a failing design", []string{file("fail.json"), file("broken.json"), "--server", url}, noEnv, 2, []string{"FAIL"}, nil},
		{"a file that is not there", []string{file("absent.json"), "--server", url}, noEnv, 2, nil, []string{"cannot read"}},
		{"a closed port", []string{file("pass.json"), "--server", closedPort(t)}, noEnv, 3, nil, []string{"cannot reach"}},
		{"server from the environment", []string{file("pass.json")}, func(k string) string {
			if k == "WATTSHELF_SERVER" {
				return url
			}
			return ""
		}, 0, []string{"PASS"}, nil},
		{"with a token", []string{file("pass.json"), "--server", url, "--token", token}, noEnv, 0, []string{"PASS"}, nil},
		{"with an unknown token", []string{file("pass.json"), "--server", url, "--token", "wsh_nope"}, noEnv, 2, nil, []string{"HTTP 401"}},
		{"an old limits version that is not stored", []string{file("pass.json"), "--server", url, "--limits-version", "9"}, noEnv, 2, nil, []string{"limits_version"}},
		{"no files", []string{"--server", url}, noEnv, 2, nil, []string{"usage: wattshelf review"}},
		{"--help", []string{"--help"}, noEnv, 0, []string{"usage: wattshelf review", "4  a design is out of scope"}, nil},
		{"a wrong server path could not review it", []string{file("pass.json"), "--server", url + "/not-here"}, noEnv, 3,
			nil, []string{"no review service answers", "HTTP 404"}},
		{"a missing file in the middle hides no other", []string{file("pass.json"), file("absent.json"), file("fail.json"), "--server", url},
			noEnv, 2, []string{"pass.json: PASS", "fail.json: FAIL"}, []string{"absent.json: cannot read"}},
		{"a bad --fail-on", []string{file("pass.json"), "--fail-on", "never"}, noEnv, 2, nil, []string{"usage: wattshelf review"}},
		{"a bad --server", []string{file("pass.json"), "--server", "ftp://x"}, noEnv, 2, nil, []string{"usage: wattshelf review"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var stdout, stderr bytes.Buffer
			err := run(t.Context(), append([]string{"review"}, tc.args...), tc.getenv, &stdout, &stderr)
			if got := reviewExitOf(err); got != tc.want {
				t.Fatalf("exit %d (%v), want %d\nstdout: %s\nstderr: %s", got, err, tc.want, stdout.String(), stderr.String())
			}
			for _, want := range tc.stdout {
				if !strings.Contains(stdout.String(), want) {
					t.Errorf("stdout lacks %q:\n%s", want, stdout.String())
				}
			}
			for _, want := range tc.stderr {
				if !strings.Contains(stderr.String()+reviewErrText(err), want) {
					t.Errorf("stderr lacks %q:\n%s", want, stderr.String())
				}
			}
		})
	}
}

func TestReviewCommandJSON(t *testing.T) {
	url, dir, _ := reviewCLIServer(t, api.Config{ReviewBurst: 1000})
	var stdout, stderr bytes.Buffer
	err := run(t.Context(), []string{"review", "--json", filepath.Join(dir, "warn.json"), filepath.Join(dir, "fail.json"), "--server", url},
		func(string) string { return "" }, &stdout, &stderr)
	if reviewExitOf(err) != 1 {
		t.Fatalf("exit %d, want 1: %s", reviewExitOf(err), stderr.String())
	}
	dec := json.NewDecoder(&stdout)
	var statuses []string
	for dec.More() {
		var line struct {
			Report struct {
				Status   string   `json:"status"`
				Cautions []string `json:"cautions"`
			} `json:"report"`
		}
		if err := dec.Decode(&line); err != nil {
			t.Fatal(err)
		}
		rep := line.Report
		if len(rep.Cautions) == 0 {
			t.Fatal("a report without its cautions")
		}
		statuses = append(statuses, rep.Status)
	}
	if strings.Join(statuses, ",") != "warn,fail" {
		t.Fatalf("reports %v, want warn then fail", statuses)
	}
}

func TestReviewCommandReadsStandardInput(t *testing.T) {
	url, _, _ := reviewCLIServer(t, api.Config{ReviewBurst: 1000})
	var stdout, stderr bytes.Buffer
	err := reviewCommand(t.Context(), []string{"-", "--server", url}, func(string) string { return "" },
		strings.NewReader(reviewCLIDesigns["fail.json"]), &stdout, &stderr)
	if reviewExitOf(err) != 1 || !strings.Contains(stdout.String(), "-: FAIL") {
		t.Fatalf("exit %d, stdout %q, stderr %q", reviewExitOf(err), stdout.String(), stderr.String())
	}
}

func reviewErrText(err error) string {
	if err == nil {
		return ""
	}
	return err.Error()
}

// TestReviewCommandWaitsOutTheRateLimit reviews three files against a
// service allowing one review at once and then two a second: the command
// waits as Retry-After says instead of giving up.
func TestReviewCommandWaitsOutTheRateLimit(t *testing.T) {
	url, dir, _ := reviewCLIServer(t, api.Config{ReviewBurst: 1, ReviewsPerMinute: 120})
	var stdout, stderr bytes.Buffer
	pass := filepath.Join(dir, "pass.json")
	err := run(t.Context(), []string{"review", pass, pass, pass, "--server", url}, func(string) string { return "" }, &stdout, &stderr)
	if reviewExitOf(err) != 0 || strings.Count(stdout.String(), "PASS") != 3 {
		t.Fatalf("exit %d, stdout %q, stderr %q; want three passes", reviewExitOf(err), stdout.String(), stderr.String())
	}
}

// TestREADMEListsTheReviewExitStatuses holds the README's CLI section to
// the exit statuses the review command's usage lists, line for line.
func TestREADMEListsTheReviewExitStatuses(t *testing.T) {
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	_, block, ok := strings.Cut(reviewUsage, "Exit status, the highest any file earned:\n")
	if !ok {
		t.Fatal("the usage has no list of exit statuses")
	}
	block, _, _ = strings.Cut(block, "\n\n")
	lines := strings.Split(block, "\n")
	if len(lines) != reviewExitOutOfScope+1 {
		t.Fatalf("the usage lists %d exit statuses, want %d:\n%s", len(lines), reviewExitOutOfScope+1, block)
	}
	for code, line := range lines {
		if !strings.HasPrefix(line, fmt.Sprintf("  %d  ", code)) {
			t.Errorf("usage line %q does not list exit status %d", line, code)
		}
		if !strings.Contains(string(readme), line+"\n") {
			t.Errorf("README.md lacks the usage's line %q", line)
		}
	}
}

// With --json every file gets one line of JSON naming it: its report, or
// what kept it from one; the exit status is still the highest earned.
func TestReviewCommandJSONLines(t *testing.T) {
	url, dir, _ := reviewCLIServer(t, api.Config{ReviewBurst: 1000})
	files := []string{filepath.Join(dir, "pass.json"), filepath.Join(dir, "absent.json"), filepath.Join(dir, "warn.json"), filepath.Join(dir, "broken.json")}
	var stdout, stderr bytes.Buffer
	err := run(t.Context(), append([]string{"review", "--json", "--fail-on", "warn", "--server", url}, files...),
		func(string) string { return "" }, &stdout, &stderr)
	if got := reviewExitOf(err); got != 2 {
		t.Fatalf("exit %d (%v), want 2", got, err)
	}
	lines := strings.Split(strings.TrimSpace(stdout.String()), "\n")
	if len(lines) != len(files) {
		t.Fatalf("%d lines for %d files:\n%s", len(lines), len(files), stdout.String())
	}
	for i, line := range lines {
		var got struct {
			File   string `json:"file"`
			Exit   int    `json:"exit"`
			Error  string `json:"error"`
			Report *struct {
				Format int    `json:"format"`
				Status string `json:"status"`
			} `json:"report"`
		}
		if err := json.Unmarshal([]byte(line), &got); err != nil {
			t.Fatalf("line %d is not JSON: %v\n%s", i+1, err, line)
		}
		if got.File != files[i] {
			t.Errorf("line %d names %q, want %q", i+1, got.File, files[i])
		}
		switch filepath.Base(files[i]) {
		case "pass.json", "warn.json":
			if got.Report == nil || got.Report.Format != 2 || got.Exit != 0 {
				t.Errorf("line %d: %s", i+1, line)
			}
		case "absent.json", "broken.json":
			if got.Report != nil || got.Exit != 2 || got.Error == "" {
				t.Errorf("line %d: %s", i+1, line)
			}
		}
	}
}

// The summary prints each remedy under its finding, with the shelf parts
// that would do it (or that none fits), and why a finding has none.
func TestReviewSummaryPrintsRemedies(t *testing.T) {
	// As the service words a proposal; the figures are hand-built:
	// 1.25 × 6 A = 7.5 A, the next blade rating up is 10 A (common practice).
	const answer = `{"status": "fail", "limits_version": 1, "counts": {"pass": 3, "warn": 1, "fail": 1},
	 "checks": [
	  {"check": "fuse.rating", "node": "drv", "status": "fail", "value": 5, "limit": 7.5, "unit": "A",
	   "message": "the 5 A fuse is under 1.25 × the 6 A it carries",
	   "remedies": [{"change": "fit a 10 A blade fuse", "patch": [],
	                 "part": {"kind": "fuse", "at_least": {"rating_a": 7.5}},
	                 "shelf": [{"id": 23, "name": "Mini blade fuses 10 A", "bin": "F1 fuses", "quantity": 20},
	                           {"id": 40, "name": "Loose 15 A blade", "bin": "", "quantity": 1}]},
	                {"change": "use 14AWG wire", "patch": [], "part": {"kind": "wire"}}]},
	  {"check": "voltage.range", "node": "lamp", "status": "warn", "value": 9, "limit": 10, "unit": "V",
	   "message": "browns out before the pack is empty", "no_remedy": "no cell count keeps both loads in their windows"},
	  {"check": "wire.drop", "node": "lamp", "status": "pass", "value": 1, "limit": 10, "unit": "%", "message": "fine"}]}`
	var rep reviewReport
	if err := json.Unmarshal([]byte(answer), &rep); err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	printReviewSummary(&out, "cart.json", rep)
	want := `cart.json: FAIL (limits v1; 3 pass, 1 warn, 1 fail)
  fail fuse.rating at drv: 5 A (limit 7.5 A) the 5 A fuse is under 1.25 × the 6 A it carries
    fix: fit a 10 A blade fuse
      on the shelf: Mini blade fuses 10 A (part 23, bin F1 fuses, 20 on hand)
      on the shelf: Loose 15 A blade (part 40, bin no bin given, 1 on hand)
    fix: use 14AWG wire
      on the shelf: no wire that fits
  warn voltage.range at lamp: 9 V (limit 10 V) browns out before the pack is empty
    no single change clears it: no cell count keeps both loads in their windows
`
	if out.String() != want {
		t.Errorf("summary:\n%s\nwant:\n%s", out.String(), want)
	}
}

func TestProposedPath(t *testing.T) {
	for file, want := range map[string]string{
		"designs/cart.json": "designs/cart.proposed.json",
		"cart":              "cart.proposed.json",
		"a.b/cart.v2.json":  "a.b/cart.v2.proposed.json",
		"-":                 "proposed.json",
	} {
		if got := proposedPath(file); got != want {
			t.Errorf("proposedPath(%q) = %q, want %q", file, got, want)
		}
	}
}

// --propose prints each finding's remedies and writes the proposed design
// beside the file; the exit status stays the original design's.
func TestReviewCommandPropose(t *testing.T) {
	url, dir, _ := reviewCLIServer(t, api.Config{ReviewBurst: 1000})
	warn, fail := filepath.Join(dir, "warn.json"), filepath.Join(dir, "fail.json")
	var stdout, stderr bytes.Buffer
	err := run(t.Context(), []string{"review", "--propose", "--fail-on", "warn", warn, fail, "--server", url},
		func(string) string { return "" }, &stdout, &stderr)
	if reviewExitOf(err) != reviewExitFindings {
		t.Fatalf("exit %d, want %d: %s", reviewExitOf(err), reviewExitFindings, stderr.String())
	}
	out := stdout.String()
	warnOut, failOut, ok := strings.Cut(out, fail+": FAIL")
	if !ok {
		t.Fatalf("no summary of fail.json:\n%s", out)
	}
	// warn.json's four 2000 mAh cells last 2 h at 1 A; the 10 h asked
	// need 10 Ah, five strings of them in parallel (10 / 2).
	written := filepath.Join(dir, "warn.proposed.json")
	for _, want := range []string{
		"  warn source.runtime at pack:",
		"\n    fix: Use 5 strings of cells in parallel in pack instead of 1",
		"  proposed design written to " + written + ": PASS when reviewed\n",
	} {
		if !strings.Contains(warnOut, want) {
			t.Errorf("the summary of warn.json lacks %q:\n%s", want, warnOut)
		}
	}
	raw, err := os.ReadFile(written)
	if err != nil {
		t.Fatal(err)
	}
	doc, err := domain.DecodeDesign(raw)
	if err != nil {
		t.Fatalf("the proposed design does not decode: %v\n%s", err, raw)
	}
	if p := doc.Nodes[0].Parallel; p == nil || *p != 5 {
		t.Errorf("the proposed pack has %v strings in parallel, want 5", p)
	}
	// fail.json gives a 4.5–5.5 V sensor 14 V from ten NiMH cells, and no
	// cell count suits it: full, n × 1.4 V ≤ 5.5 V allows 3 cells at most
	// (4 give 5.6 V); at the 1.0 V cutoff, n × 1.0 V ≥ 4.5 V needs 5 or
	// more. The summary says so, and nothing is written.
	for _, want := range []string{
		"  fail voltage.range at sensor:",
		"\n    no single change clears it: ",
		"  no proposed design: no finding has a single change that clears it\n",
	} {
		if !strings.Contains(failOut, want) {
			t.Errorf("the summary of fail.json lacks %q:\n%s", want, failOut)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "fail.proposed.json")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("a proposed design was written for fail.json: %v", err)
	}

	// With --json the line names the proposed file and its status; a
	// design out of scope gets none.
	stdout.Reset()
	mains := filepath.Join(dir, "mains.json")
	err = run(t.Context(), []string{"review", "--propose", "--json", warn, mains, "--server", url}, func(string) string { return "" }, &stdout, &stderr)
	if reviewExitOf(err) != reviewExitOutOfScope {
		t.Fatalf("exit %d, want %d: %s", reviewExitOf(err), reviewExitOutOfScope, stderr.String())
	}
	dec := json.NewDecoder(&stdout)
	var lines []reviewAnswer
	for dec.More() {
		var line reviewAnswer
		if err := dec.Decode(&line); err != nil {
			t.Fatal(err)
		}
		lines = append(lines, line)
	}
	if len(lines) != 2 || lines[0].ProposedFile != written || lines[0].ProposedStatus != "pass" || len(lines[0].Report) == 0 {
		t.Fatalf("JSON lines %+v", lines)
	}
	if lines[1].ProposedFile != "" || len(lines[1].Report) == 0 {
		t.Errorf("the design out of scope: %+v, want its report and no proposed design", lines[1])
	}
	if _, err := os.Stat(filepath.Join(dir, "mains.proposed.json")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("a proposed design was written for the design out of scope: %v", err)
	}
}
