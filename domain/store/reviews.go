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
// or staff), with a fresh share id, the document and its digest, and its
// audit row, in one transaction. The returned review's Report is
// in.Report itself, not a copy.
//
// The review is kept only if the design is still at in.DesignVersion; a
// design that has moved on since is refused with
// domain.ErrPreconditionFailed. The design is locked FOR KEY SHARE, which
// keeps it from being deleted under the insert without making reviews of
// one design wait for each other.
func (s *Store) AddReview(ctx context.Context, actor domain.User, in NewReview) (StoredReview, error) {
	if !wholeObject(in.Report) {
		return StoredReview{}, fmt.Errorf("store review of design %d: the report is not a whole JSON object", in.DesignID)
	}
	if in.LimitsVersion != int(int32(in.LimitsVersion)) {
		return StoredReview{}, fmt.Errorf("store review of design %d: limits version %d does not fit the column", in.DesignID, in.LimitsVersion)
	}
	shareID, err := newShareID()
	if err != nil {
		return StoredReview{}, err
	}
	r := StoredReview{DesignID: in.DesignID, ShareID: shareID, Status: in.Status, LimitsVersion: in.LimitsVersion,
		DocumentSHA256: DocumentDigest(in.Document), Report: in.Report, CreatedBy: actor.Name}
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		var owner string
		var version int64
		err := tx.QueryRow(ctx, `SELECT name, owner, version FROM designs WHERE id = $1 FOR KEY SHARE`,
			in.DesignID).Scan(&r.DesignName, &owner, &version)
		if err != nil {
			return notFound(err, fmt.Sprintf("design %d", in.DesignID))
		}
		if err := mayChange("design", in.DesignID, owner, version, actor, in.DesignVersion); err != nil {
			return err
		}
		err = tx.QueryRow(ctx, `INSERT INTO reviews
			(design_id, share_id, status, limits_version, document_sha256, document, report, created_by)
			VALUES ($1, $2, $3, $4, $5, $6, $7, $8) RETURNING id, created_at`,
			in.DesignID, shareID, in.Status, int32(in.LimitsVersion), r.DocumentSHA256, string(in.Document),
			string(in.Report), actor.Name).Scan(&r.ID, &r.CreatedAt)
		if err != nil {
			return fmt.Errorf("store review of design %d: %w", in.DesignID, err)
		}
		return audit(ctx, tx, actor.Name, "review.create", "design", in.DesignID,
			map[string]any{"review": r.ID, "status": in.Status, "limits_version": in.LimitsVersion})
	})
	if err != nil {
		return StoredReview{}, err
	}
	return r, nil
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
