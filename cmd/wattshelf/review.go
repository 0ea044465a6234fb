package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	apiclient "wattshelf/api/client"
	"wattshelf/domain/review"
)

// Exit statuses of `wattshelf review`: the command exits with the highest
// any file earned. reviewUsage says what each means, and the README's
// CLI section repeats it; a test holds the two together.
const (
	reviewExitClean       = 0 // nothing reached the --fail-on level
	reviewExitFindings    = 1 // some design has a finding at or past it
	reviewExitRejected    = 2 // the service refused a document, or a file could not be read
	reviewExitUnreachable = 3 // the service could not be reached or could not answer
	reviewExitOutOfScope  = 4 // a design is out of scope, whatever --fail-on says
)

const (
	defaultReviewServer = "http://127.0.0.1:8080"
	// reviewRetries bounds how often one file waits out a rate limit.
	reviewRetries = 5
	// maxRetryWait caps a Retry-After the client will honour.
	maxRetryWait = time.Minute
)

const reviewUsage = `usage: wattshelf review FILE... [--server URL] [--token T] [--json] [--fail-on warn|fail] [--limits-version N] [--propose]

Sends each design file (- for standard input) to the service's review and
prints what it found; with --json, one line of JSON a file:
{"file": F, "report": {...}} or {"file": F, "exit": N, "error": "..."}.
A file that cannot be read or reviewed does not stop the others.

--propose asks for remedies too: the summary prints what would fix each
finding, with the shelf parts that would do it, and the service's proposed
design (the lightest remedy of each finding applied) is written next to
FILE as FILE's name with .proposed.json for .json (proposed.json in the
current directory for standard input), replacing a file of that name.
With --json the line adds "proposed_status" and "proposed_file". The
exit status is still the original design's.

Exit status, the highest any file earned:
  0  no design reaches the --fail-on level (default fail)
  1  a design reaches it
  2  the service rejected a document, or a file could not be read or written
  3  the service could not be reached or could not answer (a wrong --server path included)
  4  a design is out of scope (mains, or a source above 50 V DC), whatever --fail-on says

Environment: WATTSHELF_SERVER (default ` + defaultReviewServer + `), WATTSHELF_TOKEN.
`

// reviewOptions are the parsed arguments of `wattshelf review`.
type reviewOptions struct {
	stdout        io.Writer // where summaries go
	server        string
	token         string
	asJSON        bool
	failOn        string
	limitsVersion int
	propose       bool
	files         []string
}

// parseReviewArgs accepts flags before, between and after the files, as
// people type them.
func parseReviewArgs(args []string, getenv func(string) string) (reviewOptions, error) {
	opts := reviewOptions{server: getenv("WATTSHELF_SERVER"), token: getenv("WATTSHELF_TOKEN"), failOn: "fail"}
	if opts.server == "" {
		opts.server = defaultReviewServer
	}
	fs := flag.NewFlagSet("review", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	fs.StringVar(&opts.server, "server", opts.server, "service address")
	fs.StringVar(&opts.token, "token", opts.token, "bearer token")
	fs.BoolVar(&opts.asJSON, "json", false, "print each report as JSON")
	fs.StringVar(&opts.failOn, "fail-on", opts.failOn, "warn or fail")
	fs.IntVar(&opts.limitsVersion, "limits-version", 0, "review against this limits version")
	fs.BoolVar(&opts.propose, "propose", false, "ask for remedies and write the proposed design")
	for {
		if err := fs.Parse(args); err != nil {
			return opts, err
		}
		args = fs.Args()
		if len(args) == 0 {
			break
		}
		opts.files = append(opts.files, args[0])
		args = args[1:]
	}
	if len(opts.files) == 0 {
		return opts, errors.New("name at least one design file")
	}
	if opts.failOn != "warn" && opts.failOn != "fail" {
		return opts, fmt.Errorf("--fail-on takes warn or fail, not %q", opts.failOn)
	}
	if opts.limitsVersion < 0 {
		return opts, errors.New("--limits-version takes a version number")
	}
	u, err := url.Parse(opts.server)
	if err != nil || (u.Scheme != "http" && u.Scheme != "https") || u.Host == "" {
		return opts, fmt.Errorf("--server takes an http or https address, not %q", opts.server)
	}
	opts.server = strings.TrimRight(opts.server, "/")
	return opts, nil
}

// reviewCommand runs `wattshelf review`.
func reviewCommand(ctx context.Context, args []string, getenv func(string) string, stdin io.Reader, stdout, stderr io.Writer) error {
	opts, err := parseReviewArgs(args, getenv)
	if errors.Is(err, flag.ErrHelp) {
		fmt.Fprint(stdout, reviewUsage)
		return nil
	}
	if err != nil {
		fmt.Fprint(stderr, reviewUsage)
		return &exitError{code: 2, msg: err.Error()}
	}
	opts.stdout = stdout
	client := &http.Client{Timeout: 2 * time.Minute}
	worst := reviewExitClean
	for _, file := range opts.files {
		worst = max(worst, reviewFile(ctx, client, opts, file, stdin, stdout, stderr))
	}
	if worst == reviewExitClean {
		return nil
	}
	return &exitError{code: worst}
}

// reviewReport is the part of a report (format 2) the summary
// prints. It is decoded from the service's JSON, the contract between the
// two, rather than from the engine's Go types.
type reviewReport struct {
	Status        string `json:"status"`
	LimitsVersion int    `json:"limits_version"`
	Counts        struct {
		Pass int `json:"pass"`
		Warn int `json:"warn"`
		Fail int `json:"fail"`
	} `json:"counts"`
	Checks []reportCheck `json:"checks"`
	NotRun []string      `json:"not_run"`
}

// reportCheck is one check of a reviewReport.
type reportCheck struct {
	Check    string         `json:"check"`
	Node     string         `json:"node"`
	Status   string         `json:"status"`
	Value    *float64       `json:"value"`
	Limit    *float64       `json:"limit"`
	WarnAt   *float64       `json:"warn_at"`
	Unit     string         `json:"unit"`
	Message  string         `json:"message"`
	Remedies []reportRemedy `json:"remedies"`
	NoRemedy string         `json:"no_remedy"`
}

// reportRemedy is one remedy of a reportCheck, with the shelf parts that
// would do it.
type reportRemedy struct {
	Change string `json:"change"`
	Part   *struct {
		Kind string `json:"kind"`
	} `json:"part"`
	Shelf []struct {
		ID       int64  `json:"id"`
		Name     string `json:"name"`
		Bin      string `json:"bin"`
		Quantity int    `json:"quantity"`
	} `json:"shelf"`
}

// reviewAnswer is what reviewing one file gave: the report as the service
// sent it and, with --propose, the proposed design's status and where it
// was written.
type reviewAnswer struct {
	Report         json.RawMessage `json:"report,omitempty"`
	ProposedStatus string          `json:"proposed_status,omitempty"`
	ProposedFile   string          `json:"proposed_file,omitempty"`
}

// reviewFile reviews one file and returns its exit status. What went
// wrong goes to standard error, and with --json also to standard output
// as the file's line, so a script reading the lines hears of every file.
func reviewFile(ctx context.Context, client *http.Client, opts reviewOptions, file string, stdin io.Reader, stdout, stderr io.Writer) int {
	code, msg, answer := reviewOneFile(ctx, client, opts, file, stdin)
	if msg != "" {
		fmt.Fprintf(stderr, "%s: %s\n", file, msg)
	}
	if opts.asJSON {
		line := struct {
			File  string `json:"file"`
			Exit  int    `json:"exit,omitempty"`
			Error string `json:"error,omitempty"`
			reviewAnswer
		}{File: file, reviewAnswer: answer}
		if msg != "" {
			line.Exit, line.Error = code, msg
		}
		out, err := json.Marshal(line)
		if err != nil {
			fmt.Fprintf(stderr, "%s: cannot write its JSON line: %v\n", file, err)
			return max(code, reviewExitUnreachable)
		}
		stdout.Write(append(out, '\n'))
	}
	return code
}

// reviewOneFile reviews one file: its exit status, what went wrong (""
// when it was reviewed) and, when it was, what the service answered. The
// summary is printed here unless --json asked for the report.
func reviewOneFile(ctx context.Context, client *http.Client, opts reviewOptions, file string, stdin io.Reader) (int, string, reviewAnswer) {
	var doc []byte
	var err error
	if file == "-" {
		doc, err = io.ReadAll(stdin)
	} else {
		doc, err = os.ReadFile(file)
	}
	if err != nil {
		return reviewExitRejected, fmt.Sprintf("cannot read: %v", err), reviewAnswer{}
	}
	status, body, err := postForReview(ctx, client, opts, doc)
	var problem *apiclient.Problem
	if err != nil && !errors.As(err, &problem) {
		return reviewExitUnreachable, fmt.Sprintf("cannot reach %s: %v", opts.server, err), reviewAnswer{}
	}
	switch {
	case status >= 500 || status == http.StatusTooManyRequests:
		return reviewExitUnreachable, fmt.Sprintf("the service could not review it (HTTP %d)%s", status, describeProblem(err)), reviewAnswer{}
	case status == http.StatusNotFound || status == http.StatusMethodNotAllowed:
		// No review route there: a wrong --server, not a bad document.
		return reviewExitUnreachable, fmt.Sprintf("no review service answers at %s (HTTP %d); check --server", opts.server, status), reviewAnswer{}
	case status >= 400:
		return reviewExitRejected, fmt.Sprintf("rejected (HTTP %d)%s", status, describeProblem(err)), reviewAnswer{}
	case status != http.StatusOK:
		return reviewExitUnreachable, fmt.Sprintf("unexpected answer HTTP %d", status), reviewAnswer{}
	}
	answer, proposed, err := readReviewAnswer(body, opts.propose)
	var rep reviewReport
	if err != nil || json.Unmarshal(answer.Report, &rep) != nil || rep.Status == "" {
		return reviewExitUnreachable, "the answer is not a review report", reviewAnswer{}
	}
	if proposed != nil {
		answer.ProposedFile = proposedPath(file)
		if err := writeProposed(answer.ProposedFile, proposed); err != nil {
			answer.ProposedFile = ""
			return reviewExitRejected, fmt.Sprintf("cannot write the proposed design: %v", err), answer
		}
	}
	if !opts.asJSON {
		printReviewSummary(opts.stdout, file, rep)
		printProposed(opts, answer, rep.Status)
	}
	switch status := review.Status(rep.Status); {
	case status == review.OutOfScope:
		return reviewExitOutOfScope, "", answer
	case status.Severity() >= review.Status(opts.failOn).Severity():
		return reviewExitFindings, "", answer
	}
	return reviewExitClean, "", answer
}

// readReviewAnswer splits the service's answer: a report, or with
// --propose a proposal of the report, the proposed design (nil when there
// is none) and its status.
func readReviewAnswer(body []byte, propose bool) (reviewAnswer, json.RawMessage, error) {
	if !propose {
		return reviewAnswer{Report: bytes.TrimSpace(body)}, nil, nil
	}
	var p struct {
		Report         json.RawMessage `json:"report"`
		Proposed       json.RawMessage `json:"proposed"`
		ProposedStatus string          `json:"proposed_status"`
	}
	if err := json.Unmarshal(body, &p); err != nil {
		return reviewAnswer{}, nil, err
	}
	if string(p.Proposed) == "null" {
		p.Proposed = nil
	}
	return reviewAnswer{Report: p.Report, ProposedStatus: p.ProposedStatus}, p.Proposed, nil
}

// proposedPath is where --propose writes the proposed design of file:
// beside it, "fan.json" as "fan.proposed.json"; standard input's in the
// current directory as "proposed.json".
func proposedPath(file string) string {
	if file == "-" {
		return "proposed.json"
	}
	return strings.TrimSuffix(file, filepath.Ext(file)) + ".proposed.json"
}

// writeProposed writes a proposed design indented for reading and editing.
func writeProposed(path string, doc json.RawMessage) error {
	var b bytes.Buffer
	if err := json.Indent(&b, doc, "", "  "); err != nil {
		return err
	}
	b.WriteByte('\n')
	return os.WriteFile(path, b.Bytes(), 0o644)
}

// printProposed says where the proposed design went and how it fared.
func printProposed(opts reviewOptions, answer reviewAnswer, status string) {
	switch {
	case !opts.propose:
	case answer.ProposedFile == "" && review.Status(status) == review.OutOfScope:
		fmt.Fprintln(opts.stdout, "  no proposed design: none is proposed for a design out of scope")
	case answer.ProposedFile == "" && review.Status(status) == review.Pass:
		fmt.Fprintln(opts.stdout, "  no proposed design: nothing needs changing")
	case answer.ProposedFile == "":
		fmt.Fprintln(opts.stdout, "  no proposed design: no finding has a single change that clears it")
	default:
		fmt.Fprintf(opts.stdout, "  proposed design written to %s: %s when reviewed\n", answer.ProposedFile, strings.ToUpper(answer.ProposedStatus))
	}
}

// postForReview sends one document through the API client, waiting out
// rate limits, and returns the answer's status and body; err is set only
// when no answer came.
func postForReview(ctx context.Context, httpc *http.Client, opts reviewOptions, doc []byte) (int, []byte, error) {
	api, err := apiclient.NewClient(opts.server, apiclient.WithHTTPClient(httpc),
		apiclient.WithRequestEditorFn(func(_ context.Context, req *http.Request) error {
			req.Header.Set("Accept", "application/json, application/problem+json")
			if opts.token != "" {
				req.Header.Set("Authorization", "Bearer "+opts.token)
			}
			return nil
		}))
	if err != nil {
		return 0, nil, err
	}
	var params apiclient.PostV1ReviewsParams
	if opts.limitsVersion > 0 {
		v := apiclient.ReviewAgainstLimitsVersion(opts.limitsVersion)
		params.LimitsVersion = &v
	}
	if opts.propose {
		p := apiclient.PostV1ReviewsParamsProposeN1
		params.Propose = &p
	}
	for attempt := 0; ; attempt++ {
		resp, err := api.PostV1ReviewsWithBody(ctx, &params, "application/json", bytes.NewReader(doc))
		if err != nil {
			return 0, nil, err
		}
		body, err := io.ReadAll(io.LimitReader(resp.Body, 256<<20))
		resp.Body.Close()
		if err != nil {
			return 0, nil, fmt.Errorf("read the answer: %w", err)
		}
		if resp.StatusCode != http.StatusTooManyRequests || attempt == reviewRetries {
			if p := apiclient.ProblemOf(resp, body); p != nil {
				return resp.StatusCode, body, p
			}
			return resp.StatusCode, body, nil
		}
		wait, err := strconv.Atoi(resp.Header.Get("Retry-After"))
		if err != nil || wait < 1 {
			wait = 1
		}
		select {
		case <-ctx.Done():
			return 0, nil, ctx.Err()
		case <-time.After(min(time.Duration(wait)*time.Second, maxRetryWait)):
		}
	}
}

// describeProblem says what a problem document told, one field a line.
func describeProblem(err error) string {
	var p *apiclient.Problem
	if !errors.As(err, &p) {
		return ""
	}
	return ": " + p.Error()
}

func printReviewSummary(w io.Writer, file string, rep reviewReport) {
	fmt.Fprintf(w, "%s: %s (limits v%d; %d pass, %d warn, %d fail)\n",
		file, strings.ToUpper(rep.Status), rep.LimitsVersion, rep.Counts.Pass, rep.Counts.Warn, rep.Counts.Fail)
	if len(rep.NotRun) > 0 {
		fmt.Fprintf(w, "  not run: limits v%d predate %s; review again under the current limits\n",
			rep.LimitsVersion, strings.Join(rep.NotRun, ", "))
	}
	// Worst first, in the order every part of wattshelf uses.
	findings := slices.Clone(rep.Checks)
	slices.SortStableFunc(findings, func(a, b reportCheck) int {
		return review.Status(b.Status).Severity() - review.Status(a.Status).Severity()
	})
	for _, c := range findings {
		if review.Status(c.Status).Severity() <= review.Pass.Severity() {
			continue
		}
		subject := c.Node
		if subject == "" {
			subject = "design"
		}
		measure := ""
		if c.Value != nil {
			measure = " " + quantity(*c.Value, c.Unit)
		}
		var limits []string
		if c.Limit != nil {
			limits = append(limits, "limit "+quantity(*c.Limit, c.Unit))
		}
		if c.WarnAt != nil {
			limits = append(limits, "warn at "+quantity(*c.WarnAt, c.Unit))
		}
		if len(limits) > 0 {
			measure += " (" + strings.Join(limits, ", ") + ")"
		}
		fmt.Fprintf(w, "  %s %s at %s:%s %s\n", c.Status, c.Check, subject, measure, c.Message)
		printRemedies(w, c)
	}
}

// printRemedies prints under a finding what would fix it, with the shelf
// parts that would do it, or why no single change does.
func printRemedies(w io.Writer, c reportCheck) {
	for _, r := range c.Remedies {
		fmt.Fprintf(w, "    fix: %s\n", r.Change)
		for _, m := range r.Shelf {
			bin := m.Bin
			if bin == "" {
				bin = "no bin given"
			}
			fmt.Fprintf(w, "      on the shelf: %s (part %d, bin %s, %d on hand)\n", m.Name, m.ID, bin, m.Quantity)
		}
		if len(r.Shelf) == 0 && r.Part != nil {
			fmt.Fprintf(w, "      on the shelf: no %s that fits\n", r.Part.Kind)
		}
	}
	if c.NoRemedy != "" {
		fmt.Fprintf(w, "    no single change clears it: %s\n", c.NoRemedy)
	}
}

func quantity(v float64, unit string) string {
	if unit == "" {
		return shortNumber(v)
	}
	return shortNumber(v) + " " + unit
}

// shortNumber prints four significant digits without exponent noise.
func shortNumber(v float64) string {
	rounded, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 4, 64), 64)
	if err != nil {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	return strconv.FormatFloat(rounded, 'f', -1, 64)
}
