package api

import (
	"errors"
	"fmt"
	"log/slog"
	"math"
	"net/http"
	"strconv"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
)

// Problem is an RFC 9457 problem document. Type is stable per kind of
// error so clients can branch on it; Detail is for people.
type Problem struct {
	Type      string                `json:"type"`
	Title     string                `json:"title"`
	Status    int                   `json:"status"`
	Detail    string                `json:"detail,omitempty"`
	Instance  string                `json:"instance,omitempty"`
	Errors    []domain.FieldProblem `json:"errors,omitempty"`
	RequestID string                `json:"request_id,omitempty"`
	// Quota names the per-member quota a quota problem is about.
	Quota string `json:"quota,omitempty"`
}

// ProblemTypePrefix starts every problem type URI.
const ProblemTypePrefix = "urn:wattshelf:problem:"

// problemKind is the status and title of one kind of problem.
type problemKind struct {
	status int
	title  string
}

// problemKinds returns every kind of problem by name.
func problemKinds() map[string]problemKind {
	return map[string]problemKind{
		"malformed":           {http.StatusBadRequest, "The request body is not well-formed JSON"},
		"bad-query":           {http.StatusBadRequest, "A query parameter is not understood"},
		"bad-path":            {http.StatusBadRequest, "A number in the path is out of range"},
		"unauthorized":        {http.StatusUnauthorized, "A valid bearer token is required"},
		"forbidden":           {http.StatusForbidden, "This token may not do that"},
		"not-found":           {http.StatusNotFound, "Nothing is here"},
		"method-not-allowed":  {http.StatusMethodNotAllowed, "This method is not allowed here"},
		"conflict":            {http.StatusConflict, "The request conflicts with what is stored"},
		"precondition-failed": {http.StatusPreconditionFailed, "The record changed since you read it"},
		"too-large":           {http.StatusRequestEntityTooLarge, "The request body is too large"},
		"unsupported-media":   {http.StatusUnsupportedMediaType, "Send application/json"},
		"validation":          {http.StatusUnprocessableEntity, "The request has invalid fields"},
		// The request is well-formed, but the stored readings cannot support a fit yet.
		"motor-fit-needs-readings": {http.StatusUnprocessableEntity, "The bench readings cannot be fitted yet"},
		"precondition-required":    {http.StatusPreconditionRequired, "Send If-Match with the ETag you read"},
		"rate-limited":             {http.StatusTooManyRequests, "Too many requests; slow down"},
		"quota-rate":               {http.StatusTooManyRequests, "A per-member quota for this hour is used up"},
		"quota-total":              {http.StatusForbidden, "A per-member quota is used up"},
		"internal":                 {http.StatusInternalServerError, "Something went wrong on our side"},
		"unavailable":              {http.StatusServiceUnavailable, "The service cannot serve this right now"},
	}
}

// problemError is an error that already knows its problem kind.
type problemError struct {
	kind   string
	detail string
	fields []domain.FieldProblem
	retry  int    // seconds for Retry-After, 0 for none
	quota  string // the quota a quota problem names
}

func (e *problemError) Error() string { return e.kind + ": " + e.detail }

func newProblem(kind, format string, args ...any) *problemError {
	return &problemError{kind: kind, detail: fmt.Sprintf(format, args...)}
}

// Unavailability reports whether err means the database cannot be reached.
type unavailabilityCheck func(error) bool

// problemFor maps any error to the problem a client sees. Unknown errors
// become "internal" with no detail: internals never leak.
func problemFor(err error, isUnavailable unavailabilityCheck) (Problem, *problemError) {
	var pe *problemError
	var ve *domain.ValidationError
	var de *domain.DecodeError
	var he *echo.HTTPError
	var qe *domain.QuotaError
	switch {
	case errors.As(err, &pe):
	case errors.As(err, &qe):
		pe = quotaProblem(qe)
	case errors.As(err, &ve):
		pe = &problemError{kind: "validation", detail: domain.CountOf(len(ve.Problems), "field is invalid", "fields are invalid"), fields: ve.Problems}
	case errors.As(err, &de):
		pe = &problemError{kind: "malformed", detail: de.Error()}
	case errors.Is(err, domain.ErrNotFound):
		pe = &problemError{kind: "not-found", detail: publicDetail(err)}
	case errors.Is(err, domain.ErrForbidden):
		pe = &problemError{kind: "forbidden", detail: "only the owner or staff may change this record"}
	case errors.Is(err, domain.ErrUnauthorized):
		pe = &problemError{kind: "unauthorized", detail: "send Authorization: Bearer <token>; the token may be missing, unknown or revoked"}
	case errors.Is(err, domain.ErrPreconditionFailed):
		pe = &problemError{kind: "precondition-failed", detail: "read the record again and retry with its new ETag"}
	case errors.Is(err, domain.ErrConflict):
		pe = &problemError{kind: "conflict", detail: publicDetail(err)}
	case errors.Is(err, domain.ErrUnavailable), isUnavailable != nil && isUnavailable(err):
		pe = &problemError{kind: "unavailable", detail: "the database cannot be reached; try again shortly", retry: 5}
	case errors.As(err, &he):
		pe = httpErrorProblem(he)
	default:
		pe = &problemError{kind: "internal", detail: "the error has been logged"}
	}
	k := problemKinds()[pe.kind]
	return Problem{
		Type: ProblemTypePrefix + pe.kind, Title: k.title, Status: k.status,
		Detail: pe.detail, Errors: pe.fields, Quota: pe.quota,
	}, pe
}

// quotaProblem is a 429 with Retry-After for a rate quota and a 403 for
// a total, each naming the quota so a client can tell which it hit.
func quotaProblem(qe *domain.QuotaError) *problemError {
	if qe.RetryAfter > 0 {
		seconds := int(math.Ceil(qe.RetryAfter.Seconds()))
		return &problemError{kind: "quota-rate", quota: qe.Quota, retry: seconds,
			detail: fmt.Sprintf("you have stored %d or more reviews in the last hour (quota %s); try again in %d s", qe.Limit, qe.Quota, seconds)}
	}
	return &problemError{kind: "quota-total", quota: qe.Quota,
		detail: fmt.Sprintf("you have reached the quota %s (%d); delete something or ask staff to raise it", qe.Quota, qe.Limit)}
}

// publicDetail is the message of a domain error, which our own code wrote
// for clients (e.g. "component 7: not found").
func publicDetail(err error) string { return err.Error() }

func httpErrorProblem(he *echo.HTTPError) *problemError {
	switch he.Code {
	case http.StatusNotFound:
		return &problemError{kind: "not-found", detail: "no such route"}
	case http.StatusMethodNotAllowed:
		return &problemError{kind: "method-not-allowed", detail: "see /openapi.yaml for the routes"}
	case http.StatusRequestEntityTooLarge:
		return &problemError{kind: "too-large", detail: "request bodies are limited to 2 MiB"}
	case http.StatusUnsupportedMediaType:
		return &problemError{kind: "unsupported-media", detail: "send Content-Type: application/json"}
	case http.StatusTooManyRequests:
		return &problemError{kind: "rate-limited", detail: "too many requests from this client", retry: 1}
	case http.StatusUnauthorized:
		return &problemError{kind: "unauthorized", detail: "send Authorization: Bearer <token>"}
	case http.StatusBadRequest:
		return &problemError{kind: "malformed", detail: fmt.Sprint(he.Message)}
	}
	return &problemError{kind: "internal", detail: "the error has been logged"}
}

// errorHandler writes every error as a problem document.
func errorHandler(logger *slog.Logger, isUnavailable unavailabilityCheck) echo.HTTPErrorHandler {
	return func(err error, c echo.Context) {
		if c.Response().Committed {
			return
		}
		p, pe := problemFor(err, isUnavailable)
		p.Instance = c.Request().URL.Path
		p.RequestID = c.Response().Header().Get(echo.HeaderXRequestID)
		if p.Status >= 500 {
			logger.Error("request failed", "request_id", p.RequestID, "path", p.Instance, "error", err.Error())
		}
		if pe.retry > 0 {
			c.Response().Header().Set("Retry-After", strconv.Itoa(pe.retry))
		}
		if p.Status == http.StatusMethodNotAllowed {
			allowHead(c.Response().Header())
		}
		if p.Status == http.StatusUnauthorized {
			// RFC 9110 section 15.5.2: a 401 names the scheme to use.
			c.Response().Header().Set(echo.HeaderWWWAuthenticate, `Bearer realm="wattshelf"`)
		}
		body, _ := encodeJSON(p)
		c.Response().Header().Set(echo.HeaderContentType, "application/problem+json")
		c.Response().WriteHeader(p.Status)
		_, _ = c.Response().Write(body)
	}
}
