package store

import (
	"context"
	"encoding/json"
	"fmt"
	"strings"

	"github.com/jackc/pgx/v5"

	"wattshelf/domain"
)

// ComponentFilter narrows a listing. Zero values do not filter.
type ComponentFilter struct {
	Kind    string
	Query   string // matched in name and description
	Bin     string
	FitsV   *float64 // components whose supply window (supplyWindowHolds) holds this
	AfterID int64    // cursor: list ids above this
	Limit   int
}

const componentColumns = `id, name, kind, description, origin, mains_origin, bin, quantity,
	condition, spec_source, notes, electrical, owner, created_at, updated_at, version`

func scanComponent(row pgx.Row) (domain.Component, error) {
	var c domain.Component
	var electrical []byte
	err := row.Scan(&c.ID, &c.Name, &c.Kind, &c.Description, &c.Origin, &c.MainsOrigin, &c.Bin,
		&c.Quantity, &c.Condition, &c.SpecSource, &c.Notes, &electrical, &c.Owner,
		&c.CreatedAt, &c.UpdatedAt, &c.Version)
	if err != nil {
		return c, err
	}
	if err := json.Unmarshal(electrical, &c.Electrical); err != nil {
		return c, fmt.Errorf("decode electrical fields of component %d: %w", c.ID, err)
	}
	return c, nil
}

// CreateComponent stores a new component owned by actor, with its audit
// row, in one transaction.
func (s *Store) CreateComponent(ctx context.Context, actor domain.User, in domain.ComponentInput) (domain.Component, error) {
	if in.Quantity != int(int32(in.Quantity)) {
		return domain.Component{}, fmt.Errorf("quantity %d does not fit the column", in.Quantity)
	}
	electrical, err := json.Marshal(in.Electrical)
	if err != nil {
		return domain.Component{}, fmt.Errorf("encode electrical fields: %w", err)
	}
	var c domain.Component
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		c, err = scanComponent(tx.QueryRow(ctx, `INSERT INTO components
			(name, kind, description, origin, mains_origin, bin, quantity, condition, spec_source, notes, electrical, owner)
			VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12) RETURNING `+componentColumns,
			in.Name, in.Kind, in.Description, in.Origin, in.MainsOrigin, in.Bin, int32(in.Quantity),
			in.Condition, in.SpecSource, in.Notes, electrical, actor.Name))
		if err != nil {
			return fmt.Errorf("insert component: %w", err)
		}
		return audit(ctx, tx, actor.Name, "component.create", "component", c.ID, map[string]any{"name": c.Name})
	})
	return c, err
}

// Component returns one component.
func (s *Store) Component(ctx context.Context, id int64) (domain.Component, error) {
	c, err := scanComponent(s.pool.QueryRow(ctx, `SELECT `+componentColumns+` FROM components WHERE id = $1`, id))
	if err != nil {
		return c, notFound(err, fmt.Sprintf("component %d", id))
	}
	return c, nil
}

// ComponentsByID returns the components with the given ids that exist.
func (s *Store) ComponentsByID(ctx context.Context, ids []int64) (map[int64]domain.Component, error) {
	found := make(map[int64]domain.Component, len(ids))
	if len(ids) == 0 {
		return found, nil
	}
	rows, err := s.pool.Query(ctx, `SELECT `+componentColumns+` FROM components WHERE id = ANY($1)`, ids)
	if err != nil {
		return nil, fmt.Errorf("load components: %w", err)
	}
	defer rows.Close()
	for rows.Next() {
		c, err := scanComponent(rows)
		if err != nil {
			return nil, fmt.Errorf("load components: %w", err)
		}
		found[c.ID] = c
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("load components: %w", err)
	}
	return found, nil
}

// escapeLike makes a user's text match literally inside ILIKE.
func escapeLike(s string) string {
	return strings.NewReplacer(`\`, `\\`, `%`, `\%`, `_`, `\_`).Replace(s)
}

// supplyWindowHolds says whether a part's supply window, the range of
// supply voltages it runs on, holds $5 volts: its own min_v/max_v, else a
// regulator's or driver's input window; an end left out comes from the
// rated (else nominal) voltage and the tolerance in $7
// (domain.RatedVoltageTolerance); a low end still unknown is 0 V, as a
// lower voltage underpowers a part but does not harm it. Where the high
// end stays unknown the comparison is NULL, so the part is not listed: a
// connector's, fuse's or wire's rating_v is what it can insulate, not a
// supply it runs on. The rule lives here alone, so the shelf can filter
// and page 50,000 parts in the database; TestFitsVoltageWindow holds it
// to worked examples.
const supplyWindowHolds = `(
	coalesce((electrical ->> 'min_v')::double precision, (electrical ->> 'min_input_v')::double precision,
		coalesce((electrical ->> 'rated_v')::double precision, (electrical ->> 'nominal_v')::double precision) * (1 - $7::double precision), 0) <= $5
	AND $5 <= coalesce((electrical ->> 'max_v')::double precision, (electrical ->> 'max_input_v')::double precision,
		coalesce((electrical ->> 'rated_v')::double precision, (electrical ->> 'nominal_v')::double precision) * (1 + $7::double precision)))`

// ListComponents returns up to f.Limit components in id order after
// f.AfterID, and whether more follow.
func (s *Store) ListComponents(ctx context.Context, f ComponentFilter) ([]domain.Component, bool, error) {
	limit := f.Limit
	if limit <= 0 {
		limit = 50
	}
	var fits any
	if f.FitsV != nil {
		fits = *f.FitsV
	}
	rows, err := s.pool.Query(ctx, `SELECT `+componentColumns+` FROM components
		WHERE id > $1
		  AND ($2 = '' OR kind = $2)
		  AND ($3 = '' OR bin = $3)
		  AND ($4 = '' OR (name || ' ' || description) ILIKE '%' || $4 || '%')
		  AND ($5::double precision IS NULL OR `+supplyWindowHolds+`)
		ORDER BY id LIMIT $6`,
		f.AfterID, f.Kind, f.Bin, escapeLike(f.Query), fits, limit+1, domain.RatedVoltageTolerance)
	if err != nil {
		return nil, false, fmt.Errorf("list components: %w", err)
	}
	list, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (domain.Component, error) { return scanComponent(r) })
	if err != nil {
		return nil, false, fmt.Errorf("list components: %w", err)
	}
	more := len(list) > limit
	if more {
		list = list[:limit]
	}
	return list, more, nil
}

// lockOwned loads a row's owner and version for change, enforcing that
// actor may change it and that the client saw the current version
// (expectVersion 0 skips the version check).
func lockOwned(ctx context.Context, tx pgx.Tx, table string, id int64, actor domain.User, expectVersion int64) error {
	var owner string
	var version int64
	kind := strings.TrimSuffix(table, "s")
	err := tx.QueryRow(ctx, `SELECT owner, version FROM `+table+` WHERE id = $1 FOR UPDATE`, id).Scan(&owner, &version)
	if err != nil {
		return notFound(err, fmt.Sprintf("%s %d", kind, id))
	}
	return mayChange(kind, id, owner, version, actor, expectVersion)
}

// mayChange refuses a change by actor to a row owned by owner and now at
// version, unless actor may change it and expectVersion is that version
// (0 skips the version check).
func mayChange(kind string, id int64, owner string, version int64, actor domain.User, expectVersion int64) error {
	if !actor.MayChange(owner) {
		return fmt.Errorf("%s %d belongs to %s: %w", kind, id, owner, domain.ErrForbidden)
	}
	if expectVersion != 0 && version != expectVersion {
		return fmt.Errorf("%s %d is at version %d, not %d: %w", kind, id, version, expectVersion, domain.ErrPreconditionFailed)
	}
	return nil
}

// UpdateComponent replaces a component's fields when actor may change it
// and expectVersion is current; the version then goes up by one.
func (s *Store) UpdateComponent(ctx context.Context, actor domain.User, id, expectVersion int64, in domain.ComponentInput) (domain.Component, error) {
	electrical, err := json.Marshal(in.Electrical)
	if err != nil {
		return domain.Component{}, fmt.Errorf("encode electrical fields: %w", err)
	}
	var c domain.Component
	err = s.inTx(ctx, func(tx pgx.Tx) error {
		if err := lockOwned(ctx, tx, "components", id, actor, expectVersion); err != nil {
			return err
		}
		c, err = scanComponent(tx.QueryRow(ctx, `UPDATE components SET
			name = $2, kind = $3, description = $4, origin = $5, mains_origin = $6, bin = $7,
			quantity = $8, condition = $9, spec_source = $10, notes = $11, electrical = $12,
			updated_at = now(), version = version + 1
			WHERE id = $1 RETURNING `+componentColumns,
			id, in.Name, in.Kind, in.Description, in.Origin, in.MainsOrigin, in.Bin, in.Quantity,
			in.Condition, in.SpecSource, in.Notes, electrical))
		if err != nil {
			return fmt.Errorf("update component %d: %w", id, err)
		}
		return audit(ctx, tx, actor.Name, "component.update", "component", id, map[string]any{"version": c.Version})
	})
	return c, err
}

// DeleteComponent removes a component and its measurements.
func (s *Store) DeleteComponent(ctx context.Context, actor domain.User, id, expectVersion int64) error {
	return s.inTx(ctx, func(tx pgx.Tx) error {
		if err := lockOwned(ctx, tx, "components", id, actor, expectVersion); err != nil {
			return err
		}
		if _, err := tx.Exec(ctx, `DELETE FROM components WHERE id = $1`, id); err != nil {
			return fmt.Errorf("delete component %d: %w", id, err)
		}
		return audit(ctx, tx, actor.Name, "component.delete", "component", id, nil)
	})
}

// ShelfFilter narrows the public shelf. Zero values do not filter.
type ShelfFilter struct {
	// Query's words must each appear, in any case, somewhere in a part's
	// name, kind, bin, description or origin.
	Query string
	Kind  string
	Bin   string
}

// shelfSearchText is what a shelf search looks in; migration 0011 keeps
// a trigram index on this very expression, so a word of three letters or
// more is found without reading the whole table.
const shelfSearchText = `(name || ' ' || kind || ' ' || bin || ' ' || description || ' ' || origin)`

// shelfWhere is the filter's condition on components, with its arguments
// appended to args (numbered on from them). Only the filters in use are
// written, one ILIKE per word, so each can use its index.
func (f ShelfFilter) shelfWhere(args []any) (string, []any) {
	conds := []string{"true"}
	add := func(cond string, arg any) {
		args = append(args, arg)
		conds = append(conds, fmt.Sprintf(cond, len(args)))
	}
	if f.Kind != "" {
		add("kind = $%d", f.Kind)
	}
	if f.Bin != "" {
		add("bin = $%d", f.Bin)
	}
	for _, w := range strings.Fields(f.Query) {
		add(shelfSearchText+" ILIKE $%d", "%"+escapeLike(w)+"%")
	}
	return strings.Join(conds, " AND "), args
}

// Shelf returns the public view of every component, by bin then name.
func (s *Store) Shelf(ctx context.Context) ([]domain.ShelfItem, error) {
	return s.ShelfMatching(ctx, ShelfFilter{})
}

// ShelfMatching returns the public view of every component that f lets
// through, by bin then name.
func (s *Store) ShelfMatching(ctx context.Context, f ShelfFilter) ([]domain.ShelfItem, error) {
	where, args := f.shelfWhere(nil)
	rows, err := s.pool.Query(ctx, `SELECT `+shelfColumns+` FROM components WHERE `+where+` ORDER BY bin, name, id`, args...)
	if err != nil {
		return nil, fmt.Errorf("read shelf: %w", err)
	}
	items, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (domain.ShelfItem, error) { return scanShelfItem(r) })
	if err != nil {
		return nil, fmt.Errorf("read shelf: %w", err)
	}
	return items, nil
}

// ShelfKindCounts counts, per kind, the parts that f's query and bin let
// through; f.Kind is left out, so a kiosk can show what each kind would
// hold. Kinds with no such part are absent.
func (s *Store) ShelfKindCounts(ctx context.Context, f ShelfFilter) (map[string]int, error) {
	f.Kind = ""
	where, args := f.shelfWhere(nil)
	rows, err := s.pool.Query(ctx, `SELECT kind, count(*) FROM components WHERE `+where+` GROUP BY kind`, args...)
	if err != nil {
		return nil, fmt.Errorf("count shelf kinds: %w", err)
	}
	counts := map[string]int{}
	var kind string
	var n int
	_, err = pgx.ForEachRow(rows, []any{&kind, &n}, func() error {
		counts[kind] = n
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("count shelf kinds: %w", err)
	}
	return counts, nil
}

// ShelfCursor is where a page of the shelf ends, in shelf order.
type ShelfCursor struct {
	Bin  string `json:"b"`
	Name string `json:"n"`
	ID   int64  `json:"i"`
}

// shelfColumns are what the public view shows: no owner and no notes,
// which can run to thousands of characters nobody at the kiosk may read.
const shelfColumns = `id, name, kind, description, origin, mains_origin, bin, quantity,
	condition, spec_source, electrical, updated_at`

func scanShelfItem(row pgx.Row) (domain.ShelfItem, error) {
	var it domain.ShelfItem
	var electrical []byte
	err := row.Scan(&it.ID, &it.Name, &it.Kind, &it.Description, &it.Origin, &it.MainsOrigin, &it.Bin,
		&it.Quantity, &it.Condition, &it.SpecSource, &electrical, &it.UpdatedAt)
	if err != nil {
		return it, err
	}
	if err := json.Unmarshal(electrical, &it.Electrical); err != nil {
		return it, fmt.Errorf("decode electrical fields of component %d: %w", it.ID, err)
	}
	return it, nil
}

// ShelfPage returns up to limit shelf items that f lets through after
// cursor (nil: from the start) in shelf order, and whether more follow.
// Unfiltered, it walks the (bin, name, id) index, so every page costs the
// same however deep it is.
func (s *Store) ShelfPage(ctx context.Context, f ShelfFilter, after *ShelfCursor, limit int) ([]domain.ShelfItem, bool, error) {
	if after == nil {
		after = &ShelfCursor{} // every row sorts after ('', '', 0): ids start at 1
	}
	where, args := f.shelfWhere([]any{after.Bin, after.Name, after.ID, limit + 1})
	rows, err := s.pool.Query(ctx, `SELECT `+shelfColumns+` FROM components
		WHERE (bin, name, id) > ($1, $2, $3) AND `+where+` ORDER BY bin, name, id LIMIT $4`, args...)
	if err != nil {
		return nil, false, fmt.Errorf("read shelf page: %w", err)
	}
	items, err := pgx.CollectRows(rows, func(r pgx.CollectableRow) (domain.ShelfItem, error) { return scanShelfItem(r) })
	if err != nil {
		return nil, false, fmt.Errorf("read shelf page: %w", err)
	}
	more := len(items) > limit
	if more {
		items = items[:limit]
	}
	return items, more, nil
}

// ShelfRevision is a number that grows with every committed change to the
// components, made by any replica (migration 0006): two reads that give the
// same number saw the same shelf. It reads 16 small rows.
func (s *Store) ShelfRevision(ctx context.Context) (int64, error) {
	var rev int64
	if err := s.pool.QueryRow(ctx, `SELECT sum(changes)::bigint FROM shelf_revision`).Scan(&rev); err != nil {
		return 0, fmt.Errorf("read shelf revision: %w", err)
	}
	return rev, nil
}

// CountComponents reports how many components the shelf holds.
func (s *Store) CountComponents(ctx context.Context) (int64, error) {
	var n int64
	if err := s.pool.QueryRow(ctx, `SELECT count(*) FROM components`).Scan(&n); err != nil {
		return 0, fmt.Errorf("count components: %w", err)
	}
	return n, nil
}
