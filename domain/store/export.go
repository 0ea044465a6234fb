package store

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"time"

	"github.com/jackc/pgx/v5"
)

// ExportFormatVersion is the version of the export document this binary
// writes and the only one it imports. It changes when the document's
// shape changes, not when the schema gains a migration that export covers.
const ExportFormatVersion = 1

// Snapshot is everything a wattshelf database holds except token digests:
// a backup file often travels, and should grant nobody access. After a
// restore, staff mint new tokens for the users it brings back.
//
// Every record keeps its stored id, version, timestamps and share ids, so
// links, ETags and printed report addresses still work after a restore.
type Snapshot struct {
	FormatVersion int                   `json:"format_version"`
	SchemaVersion uint                  `json:"schema_version"`
	Users         []ExportedUser        `json:"users"`
	Limits        []ExportedLimits      `json:"limits"`
	Components    []ExportedComponent   `json:"components"`
	Measurements  []ExportedMeasurement `json:"measurements"`
	Designs       []ExportedDesign      `json:"designs"`
	Reviews       []ExportedReview      `json:"reviews"`
	Audit         []AuditEntry          `json:"audit"`
}

// ExportedUser is a row of users.
type ExportedUser struct {
	ID        int64     `json:"id"`
	Name      string    `json:"name"`
	Role      string    `json:"role"`
	CreatedAt time.Time `json:"created_at"`
}

// ExportedLimits is one stored limits version, its body as stored.
type ExportedLimits struct {
	Version   int             `json:"version"`
	Body      json.RawMessage `json:"body"`
	Note      string          `json:"note"`
	CreatedBy string          `json:"created_by"`
	CreatedAt time.Time       `json:"created_at"`
}

// ExportedComponent is a row of components with its electrical fields as
// stored, so keys a newer or older binary does not know survive too.
type ExportedComponent struct {
	ID          int64           `json:"id"`
	Name        string          `json:"name"`
	Kind        string          `json:"kind"`
	Description string          `json:"description"`
	Origin      string          `json:"origin"`
	MainsOrigin bool            `json:"mains_origin"`
	Bin         string          `json:"bin"`
	Quantity    int             `json:"quantity"`
	Condition   string          `json:"condition"`
	SpecSource  string          `json:"spec_source"`
	Notes       string          `json:"notes"`
	Electrical  json.RawMessage `json:"electrical"`
	Owner       string          `json:"owner"`
	CreatedAt   time.Time       `json:"created_at"`
	UpdatedAt   time.Time       `json:"updated_at"`
	Version     int64           `json:"version"`
}

// ExportedMeasurement is a row of measurements.
type ExportedMeasurement struct {
	ID          int64     `json:"id"`
	ComponentID int64     `json:"component_id"`
	VoltageV    float64   `json:"voltage_v"`
	CurrentA    float64   `json:"current_a"`
	SpeedRPM    *float64  `json:"speed_rpm"`
	Note        string    `json:"note"`
	RecordedBy  string    `json:"recorded_by"`
	RecordedAt  time.Time `json:"recorded_at"`
}

// ExportedDesign is a row of designs; Document is the text the member sent.
type ExportedDesign struct {
	ID        int64     `json:"id"`
	Name      string    `json:"name"`
	Document  string    `json:"document"`
	Owner     string    `json:"owner"`
	CreatedAt time.Time `json:"created_at"`
	UpdatedAt time.Time `json:"updated_at"`
	Version   int64     `json:"version"`
}

// ExportedReview is a row of reviews with its report as stored. Document
// is the text reviewed ("" for reviews stored before it was kept, and in
// files written before it was exported).
type ExportedReview struct {
	ID             int64           `json:"id"`
	DesignID       int64           `json:"design_id"`
	ShareID        string          `json:"share_id"`
	Status         string          `json:"status"`
	LimitsVersion  int             `json:"limits_version"`
	DocumentSHA256 string          `json:"document_sha256"`
	Document       string          `json:"document"`
	Report         json.RawMessage `json:"report"`
	CreatedBy      string          `json:"created_by"`
	CreatedAt      time.Time       `json:"created_at"`
}

// ExportedColumns names, per table, the columns Export and Import carry.
// Generated columns are left out: the database computes them again. A
// test compares this with the live schema, so a migration that adds a
// column cannot silently drop it from backups.
func ExportedColumns() map[string][]string {
	return map[string][]string{
		"users":        {"id", "name", "role", "created_at"},
		"limits":       {"version", "body", "note", "created_by", "created_at"},
		"components":   {"id", "name", "kind", "description", "origin", "mains_origin", "bin", "quantity", "condition", "spec_source", "notes", "electrical", "owner", "created_at", "updated_at", "version"},
		"measurements": {"id", "component_id", "voltage_v", "current_a", "speed_rpm", "note", "recorded_by", "recorded_at"},
		"designs":      {"id", "name", "document", "owner", "created_at", "updated_at", "version"},
		"reviews":      {"id", "design_id", "share_id", "status", "limits_version", "document_sha256", "document", "report", "created_by", "created_at"},
		"audit":        {"id", "at", "actor", "action", "subject_type", "subject_id", "detail"},
	}
}

// NotExportedTables are the tables a snapshot leaves out on purpose:
// secrets, and bookkeeping the database rebuilds (an import bumps the
// shelf revision itself), and the quotas: a restored database starts from
// the migration's defaults until staff set them again.
func NotExportedTables() []string {
	return []string{"tokens", "schema_migrations", "shelf_revision", "cursor_key", "quotas"}
}

// Export reads the whole database in one read-only, repeatable-read
// transaction, so the snapshot is consistent even while the service
// keeps writing. Every list is in id (or version) order and every time is
// in UTC, so two exports of the same data are the same bytes.
func (s *Store) Export(ctx context.Context) (Snapshot, error) {
	schema, err := SchemaVersion()
	if err != nil {
		return Snapshot{}, err
	}
	snap := Snapshot{FormatVersion: ExportFormatVersion, SchemaVersion: schema}
	err = pgx.BeginTxFunc(ctx, s.pool, pgx.TxOptions{IsoLevel: pgx.RepeatableRead, AccessMode: pgx.ReadOnly}, func(tx pgx.Tx) error {
		var err error
		if snap.Users, err = exportRows(ctx, tx, "users", `SELECT id, name, role, created_at FROM users ORDER BY id`,
			func(r pgx.CollectableRow) (ExportedUser, error) {
				var u ExportedUser
				err := r.Scan(&u.ID, &u.Name, &u.Role, &u.CreatedAt)
				u.CreatedAt = u.CreatedAt.UTC()
				return u, err
			}); err != nil {
			return err
		}
		if snap.Limits, err = exportRows(ctx, tx, "limits", `SELECT version, body, note, created_by, created_at FROM limits ORDER BY version`,
			func(r pgx.CollectableRow) (ExportedLimits, error) {
				var l ExportedLimits
				err := r.Scan(&l.Version, &l.Body, &l.Note, &l.CreatedBy, &l.CreatedAt)
				l.CreatedAt = l.CreatedAt.UTC()
				return l, err
			}); err != nil {
			return err
		}
		if snap.Components, err = exportRows(ctx, tx, "components", `SELECT id, name, kind, description, origin, mains_origin,
				bin, quantity, condition, spec_source, notes, electrical, owner, created_at, updated_at, version
				FROM components ORDER BY id`,
			func(r pgx.CollectableRow) (ExportedComponent, error) {
				var c ExportedComponent
				err := r.Scan(&c.ID, &c.Name, &c.Kind, &c.Description, &c.Origin, &c.MainsOrigin, &c.Bin, &c.Quantity,
					&c.Condition, &c.SpecSource, &c.Notes, &c.Electrical, &c.Owner, &c.CreatedAt, &c.UpdatedAt, &c.Version)
				c.CreatedAt, c.UpdatedAt = c.CreatedAt.UTC(), c.UpdatedAt.UTC()
				return c, err
			}); err != nil {
			return err
		}
		if snap.Measurements, err = exportRows(ctx, tx, "measurements", `SELECT id, component_id, voltage_v, current_a,
				speed_rpm, note, recorded_by, recorded_at FROM measurements ORDER BY id`,
			func(r pgx.CollectableRow) (ExportedMeasurement, error) {
				var m ExportedMeasurement
				err := r.Scan(&m.ID, &m.ComponentID, &m.VoltageV, &m.CurrentA, &m.SpeedRPM, &m.Note, &m.RecordedBy, &m.RecordedAt)
				m.RecordedAt = m.RecordedAt.UTC()
				return m, err
			}); err != nil {
			return err
		}
		if snap.Designs, err = exportRows(ctx, tx, "designs", `SELECT id, name, document, owner, created_at, updated_at, version
				FROM designs ORDER BY id`,
			func(r pgx.CollectableRow) (ExportedDesign, error) {
				var d ExportedDesign
				err := r.Scan(&d.ID, &d.Name, &d.Document, &d.Owner, &d.CreatedAt, &d.UpdatedAt, &d.Version)
				d.CreatedAt, d.UpdatedAt = d.CreatedAt.UTC(), d.UpdatedAt.UTC()
				return d, err
			}); err != nil {
			return err
		}
		if snap.Reviews, err = exportRows(ctx, tx, "reviews", `SELECT id, design_id, share_id, status, limits_version,
				document_sha256, document, report, created_by, created_at FROM reviews ORDER BY id`,
			func(r pgx.CollectableRow) (ExportedReview, error) {
				var v ExportedReview
				err := r.Scan(&v.ID, &v.DesignID, &v.ShareID, &v.Status, &v.LimitsVersion, &v.DocumentSHA256,
					&v.Document, &v.Report, &v.CreatedBy, &v.CreatedAt)
				v.CreatedAt = v.CreatedAt.UTC()
				return v, err
			}); err != nil {
			return err
		}
		snap.Audit, err = exportRows(ctx, tx, "audit", `SELECT id, at, actor, action, subject_type, subject_id, detail
				FROM audit ORDER BY id`,
			func(r pgx.CollectableRow) (AuditEntry, error) {
				var e AuditEntry
				err := r.Scan(&e.ID, &e.At, &e.Actor, &e.Action, &e.SubjectType, &e.SubjectID, &e.Detail)
				e.At = e.At.UTC()
				return e, err
			})
		return err
	})
	if err != nil {
		return Snapshot{}, fmt.Errorf("export: %w", err)
	}
	return snap, nil
}

// exportRows runs one export query; an empty table gives an empty list,
// never null, so the document's shape does not depend on the data.
func exportRows[T any](ctx context.Context, tx pgx.Tx, table, query string, scan pgx.RowToFunc[T]) ([]T, error) {
	rows, err := tx.Query(ctx, query)
	if err != nil {
		return nil, fmt.Errorf("read %s: %w", table, err)
	}
	list, err := pgx.CollectRows(rows, scan)
	if err != nil {
		return nil, fmt.Errorf("read %s: %w", table, err)
	}
	if list == nil {
		list = []T{}
	}
	return list, nil
}

// importedTables are the tables Import fills, parents before children,
// each with its identity column ("" when it has none). Tokens are never
// imported, but their table must be empty too and its sequence is reset.
func importedTables() []struct{ name, identity string } {
	return []struct{ name, identity string }{
		{"users", "id"}, {"tokens", "id"}, {"limits", ""}, {"components", "id"}, {"measurements", "id"},
		{"designs", "id"}, {"reviews", "id"}, {"audit", "id"},
	}
}

// NotEmptyError says an import was refused because the target holds data.
type NotEmptyError struct{ Table string }

func (e *NotEmptyError) Error() string {
	return fmt.Sprintf("the database already holds data (table %s is not empty); import only restores into an empty database: "+
		"create a new database, point DATABASE_URL at it and import there", e.Table)
}

// Import loads snap into an empty database in one transaction: on any
// error nothing is stored. Ids, versions, timestamps and share ids are
// kept as exported, and every identity sequence is moved past the highest
// id so new records do not collide with restored ones.
func (s *Store) Import(ctx context.Context, snap Snapshot) error {
	if snap.FormatVersion != ExportFormatVersion {
		return fmt.Errorf("import: the file is export format %d; this wattshelf reads format %d", snap.FormatVersion, ExportFormatVersion)
	}
	return s.inTx(ctx, func(tx pgx.Tx) error {
		// The exclusive locks keep a running server from writing between
		// the emptiness check and the last insert.
		for _, t := range importedTables() {
			if _, err := tx.Exec(ctx, `LOCK TABLE `+t.name+` IN ACCESS EXCLUSIVE MODE`); err != nil {
				return fmt.Errorf("import: lock %s: %w", t.name, err)
			}
			var held bool
			if err := tx.QueryRow(ctx, `SELECT EXISTS (SELECT 1 FROM `+t.name+`)`).Scan(&held); err != nil {
				return fmt.Errorf("import: check %s is empty: %w", t.name, err)
			}
			if held {
				return &NotEmptyError{Table: t.name}
			}
		}
		var badJSON error
		js := func(raw json.RawMessage) string {
			text, err := jsonArg(raw)
			if err != nil && badJSON == nil {
				badJSON = err
			}
			return text
		}
		b := &pgx.Batch{}
		for _, u := range snap.Users {
			b.Queue(`INSERT INTO users (id, name, role, created_at) OVERRIDING SYSTEM VALUE VALUES ($1, $2, $3, $4)`,
				u.ID, u.Name, u.Role, u.CreatedAt)
		}
		for _, l := range snap.Limits {
			b.Queue(`INSERT INTO limits (version, body, note, created_by, created_at) VALUES ($1, $2, $3, $4, $5)`,
				l.Version, js(l.Body), l.Note, l.CreatedBy, l.CreatedAt)
		}
		for _, c := range snap.Components {
			b.Queue(`INSERT INTO components (id, name, kind, description, origin, mains_origin, bin, quantity, condition,
				spec_source, notes, electrical, owner, created_at, updated_at, version)
				OVERRIDING SYSTEM VALUE VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15, $16)`,
				c.ID, c.Name, c.Kind, c.Description, c.Origin, c.MainsOrigin, c.Bin, c.Quantity, c.Condition,
				c.SpecSource, c.Notes, js(c.Electrical), c.Owner, c.CreatedAt, c.UpdatedAt, c.Version)
		}
		for _, m := range snap.Measurements {
			b.Queue(`INSERT INTO measurements (id, component_id, voltage_v, current_a, speed_rpm, note, recorded_by, recorded_at)
				OVERRIDING SYSTEM VALUE VALUES ($1, $2, $3, $4, $5, $6, $7, $8)`,
				m.ID, m.ComponentID, m.VoltageV, m.CurrentA, m.SpeedRPM, m.Note, m.RecordedBy, m.RecordedAt)
		}
		for _, d := range snap.Designs {
			b.Queue(`INSERT INTO designs (id, name, document, owner, created_at, updated_at, version)
				OVERRIDING SYSTEM VALUE VALUES ($1, $2, $3, $4, $5, $6, $7)`,
				d.ID, d.Name, d.Document, d.Owner, d.CreatedAt, d.UpdatedAt, d.Version)
		}
		for _, r := range snap.Reviews {
			b.Queue(`INSERT INTO reviews (id, design_id, share_id, status, limits_version, document_sha256, document,
				report, created_by, created_at) OVERRIDING SYSTEM VALUE VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)`,
				r.ID, r.DesignID, r.ShareID, r.Status, r.LimitsVersion, r.DocumentSHA256, r.Document, js(r.Report),
				r.CreatedBy, r.CreatedAt)
		}
		for _, e := range snap.Audit {
			b.Queue(`INSERT INTO audit (id, at, actor, action, subject_type, subject_id, detail)
				OVERRIDING SYSTEM VALUE VALUES ($1, $2, $3, $4, $5, $6, $7)`,
				e.ID, e.At, e.Actor, e.Action, e.SubjectType, e.SubjectID, js(e.Detail))
		}
		if badJSON != nil {
			return fmt.Errorf("import: a JSON value in the file is broken: %w", badJSON)
		}
		for _, t := range importedTables() {
			if t.identity == "" {
				continue
			}
			b.Queue(`SELECT setval(pg_get_serial_sequence('` + t.name + `', '` + t.identity + `'),
				coalesce((SELECT max(` + t.identity + `) FROM ` + t.name + `), 0) + 1, false)`)
		}
		if err := tx.SendBatch(ctx, b).Close(); err != nil {
			return fmt.Errorf("import: %w", err)
		}
		return nil
	})
}

// jsonArg passes exported JSON back as compact text. The json columns
// keep text as written, and what the service writes is compact, so this
// restores the original bytes rather than the export file's indentation.
// A missing value becomes the empty object the columns default to.
func jsonArg(raw json.RawMessage) (string, error) {
	if len(bytes.TrimSpace(raw)) == 0 {
		return "{}", nil
	}
	var buf bytes.Buffer
	if err := json.Compact(&buf, raw); err != nil {
		return "", err
	}
	return buf.String(), nil
}

// WriteJSON writes snap as indented JSON. The same snapshot always gives
// the same bytes, which is what lets a test compare two exports.
func (snap Snapshot) WriteJSON(w io.Writer) error {
	enc := json.NewEncoder(w)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(snap); err != nil {
		return fmt.Errorf("write export: %w", err)
	}
	return nil
}

// ReadSnapshot reads an export document, rejecting unknown fields so a
// file from a newer format fails loudly instead of losing data.
func ReadSnapshot(r io.Reader) (Snapshot, error) {
	var snap Snapshot
	dec := json.NewDecoder(r)
	dec.DisallowUnknownFields()
	if err := dec.Decode(&snap); err != nil {
		return Snapshot{}, fmt.Errorf("read export document: %w", err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return Snapshot{}, fmt.Errorf("read export document: trailing data after the JSON document")
	}
	if snap.FormatVersion != ExportFormatVersion {
		return Snapshot{}, fmt.Errorf("read export document: format_version %d is not %d, the one this wattshelf reads",
			snap.FormatVersion, ExportFormatVersion)
	}
	return snap, nil
}
