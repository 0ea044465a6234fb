package api

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"maps"
	"math"
	"net/http"
	"slices"
	"strconv"
	"strings"

	"github.com/go-json-experiment/json"
	"github.com/labstack/echo/v4"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

const (
	defaultPageSize = 50
	maxPageSize     = 200
)

func (s *server) registerShelfRoutes(v1 *echo.Group) {
	v1.GET("/shelf", s.getShelf)
	// The token check goes on each route, not on the group: echo answers
	// every unrouted method and path under a group with middleware 404,
	// where a known path with another method must be 405.
	comps := v1.Group("/components")
	comps.GET("", s.listComponents, s.requireUser)
	comps.POST("", s.createComponent, s.requireUser)
	comps.GET("/:id", s.getComponent, s.requireUser)
	comps.PUT("/:id", s.replaceComponent, s.requireUser)
	comps.PATCH("/:id", s.patchComponent, s.requireUser)
	comps.DELETE("/:id", s.deleteComponent, s.requireUser)
	comps.POST("/:id/measurements", s.addMeasurement, s.requireUser)
	comps.GET("/:id/measurements", s.listMeasurements, s.requireUser)
}

// ComponentPage is one page of a component listing.
type ComponentPage struct {
	Items []domain.Component `json:"items"`
	Next  string             `json:"next,omitempty"`
}

// ShelfView is the public shelf, or one page of it.
type ShelfView struct {
	Items []domain.ShelfItem `json:"items"`
	Next  string             `json:"next,omitempty"`
}

// getShelf serves the public shelf, or a page of it. Encoded views are
// kept per shelf revision, which every request reads from the database
// (one small query, as /readyz makes), so a change through any replica
// is seen at once; the revision is also in the ETag, and a kiosk polling
// with If-None-Match gets a 304 without a body.
// encodeShelfPage reads and encodes one page of the shelf at revision rev.
func (s *server) encodeShelfPage(ctx context.Context, rev int64, key shelfKey, after *store.ShelfCursor) (shelfPage, error) {
	view, err := s.shelfView(ctx, key, after)
	if err != nil {
		return shelfPage{}, err
	}
	body, err := encodeJSON(view)
	if err != nil {
		return shelfPage{}, fmt.Errorf("encode shelf: %w", err)
	}
	// The hash keeps the ETag honest across releases that encode the same
	// revision differently.
	sum := sha256.Sum256(body)
	return shelfPage{body: body, etag: `"` + strconv.FormatInt(rev, 10) + "-" + hex.EncodeToString(sum[:8]) + `"`}, nil
}

func (s *server) getShelf(c echo.Context) error {
	key, after, err := shelfQuery(c, s.cursors)
	if err != nil {
		return err
	}
	ctx := c.Request().Context()
	rev, err := s.store.ShelfRevision(ctx)
	if err != nil {
		return err
	}
	page, ok := s.shelf.get(rev, key)
	if !ok {
		if page, err = s.encodeShelfPage(ctx, rev, key, after); err != nil {
			return err
		}
		s.shelf.put(rev, key, page)
	}
	c.Response().Header().Set("ETag", page.etag)
	c.Response().Header().Set("Cache-Control", "no-cache")
	if match := c.Request().Header.Get("If-None-Match"); match != "" && strings.Contains(match, page.etag) {
		return c.NoContent(http.StatusNotModified)
	}
	return c.JSONBlob(http.StatusOK, page.body)
}

// shelfParams are the query parameters GET /v1/shelf knows; any other is
// refused, so a misspelt filter is not silently ignored.
func shelfParams() []string { return []string{"q", "kind", "bin", "limit", "cursor"} }

// shelfQuery reads the filters (?q=, ?kind=, ?bin=), ?limit= and ?cursor=
// (the next of an earlier page). Neither limit nor cursor means the whole
// shelf: limit 0 in the key.
func shelfQuery(c echo.Context, cursors cursorCodec) (shelfKey, *store.ShelfCursor, error) {
	params := c.QueryParams()
	for _, name := range slices.Sorted(maps.Keys(params)) {
		if !slices.Contains(shelfParams(), name) {
			return shelfKey{}, nil, queryProblem("/"+name, "is not a parameter of the shelf; it knows %v", shelfParams())
		}
	}
	key := shelfKey{filter: store.ShelfFilter{Query: params.Get("q"), Kind: params.Get("kind"), Bin: params.Get("bin")}}
	if err := checkShelfFilter(key.filter); err != nil {
		return key, nil, err
	}
	limitParam, cursorParam := params.Get("limit"), params.Get("cursor")
	if limitParam == "" && cursorParam == "" {
		return key, nil, nil
	}
	key.limit, key.cursor = defaultPageSize, cursorParam
	if limitParam != "" {
		n, err := strconv.Atoi(limitParam)
		if err != nil || n < 1 || n > maxPageSize {
			return key, nil, queryProblem("/limit", "must be a whole number from 1 to %d", maxPageSize)
		}
		key.limit = n
	}
	if cursorParam == "" {
		return key, nil, nil
	}
	cur, err := cursors.decodeShelf(cursorParam)
	if err != nil {
		return key, nil, queryProblem("/cursor", "is not a cursor this service issued")
	}
	return key, &cur, nil
}

// checkShelfFilter holds the shelf's filters to the bounds the component
// listing's filters have.
func checkShelfFilter(f store.ShelfFilter) error {
	if f.Kind != "" && !slices.Contains(domain.ComponentKinds(), f.Kind) {
		return queryProblem("/kind", "must be one of %v", domain.ComponentKinds())
	}
	if len(f.Query) > domain.MaxNameLen {
		return queryProblem("/q", "is longer than %d bytes", domain.MaxNameLen)
	}
	if len(f.Bin) > domain.MaxShortFieldLen {
		return queryProblem("/bin", "is longer than %d bytes", domain.MaxShortFieldLen)
	}
	return nil
}

// shelfView reads the whole shelf or one page of it in shelf order.
func (s *server) shelfView(ctx context.Context, key shelfKey, after *store.ShelfCursor) (ShelfView, error) {
	if key.limit == 0 {
		items, err := s.store.ShelfMatching(ctx, key.filter)
		if items == nil {
			items = []domain.ShelfItem{}
		}
		return ShelfView{Items: items}, err
	}
	items, more, err := s.store.ShelfPage(ctx, key.filter, after, key.limit)
	if err != nil {
		return ShelfView{}, err
	}
	view := ShelfView{Items: items}
	if view.Items == nil {
		view.Items = []domain.ShelfItem{}
	}
	if more {
		last := items[len(items)-1]
		view.Next = s.cursors.encodeShelf(store.ShelfCursor{Bin: last.Bin, Name: last.Name, ID: last.ID})
	}
	return view, nil
}

func queryProblem(pointer, format string, args ...any) error {
	return &problemError{kind: "bad-query", detail: "a query parameter is invalid",
		fields: []domain.FieldProblem{{Pointer: pointer, Detail: fmt.Sprintf(format, args...)}}}
}

// parseComponentFilter reads the listing's query parameters.
func parseComponentFilter(q func(string) string, cursors cursorCodec) (store.ComponentFilter, error) {
	f := store.ComponentFilter{
		Kind: q("kind"), Bin: q("bin"), Query: q("q"), Limit: defaultPageSize,
	}
	if f.Kind != "" && !slices.Contains(domain.ComponentKinds(), f.Kind) {
		return f, queryProblem("/kind", "must be one of %v", domain.ComponentKinds())
	}
	if len(f.Query) > domain.MaxNameLen {
		return f, queryProblem("/q", "is longer than %d bytes", domain.MaxNameLen)
	}
	if len(f.Bin) > domain.MaxShortFieldLen {
		return f, queryProblem("/bin", "is longer than %d bytes", domain.MaxShortFieldLen)
	}
	if v := q("limit"); v != "" {
		n, err := strconv.Atoi(v)
		if err != nil || n < 1 || n > maxPageSize {
			return f, queryProblem("/limit", "must be a whole number from 1 to %d", maxPageSize)
		}
		f.Limit = n
	}
	if v := q("fits_v"); v != "" {
		x, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(x) || x < 0 || x > domain.MaxVoltageV {
			return f, queryProblem("/fits_v", "must be a voltage from 0 to %d", domain.MaxVoltageV)
		}
		f.FitsV = &x
	}
	if v := q("cursor"); v != "" {
		id, err := cursors.decodeID(v)
		if err != nil {
			return f, queryProblem("/cursor", "is not a cursor this service issued")
		}
		f.AfterID = id
	}
	return f, nil
}

func (s *server) listComponents(c echo.Context) error {
	f, err := parseComponentFilter(c.QueryParam, s.cursors)
	if err != nil {
		return err
	}
	items, more, err := s.store.ListComponents(c.Request().Context(), f)
	if err != nil {
		return err
	}
	page := ComponentPage{Items: items}
	if page.Items == nil {
		page.Items = []domain.Component{}
	}
	if more {
		page.Next = s.cursors.encodeID(items[len(items)-1].ID)
	}
	return c.JSON(http.StatusOK, page)
}

// pathID reads a positive id from the route; ids are bigint columns.
func pathID(c echo.Context, name string) (int64, error) {
	return pathNumber(c, name, 64)
}

// pathNumber reads a positive whole number from the route that must fit a
// column of bits bits (32 for integer, 64 for bigint). A number past the
// column's range is the client's mistake (400), not a record that is
// missing; the database would refuse it as a parameter, a 500.
func pathNumber(c echo.Context, name string, bits int) (int64, error) {
	raw := c.Param(name)
	n, err := strconv.ParseInt(raw, 10, bits)
	if errors.Is(err, strconv.ErrRange) {
		return 0, &problemError{kind: "bad-path", detail: "a path parameter is out of range",
			fields: []domain.FieldProblem{{Pointer: "/" + name, Detail: fmt.Sprintf("must be a whole number from 1 to %d", int64(1)<<(bits-1)-1)}}}
	}
	if err != nil || n < 1 {
		return 0, newProblem("not-found", "%s %q is not an id this service issues", name, raw)
	}
	return n, nil
}

func etagOf(version int64) string { return `"` + strconv.FormatInt(version, 10) + `"` }

// jsonWithETag answers v with the ETag of its version, so the client can
// send it back in If-Match.
func jsonWithETag(c echo.Context, status int, version int64, v any) error {
	c.Response().Header().Set("ETag", etagOf(version))
	return c.JSON(status, v)
}

// componentVersion reads the version component id is at now.
func (s *server) componentVersion(c echo.Context, id int64) currentVersion {
	return func() (int64, error) {
		comp, err := s.store.Component(c.Request().Context(), id)
		return comp.Version, err
	}
}

func (s *server) createComponent(c echo.Context) error {
	var in domain.ComponentInput
	if err := bindStrict(c, &in); err != nil {
		return err
	}
	in.Defaults()
	if err := in.Validate(); err != nil {
		return err
	}
	comp, err := s.store.CreateComponent(c.Request().Context(), currentUser(c), in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("Location", fmt.Sprintf("/v1/components/%d", comp.ID))
	return jsonWithETag(c, http.StatusCreated, comp.Version, comp)
}

func (s *server) getComponent(c echo.Context) error {
	id, err := pathID(c, "id")
	if err != nil {
		return err
	}
	comp, err := s.store.Component(c.Request().Context(), id)
	if err != nil {
		return err
	}
	return jsonWithETag(c, http.StatusOK, comp.Version, comp)
}

func (s *server) replaceComponent(c echo.Context) error {
	id, version, err := s.componentChange(c)
	if err != nil {
		return err
	}
	var in domain.ComponentInput
	if err := bindStrict(c, &in); err != nil {
		return err
	}
	in.Defaults()
	if err := in.Validate(); err != nil {
		return err
	}
	return s.changeComponent(c, id, version, func(domain.Component) (domain.ComponentInput, error) { return in, nil })
}

// patchComponent applies a JSON merge patch (RFC 7386) to the stored
// component and saves the result as a replacement would.
func (s *server) patchComponent(c echo.Context) error {
	id, version, err := s.componentChange(c)
	if err != nil {
		return err
	}
	body, err := readBody(c)
	if err != nil {
		return err
	}
	var patch map[string]any
	if err := domain.DecodeStrict(body, &patch); err != nil {
		return err
	}
	return s.changeComponent(c, id, version, func(current domain.Component) (domain.ComponentInput, error) {
		return mergedComponent(current, patch)
	})
}

// componentChange reads the id and the If-Match condition of a change.
func (s *server) componentChange(c echo.Context) (id, version int64, err error) {
	if id, err = pathID(c, "id"); err != nil {
		return 0, 0, err
	}
	version, err = ifMatchVersion(c, s.componentVersion(c, id))
	return id, version, err
}

// changeComponent stores what change makes of component id, in the one
// shape of a change with If-Match, and answers the component saved.
func (s *server) changeComponent(c echo.Context, id, version int64, change func(domain.Component) (domain.ComponentInput, error)) error {
	ctx := c.Request().Context()
	comp, err := changeWithIfMatch(version,
		func() (domain.Component, int64, error) {
			comp, err := s.store.Component(ctx, id)
			return comp, comp.Version, err
		},
		func(current domain.Component, expect int64) (domain.Component, error) {
			in, err := change(current)
			if err != nil {
				return current, err
			}
			return s.store.UpdateComponent(ctx, currentUser(c), id, expect, in)
		})
	if err != nil {
		return err
	}
	return jsonWithETag(c, http.StatusOK, comp.Version, comp)
}

// mergedComponent applies patch to current's fields and validates the
// result as a full replacement.
func mergedComponent(current domain.Component, patch map[string]any) (domain.ComponentInput, error) {
	currentJSON, err := encodeJSON(current.ComponentInput)
	if err != nil {
		return domain.ComponentInput{}, fmt.Errorf("encode component %d: %w", current.ID, err)
	}
	var doc map[string]any
	if err := json.Unmarshal(currentJSON, &doc); err != nil {
		return domain.ComponentInput{}, fmt.Errorf("decode component %d: %w", current.ID, err)
	}
	merged, err := encodeJSON(mergePatch(doc, patch))
	if err != nil {
		return domain.ComponentInput{}, fmt.Errorf("encode patched component: %w", err)
	}
	var in domain.ComponentInput
	if err := domain.DecodeStrict(merged, &in); err != nil {
		return in, err
	}
	in.Defaults()
	return in, in.Validate()
}

// mergePatch applies an RFC 7386 merge patch: null removes, objects merge,
// anything else replaces.
func mergePatch(target, patch map[string]any) map[string]any {
	for k, pv := range patch {
		if pv == nil {
			delete(target, k)
			continue
		}
		if po, ok := pv.(map[string]any); ok {
			to, _ := target[k].(map[string]any)
			if to == nil {
				to = map[string]any{}
			}
			target[k] = mergePatch(to, po)
			continue
		}
		target[k] = pv
	}
	return target
}

func (s *server) deleteComponent(c echo.Context) error {
	id, err := pathID(c, "id")
	if err != nil {
		return err
	}
	version, err := optionalIfMatchVersion(c, s.componentVersion(c, id))
	if err != nil {
		return err
	}
	if err := s.store.DeleteComponent(c.Request().Context(), currentUser(c), id, version); err != nil {
		return err
	}
	return c.NoContent(http.StatusNoContent)
}

// measurementRequest is a reading as sent. Its pointers tell a value left
// out from a value of zero: a reading without its voltage or current must
// be refused, not stored as 0 V or 0 A where the motor fit would use it.
type measurementRequest struct {
	VoltageV *float64 `json:"voltage_v"`
	CurrentA *float64 `json:"current_a"`
	SpeedRPM *float64 `json:"speed_rpm"`
	Note     string   `json:"note"`
}

func (r measurementRequest) input() (domain.MeasurementInput, error) {
	in := domain.MeasurementInput{SpeedRPM: r.SpeedRPM, Note: r.Note}
	var missing domain.Problems
	if r.VoltageV == nil {
		missing.Add("/voltage_v", "is required")
	} else {
		in.VoltageV = *r.VoltageV
	}
	if r.CurrentA == nil {
		missing.Add("/current_a", "is required")
	} else {
		in.CurrentA = *r.CurrentA
	}
	if err := missing.Err(); err != nil {
		return in, err
	}
	return in, in.Validate()
}

func (s *server) addMeasurement(c echo.Context) error {
	id, err := pathID(c, "id")
	if err != nil {
		return err
	}
	var req measurementRequest
	if err := bindStrict(c, &req); err != nil {
		return err
	}
	in, err := req.input()
	if err != nil {
		return err
	}
	m, err := s.store.AddMeasurement(c.Request().Context(), currentUser(c), id, in)
	if err != nil {
		return err
	}
	c.Response().Header().Set("Location", fmt.Sprintf("/v1/components/%d/measurements", id))
	return c.JSON(http.StatusCreated, m)
}

func (s *server) listMeasurements(c echo.Context) error {
	id, err := pathID(c, "id")
	if err != nil {
		return err
	}
	list, err := s.store.Measurements(c.Request().Context(), id)
	if err != nil {
		return err
	}
	if list == nil {
		list = []domain.Measurement{}
	}
	return c.JSON(http.StatusOK, map[string]any{"items": list})
}
