package store

import (
	"bytes"
	"context"
	"crypto/rand"
	"crypto/sha256"
	"encoding/base64"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"time"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
)

// StoredReview is a stored review of a design.
type StoredReview struct {
	ID         int64  `json:"id"`
	DesignID   int64  `json:"design_id"`
	DesignName string `json:"design_name"`
	// ShareID opens the printable report without a login; it is random,
	// not derived from anything a stranger could know.
	ShareID        string          `json:"share_id"`
	Status         string          `json:"status"`
	LimitsVersion  int             `json:"limits_version"`
	DocumentSHA256 string          `json:"document_sha256"`
	Report         json.RawMessage `json:"report"`
	CreatedBy      string          `json:"created_by"`
	CreatedAt      time.Time       `json:"created_at"`
}

// SharedReview is a stored review as its shared report shows it: with
// the document reviewed, exactly as the design held it then. Document is
// empty for reviews stored before documents were kept.
type SharedReview struct {
	StoredReview
	Document string
}

// NewReview is what the caller computed: the report of one document
// under one limits version.
type NewReview struct {
	DesignID int64
	// DesignVersion is the version of the design Document was read at;
	// the review is stored only if the design is still at it (0 skips
	// that check).
	DesignVersion int64
	Document      []byte
	Status        string
	LimitsVersion int
	Report        []byte
}

// shareIDBytes is the randomness in a share id: 144 bits, well past the
// 128 that put guessing out of reach, and a whole number of base64 digits.
const shareIDBytes = 18

func newShareID() (string, error) {
	var raw [shareIDBytes]byte
	if _, err := rand.Read(raw[:]); err != nil {
		return "", fmt.Errorf("read random share id: %w", err)
	}
	return base64.RawURLEncoding.EncodeToString(raw[:]), nil
}

// DocumentDigest is the hex SHA-256 of a document's bytes, as stored with
// each review so a member can tell which revision a report covers.
func DocumentDigest(document []byte) string {
	sum := sha256.Sum256(document)
	return hex.EncodeToString(sum[:])
}

const reviewColumns = `r.id, r.design_id, d.name, r.share_id, r.status, r.limits_version,
	r.document_sha256, r.report, r.created_by, r.created_at`

// scanReview reads reviewColumns, then any extra columns into extra.
func scanReview(row pgx.Row, extra ...any) (StoredReview, error) {
	var r StoredReview
	var report []byte
	dest := append([]any{&r.ID, &r.DesignID, &r.DesignName, &r.ShareID, &r.Status, &r.LimitsVersion,
		&r.DocumentSHA256, &report, &r.CreatedBy, &r.CreatedAt}, extra...)
	err := row.Scan(dest...)
	r.Report = report
	return r, err
}

// AddReview stores a review of a design that actor may change (its owner
// or staff), with a fresh share id, the document and its digest. The
// returned review's Report is in.Report itself, not a copy.
//
// The review is kept only if the design is still at in.DesignVersion; a
// design that has moved on since is refused with
// domain.ErrPreconditionFailed, so a caller that reviewed a remembered
// copy can read it again and retry. One statement locks the design,
// inserts the review and writes its audit row (see addReviews).
func (s *Store) AddReview(ctx context.Context, actor domain.User, in NewReview) (StoredReview, error) {
	r, err := newReviewToStore(actor, in)
	if err != nil {
		return StoredReview{}, err
	}
	return writeAlone(ctx, s.pool, r, addReviews)
}

// querier is a pool or one connection of it.
type querier interface {
	Query(ctx context.Context, sql string, args ...any) (pgx.Rows, error)
}

// reviewToStore is one review on its way into the database.
type reviewToStore struct {
	actor  domain.User
	in     NewReview
	review StoredReview // what is known before the insert
}

func newReviewToStore(actor domain.User, in NewReview) (reviewToStore, error) {
	if !wholeObject(in.Report) {
		return reviewToStore{}, fmt.Errorf("store review of design %d: the report is not a whole JSON object", in.DesignID)
	}
	if in.LimitsVersion != int(int32(in.LimitsVersion)) {
		return reviewToStore{}, fmt.Errorf("store review of design %d: limits version %d does not fit the column", in.DesignID, in.LimitsVersion)
	}
	shareID, err := newShareID()
	if err != nil {
		return reviewToStore{}, err
	}
	return reviewToStore{actor: actor, in: in, review: StoredReview{DesignID: in.DesignID, ShareID: shareID,
		Status: in.Status, LimitsVersion: in.LimitsVersion, DocumentSHA256: DocumentDigest(in.Document),
		Report: in.Report, CreatedBy: actor.Name}}, nil
}

// addReviews stores reviews with one statement, so one round trip and one
// commit however many there are, and says what became of each, in order.
// Each review is inserted only if its design exists, its actor may change
// it (domain.User.MayChange: staff, or the owner) and it is at the
// version the review names. The designs are locked FOR KEY SHARE, which
// keeps them from being deleted under the insert without making reviews
// of one design wait for each other. The error is for the statement as a
// whole: then nothing was stored.
func addReviews(ctx context.Context, db querier, batch []reviewToStore) ([]outcome[StoredReview], error) {
	n := len(batch)
	var (
		designIDs, versions         = make([]int64, n), make([]int64, n)
		actors, shareIDs, statuses  = make([]string, n), make([]string, n), make([]string, n)
		digests, documents, reports = make([]string, n), make([]string, n), make([]string, n)
		staff                       = make([]bool, n)
		limitsVersions              = make([]int32, n)
	)
	for i, r := range batch {
		designIDs[i], versions[i] = r.in.DesignID, r.in.DesignVersion
		actors[i], shareIDs[i], statuses[i] = r.actor.Name, r.review.ShareID, r.in.Status
		digests[i], documents[i], reports[i] = r.review.DocumentSHA256, string(r.in.Document), string(r.in.Report)
		staff[i] = r.actor.Role == domain.RoleStaff
		limitsVersions[i] = int32(r.in.LimitsVersion)
	}
	rows, err := db.Query(ctx, `WITH i AS (
			SELECT * FROM unnest($1::bigint[], $2::bigint[], $3::text[], $4::boolean[], $5::text[], $6::text[],
				$7::integer[], $8::text[], $9::text[], $10::text[]) WITH ORDINALITY
			AS i(design_id, design_version, actor, staff, share_id, status, limits_version, digest, document, report, n)
		), d AS (
			SELECT id, name, owner, version FROM designs WHERE id = ANY($1) FOR KEY SHARE
		), r AS (
			INSERT INTO reviews (design_id, share_id, status, limits_version, document_sha256, document, report, created_by)
			SELECT i.design_id, i.share_id, i.status, i.limits_version, i.digest, i.document, i.report, i.actor
			FROM i JOIN d ON d.id = i.design_id
			WHERE (i.staff OR d.owner = i.actor) AND (i.design_version = 0 OR d.version = i.design_version)
			ORDER BY i.n
			RETURNING id, share_id, created_at
		), a AS (
			INSERT INTO audit (actor, action, subject_type, subject_id, detail)
			SELECT i.actor, 'review.create', 'design', i.design_id::text,
				jsonb_build_object('review', r.id, 'status', i.status, 'limits_version', i.limits_version)
			FROM r JOIN i ON i.share_id = r.share_id
		)
		SELECT d.name, d.owner, d.version, r.id, r.created_at
		FROM i LEFT JOIN d ON d.id = i.design_id LEFT JOIN r ON r.share_id = i.share_id
		ORDER BY i.n`,
		designIDs, versions, actors, staff, shareIDs, statuses, limitsVersions, digests, documents, reports)
	if err != nil {
		return nil, fmt.Errorf("store %d reviews: %w", n, err)
	}
	results := make([]outcome[StoredReview], 0, n)
	var (
		name, owner *string
		version, id *int64
		createdAt   *time.Time
	)
	_, err = pgx.ForEachRow(rows, []any{&name, &owner, &version, &id, &createdAt}, func() error {
		if len(results) == n {
			return fmt.Errorf("more than %d rows", n)
		}
		r := batch[len(results)]
		results = append(results, r.outcome(name, owner, version, id, createdAt))
		return nil
	})
	if err == nil && len(results) != n {
		err = fmt.Errorf("%d rows for %d reviews", len(results), n)
	}
	if err != nil {
		return nil, fmt.Errorf("store %d reviews: %w", n, err)
	}
	return results, nil
}

// outcome reads what the statement said of r: the design's name, owner and
// version (nil when there is no such design), and the review's id and time
// (nil when it was not inserted).
func (r reviewToStore) outcome(name, owner *string, version, id *int64, createdAt *time.Time) outcome[StoredReview] {
	in := r.in
	switch {
	case name == nil:
		return outcome[StoredReview]{err: fmt.Errorf("design %d: %w", in.DesignID, domain.ErrNotFound)}
	case id != nil:
		stored := r.review
		stored.DesignName, stored.ID, stored.CreatedAt = *name, *id, *createdAt
		return outcome[StoredReview]{value: stored}
	case !r.actor.MayChange(*owner):
		return outcome[StoredReview]{err: fmt.Errorf("design %d belongs to %s: %w", in.DesignID, *owner, domain.ErrForbidden)}
	default:
		return outcome[StoredReview]{err: fmt.Errorf("design %d is at version %d, not %d: %w",
			in.DesignID, *version, in.DesignVersion, domain.ErrPreconditionFailed)}
	}
}

// wholeObject is a cheap guard against an empty or cut-off report: it
// must open and close as an object. Parsing tens of kilobytes again would
// cost more than the rest of storing it; the encoder that writes reports
// is tested against encoding/json.
func wholeObject(b []byte) bool {
	b = bytes.TrimSpace(b)
	return len(b) >= 2 && b[0] == '{' && b[len(b)-1] == '}'
}

// ReviewsOfDesign returns up to limit reviews of a design, newest first,
// older than beforeID when it is positive, and whether more follow.
func (s *Store) ReviewsOfDesign(ctx context.Context, designID, beforeID int64, limit int) ([]StoredReview, bool, error) {
	if limit <= 0 {
		limit = 20
	}
	rows, err := s.pool.Query(ctx, `SELECT `+reviewColumns+`
		FROM reviews r JOIN designs d ON d.id = r.design_id
		WHERE r.design_id = $1 AND ($2 <= 0 OR r.id < $2)
		ORDER BY r.id DESC LIMIT $3`, designID, beforeID, limit+1)
	if err != nil {
		return nil, false, fmt.Errorf("list reviews of design %d: %w", designID, err)
	}
	list, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (StoredReview, error) { return scanReview(r) })
	if err != nil {
		return nil, false, fmt.Errorf("list reviews of design %d: %w", designID, err)
	}
	more := len(list) > limit
	if more {
		list = list[:limit]
	}
	return list, more, nil
}

// maxShareIDLen bounds the lookups a stranger can make us do.
const maxShareIDLen = 64

// ReviewByShareID returns the review a share id opens, with the name of
// its design and the document it reviewed. Anyone holding the id may see
// it.
func (s *Store) ReviewByShareID(ctx context.Context, shareID string) (SharedReview, error) {
	if shareID == "" || len(shareID) > maxShareIDLen {
		return SharedReview{}, fmt.Errorf("shared report: %w", domain.ErrNotFound)
	}
	var document string
	r, err := scanReview(s.pool.QueryRow(ctx, `SELECT `+reviewColumns+`, r.document
		FROM reviews r JOIN designs d ON d.id = r.design_id WHERE r.share_id = $1`, shareID), &document)
	if err != nil {
		return SharedReview{}, notFound(err, "shared report")
	}
	return SharedReview{StoredReview: r, Document: document}, nil
}

// ReviewStamp is what a stored review's page depends on besides the
// binary that renders it: the review, which never changes once stored,
// and the shelf's revision, since the page fills what a node leaves out
// from the shelf's records. Every replica reads the same stamp.
type ReviewStamp struct {
	ID            int64
	CreatedAt     time.Time
	ShelfRevision int64
}

// ReviewStampByShareID reads a shared review's stamp without its report or
// document, so a page that has not changed costs one small query.
func (s *Store) ReviewStampByShareID(ctx context.Context, shareID string) (ReviewStamp, error) {
	if shareID == "" || len(shareID) > maxShareIDLen {
		return ReviewStamp{}, fmt.Errorf("shared report: %w", domain.ErrNotFound)
	}
	var st ReviewStamp
	err := s.pool.QueryRow(ctx, `SELECT r.id, r.created_at, (SELECT sum(changes)::bigint FROM shelf_revision)
		FROM reviews r WHERE r.share_id = $1`, shareID).Scan(&st.ID, &st.CreatedAt, &st.ShelfRevision)
	if err != nil {
		return ReviewStamp{}, notFound(err, "shared report")
	}
	return st, nil
}
