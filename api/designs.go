package api

import (
	"fmt"
	"net/http"
	"strconv"
	"strings"
	"time"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

// registerDesignRoutes adds designs, reviews, limits, the motor fit and
// the OpenAPI document, and sets up what the reviews share: the limits
// cache and the per-client limiter of anonymous reviews.
func (s *server) registerDesignRoutes(e *echo.Echo, v1 *echo.Group) {
	s.limits = newLimitsCache(s.store, time.Now)
	s.reviewLimiter = newClientLimiter(s.cfg.ReviewsPerMinute, s.cfg.ReviewBurst)

	// Per route, not on the group, as for components.
	designs := v1.Group("/designs")
	designs.GET("", s.listDesigns, s.requireUser)
	designs.POST("", s.createDesign, s.requireUser)
	designs.GET("/:id", s.getDesign, s.requireUser)
	designs.PUT("/:id", s.replaceDesign, s.requireUser)
	designs.PATCH("/:id", s.patchDesign, s.requireUser)
	designs.DELETE("/:id", s.deleteDesign, s.requireUser)
	designs.POST("/:id/reviews", s.reviewStoredDesign, s.requireUser)
	designs.GET("/:id/reviews", s.listDesignReviews, s.requireUser)

	v1.POST("/reviews", s.reviewDocument)
	v1.GET("/components/:id/motor-fit", s.motorFit, s.requireUser)
	s.registerLimitsRoutes(v1)
	e.GET("/openapi.yaml", serveOpenAPI)
	v1.GET("/schemas/design.json", serveDesignSchema)
}

// serveDesignSchema sends the design document's JSON Schema.
func serveDesignSchema(c echo.Context) error {
	return c.Blob(http.StatusOK, "application/schema+json", domain.DesignSchema())
}

// DesignPage is one page of a design listing.
type DesignPage struct {
	Items []store.DesignSummary `json:"items"`
	Next  string                `json:"next,omitempty"`
}

// checkDesign decodes and validates a design document: broken JSON is a
// *domain.DecodeError (400), a document that breaks the contract a
// *domain.ValidationError (422).
func checkDesign(body []byte) (domain.Design, error) {
	doc, err := domain.DecodeDesign(body)
	if err != nil {
		return doc, err
	}
	return doc, doc.Validate()
}

// readDesignBody reads and checks a design document sent as the body.
func readDesignBody(c echo.Context) ([]byte, domain.Design, error) {
	body, err := readBody(c)
	if err != nil {
		return nil, domain.Design{}, err
	}
	doc, err := checkDesign(body)
	return body, doc, err
}

func (s *server) listDesigns(c echo.Context) error {
	u := currentUser(c)
	f := store.DesignFilter{Owner: u.Name}
	if owner := c.QueryParam("owner"); owner != "" {
		if !u.MayChange(owner) {
			return newProblem("forbidden", "members list only their own designs")
		}
		f.Owner = owner
	} else if u.Role == domain.RoleStaff {
		f.Owner = ""
	}
	var err error
	if f.Limit, f.AfterID, err = s.pageQuery(c, defaultPageSize, maxPageSize); err != nil {
		return err
	}
	items, more, err := s.store.ListDesigns(c.Request().Context(), f)
	if err != nil {
		return err
	}
	page := DesignPage{Items: items}
	if page.Items == nil {
		page.Items = []store.DesignSummary{}
	}
	if more {
		page.Next = s.cursors.encodeID(items[len(items)-1].ID)
	}
	return c.JSON(http.StatusOK, page)
}

// pageQuery reads ?limit= (def when absent, at most most) and ?cursor=,
// the id a page follows (0 when absent).
func (s *server) pageQuery(c echo.Context, def, most int) (limit int, afterID int64, err error) {
	limit = def
	if v := c.QueryParam("limit"); v != "" {
		n, err := strconv.Atoi(v)
		if err != nil || n < 1 || n > most {
			return 0, 0, queryProblem("/limit", "must be a whole number from 1 to %d", most)
		}
		limit = n
	}
	if v := c.QueryParam("cursor"); v != "" {
		if afterID, err = s.cursors.decodeID(v); err != nil {
			return 0, 0, queryProblem("/cursor", "is not a cursor this service issued")
		}
	}
	return limit, afterID, nil
}

// createDesign stores the document sent as the body, byte for byte, once
// it decodes and validates; its name comes from the document.
func (s *server) createDesign(c echo.Context) error {
	body, doc, err := readDesignBody(c)
	if err != nil {
		return err
	}
	if err := s.checkQuota(c, store.QuotaNeed{NewDesign: true, AddBytes: int64(len(body))}); err != nil {
		return err
	}
	d, err := s.store.CreateDesign(c.Request().Context(), currentUser(c), strings.TrimSpace(doc.Name), body)
	if err != nil {
		return err
	}
	c.Response().Header().Set("Location", fmt.Sprintf("/v1/designs/%d", d.ID))
	return jsonWithETag(c, http.StatusCreated, d.Version, d)
}

// visibleDesign loads a design the caller may see: its owner's or, for
// staff, anyone's. Designs are private to their owner.
func (s *server) visibleDesign(c echo.Context) (store.StoredDesign, error) {
	id, err := pathID(c, "id")
	if err != nil {
		return store.StoredDesign{}, err
	}
	return s.usableDesign(c, id)
}

// usableDesign reads design id if the caller may use it.
func (s *server) usableDesign(c echo.Context, id int64) (store.StoredDesign, error) {
	d, err := s.store.Design(c.Request().Context(), id)
	if err != nil {
		return d, err
	}
	if !currentUser(c).MayChange(d.Owner) {
		return d, newProblem("forbidden", "design %d belongs to another member; only its owner or staff may use it", id)
	}
	return d, nil
}

func (s *server) getDesign(c echo.Context) error {
	d, err := s.visibleDesign(c)
	if err != nil {
		return err
	}
	return jsonWithETag(c, http.StatusOK, d.Version, d)
}

// designVersion reads the version design id is at now, if the caller may
// use it.
func (s *server) designVersion(c echo.Context, id int64) currentVersion {
	return func() (int64, error) {
		d, err := s.usableDesign(c, id)
		return d.Version, err
	}
}

func (s *server) replaceDesign(c echo.Context) error {
	id, version, err := s.designChange(c)
	if err != nil {
		return err
	}
	body, doc, err := readDesignBody(c)
	if err != nil {
		return err
	}
	return s.changeDesign(c, id, version, func(store.StoredDesign) (string, []byte, error) {
		return strings.TrimSpace(doc.Name), body, nil
	})
}

// patchDesign applies a JSON merge patch (RFC 7386) to the stored
// document. Arrays such as nodes are replaced whole, as the RFC says.
func (s *server) patchDesign(c echo.Context) error {
	id, version, err := s.designChange(c)
	if err != nil {
		return err
	}
	body, err := readBody(c)
	if err != nil {
		return err
	}
	var patch map[string]any
	if err := decodeNumbers(body, &patch); err != nil {
		return err
	}
	return s.changeDesign(c, id, version, func(current store.StoredDesign) (string, []byte, error) {
		return mergedDesign(current, patch)
	})
}

// mergedDesign applies patch to current's document and checks the result
// as a replacement.
func mergedDesign(current store.StoredDesign, patch map[string]any) (string, []byte, error) {
	var doc map[string]any
	if err := decodeNumbers(current.Document, &doc); err != nil {
		return "", nil, fmt.Errorf("decode stored design %d: %w", current.ID, err)
	}
	merged, err := encodeJSON(mergePatch(doc, patch))
	if err != nil {
		return "", nil, fmt.Errorf("encode patched design: %w", err)
	}
	checked, err := checkDesign(merged)
	return strings.TrimSpace(checked.Name), merged, err
}

// designChange reads the id and the If-Match condition of a change.
func (s *server) designChange(c echo.Context) (id, version int64, err error) {
	if id, err = pathID(c, "id"); err != nil {
		return 0, 0, err
	}
	version, err = ifMatchVersion(c, s.designVersion(c, id))
	return id, version, err
}

// changeDesign stores what change makes of design id (its name and
// document), in the one shape of a change with If-Match, and answers the
// design saved.
func (s *server) changeDesign(c echo.Context, id, version int64, change func(store.StoredDesign) (string, []byte, error)) error {
	d, err := changeWithIfMatch(version,
		func() (store.StoredDesign, int64, error) {
			d, err := s.usableDesign(c, id)
			return d, d.Version, err
		},
		func(current store.StoredDesign, expect int64) (store.StoredDesign, error) {
			name, document, err := change(current)
			if err != nil {
				return current, err
			}
			// The byte quota counts the new document as added, without
			// subtracting the old one: one read fewer, and it errs on the
			// side of the quota by at most one document.
			if err := s.checkQuota(c, store.QuotaNeed{AddBytes: int64(len(document))}); err != nil {
				return current, err
			}
			return s.store.UpdateDesign(c.Request().Context(), currentUser(c), id, expect, name, document)
		})
	if err != nil {
		return err
	}
	return jsonWithETag(c, http.StatusOK, d.Version, d)
}

func (s *server) deleteDesign(c echo.Context) error {
	id, err := pathID(c, "id")
	if err != nil {
		return err
	}
	version, err := optionalIfMatchVersion(c, s.designVersion(c, id))
	if err != nil {
		return err
	}
	if err := s.store.DeleteDesign(c.Request().Context(), currentUser(c), id, version); err != nil {
		return err
	}
	return c.NoContent(http.StatusNoContent)
}
