package store

import (
	"encoding/base64"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"strings"

	"wattshelf/domain"
	"wattshelf/domain/review"
)

// SnapshotError lists the records of an import file that the API would
// not have stored, each named by its list, place and id. Import stores
// nothing when there is one.
type SnapshotError struct {
	Problems []string
	// More counts problems found past the ones listed.
	More int
}

// maxSnapshotProblems bounds the list, as domain.MaxProblems does a body's.
const maxSnapshotProblems = 50

func (e *SnapshotError) Error() string {
	msg := fmt.Sprintf("%d record(s) break the API's rules; nothing was imported:\n  %s",
		len(e.Problems)+e.More, strings.Join(e.Problems, "\n  "))
	if e.More > 0 {
		msg += fmt.Sprintf("\n  and %d more", e.More)
	}
	return msg
}

// CheckSnapshot checks every record of snap with the rules the API applies
// when it stores one: a file restored as it stands must give no page or
// listing a record the service could not have written (issue 15 item 5).
// wattshelf import calls it before Import, which restores what it is given.
func CheckSnapshot(snap Snapshot) error {
	e := &SnapshotError{}
	bad := func(list string, i int, id any, err error) {
		if err == nil {
			return
		}
		if len(e.Problems) == maxSnapshotProblems {
			e.More++
			return
		}
		e.Problems = append(e.Problems, fmt.Sprintf("%s[%d] (id %v): %v", list, i, id, err))
	}
	for i, u := range snap.Users {
		var p domain.Problems
		// As CreateToken names a user.
		if name := strings.TrimSpace(u.Name); name != u.Name || name == "" || len(name) > domain.MaxShortFieldLen {
			p.Add("/name", "must be 1 to %d characters without surrounding space", domain.MaxShortFieldLen)
		}
		if !domain.Role(u.Role).Valid() {
			p.Add("/role", "must be %s or %s", domain.RoleMember, domain.RoleStaff)
		}
		bad("users", i, u.ID, p.Err())
	}
	for i, l := range snap.Limits {
		bad("limits", i, l.Version, checkLimits(l))
	}
	for i, c := range snap.Components {
		bad("components", i, c.ID, checkComponent(c))
	}
	for i, m := range snap.Measurements {
		bad("measurements", i, m.ID, domain.MeasurementInput{VoltageV: m.VoltageV, CurrentA: m.CurrentA,
			SpeedRPM: m.SpeedRPM, Note: m.Note}.Validate())
	}
	for i, d := range snap.Designs {
		bad("designs", i, d.ID, checkDesignDocument("/document", d.Document))
	}
	for i, r := range snap.Reviews {
		bad("reviews", i, r.ID, checkReview(r))
	}
	for i, a := range snap.Audit {
		if !json.Valid(a.Detail) && len(a.Detail) > 0 {
			bad("audit", i, a.ID, errors.New("/detail: is not JSON"))
		}
	}
	if len(e.Problems) > 0 {
		return e
	}
	return nil
}

// checkLimits reads a limits body as the API does before reviewing with it.
func checkLimits(l ExportedLimits) error {
	var body review.Limits
	if err := json.Unmarshal(l.Body, &body); err != nil {
		return fmt.Errorf("/body: %w", err)
	}
	if _, err := review.Prepare(body, l.Version); err != nil {
		return fmt.Errorf("/body: %w", err)
	}
	return nil
}

// checkComponent decodes the electrical fields strictly, as a request body
// is, and validates the component as the API does before storing it.
func checkComponent(c ExportedComponent) error {
	in := domain.ComponentInput{Name: c.Name, Kind: c.Kind, Description: c.Description, Origin: c.Origin,
		MainsOrigin: c.MainsOrigin, Bin: c.Bin, Quantity: c.Quantity, Condition: c.Condition,
		SpecSource: c.SpecSource, Notes: c.Notes}
	if len(c.Electrical) > 0 {
		if err := domain.DecodeStrict(c.Electrical, &in.Electrical); err != nil {
			return fmt.Errorf("/electrical: %w", err)
		}
	}
	return in.Validate()
}

// checkDesignDocument decodes and validates a design document as the API
// does before storing one.
func checkDesignDocument(pointer, document string) error {
	doc, err := domain.DecodeDesign([]byte(document))
	if err == nil {
		err = doc.Validate()
	}
	if err != nil {
		return fmt.Errorf("%s: %w", pointer, err)
	}
	return nil
}

func checkReview(r ExportedReview) error {
	var errs []error
	if raw, err := base64.RawURLEncoding.Strict().DecodeString(r.ShareID); err != nil || len(raw) != shareIDBytes {
		errs = append(errs, fmt.Errorf("/share_id: %q is not a share id (%d URL-safe base64 characters)", r.ShareID,
			base64.RawURLEncoding.EncodedLen(shareIDBytes)))
	}
	statuses := []review.Status{review.Pass, review.Warn, review.Fail, review.OutOfScope}
	if !slices.Contains(statuses, review.Status(r.Status)) {
		errs = append(errs, fmt.Errorf("/status: must be one of %v", statuses))
	}
	if raw, err := hex.DecodeString(r.DocumentSHA256); err != nil || len(raw) != 32 {
		errs = append(errs, errors.New("/document_sha256: is not a hex SHA-256"))
	}
	if rep, err := review.ReadStored(r.Report); err != nil {
		errs = append(errs, fmt.Errorf("/report: %w", err))
	} else if string(rep.Status) != r.Status {
		errs = append(errs, fmt.Errorf("/report: its status %q is not the review's %q", rep.Status, r.Status))
	}
	// Reviews stored before documents were kept have none.
	if r.Document != "" {
		errs = append(errs, checkDesignDocument("/document", r.Document))
	}
	return joinProblems(errs)
}

// joinProblems puts a record's problems on its one line.
func joinProblems(errs []error) error {
	var texts []string
	for _, err := range errs {
		if err != nil {
			texts = append(texts, err.Error())
		}
	}
	if len(texts) == 0 {
		return nil
	}
	return errors.New(strings.Join(texts, "; "))
}
