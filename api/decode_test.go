package api

import (
	"errors"
	"fmt"
	"net/http"
	"strings"
	"testing"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
)

func TestDecodeStrict(t *testing.T) {
	type inner struct {
		Level int `json:"level"`
	}
	type embedded struct {
		Volts float64 `json:"volts"`
		Deep  inner   `json:"deep"`
	}
	type target struct {
		Name string `json:"name"`
		embedded
		List []inner `json:"list"`
	}
	tests := []struct {
		body      string
		malformed bool   // want a *domain.DecodeError
		pointer   string // else, when not "-", want one field problem here
	}{
		{`{"name": "x", "volts": 5}`, false, "-"},
		{`{"name": 5}`, false, "/name"},
		{`{"volts": "5"}`, false, "/volts"},
		{`{"deep": {"level": "high"}}`, false, "/deep/level"},
		{`{"nope": 1}`, false, "/nope"},
		{`{"a~b/c": 1}`, false, "/a~0b~1c"},
		{`"just a string"`, false, ""},
		{`{"volts": 1e999}`, false, "/volts"},
		{``, true, ""},
		{`   `, true, ""},
		{`{`, true, ""},
		{`{"name": "x"}]`, true, ""},
		{`{"name": "x"}{"name": "y"}`, true, ""},
		{`{"name": 'x'}`, true, ""},
		// Names match exactly, and one given twice is refused.
		{`{"name": "a", "name": "b"}`, false, "/name"},
		{`{"NAME": "a"}`, false, "/NAME"},
		{`{"Volts": 5}`, false, "/Volts"},
	}
	for _, tt := range tests {
		var v target
		err := domain.DecodeStrict([]byte(tt.body), &v)
		var de *domain.DecodeError
		var ve *domain.ValidationError
		switch {
		case tt.malformed:
			if !errors.As(err, &de) {
				t.Errorf("%s: %v, want malformed", tt.body, err)
			}
		case tt.pointer == "-":
			if err != nil {
				t.Errorf("%s: %v", tt.body, err)
			}
		default:
			if !errors.As(err, &ve) || len(ve.Problems) != 1 || ve.Problems[0].Pointer != tt.pointer {
				t.Errorf("%s: %v, want one problem at %q", tt.body, err, tt.pointer)
			}
		}
	}
}

func TestProblemMapping(t *testing.T) {
	isDown := func(err error) bool { return strings.Contains(err.Error(), "connection refused") }
	tests := []struct {
		err    error
		kind   string
		status int
	}{
		{fmt.Errorf("component 3: %w", domain.ErrNotFound), "not-found", 404},
		{fmt.Errorf("user kim: %w", domain.ErrConflict), "conflict", 409},
		{fmt.Errorf("x: %w", domain.ErrForbidden), "forbidden", 403},
		{domain.ErrUnauthorized, "unauthorized", 401},
		{fmt.Errorf("x: %w", domain.ErrPreconditionFailed), "precondition-failed", 412},
		{fmt.Errorf("x: %w", domain.ErrUnavailable), "unavailable", 503},
		{errors.New("dial tcp: connection refused"), "unavailable", 503},
		{&domain.ValidationError{Problems: []domain.FieldProblem{{Pointer: "/a", Detail: "bad"}}}, "validation", 422},
		{&domain.DecodeError{Reason: "x"}, "malformed", 400},
		{echo.ErrNotFound, "not-found", 404},
		{echo.ErrMethodNotAllowed, "method-not-allowed", 405},
		{echo.ErrStatusRequestEntityTooLarge, "too-large", 413},
		{echo.ErrUnsupportedMediaType, "unsupported-media", 415},
		{echo.ErrTooManyRequests, "rate-limited", 429},
		{echo.ErrUnauthorized, "unauthorized", 401},
		{echo.NewHTTPError(http.StatusBadRequest, "bad"), "malformed", 400},
		{echo.NewHTTPError(http.StatusTeapot), "internal", 500},
		{errors.New("pool: password=hunter2"), "internal", 500},
	}
	for _, tt := range tests {
		p, _ := problemFor(tt.err, isDown)
		if p.Type != ProblemTypePrefix+tt.kind || p.Status != tt.status || p.Title == "" {
			t.Errorf("%v: %+v, want %s %d", tt.err, p, tt.kind, tt.status)
		}
		if strings.Contains(p.Detail, "hunter2") {
			t.Errorf("%v: detail leaks %q", tt.err, p.Detail)
		}
	}
	// Conflict details are our own words and reach the client.
	if p, _ := problemFor(fmt.Errorf("user kim: %w", domain.ErrConflict), nil); !strings.Contains(p.Detail, "kim") {
		t.Errorf("conflict detail %q", p.Detail)
	}
	for kind, k := range problemKinds() {
		if k.status < 400 || k.status > 599 || k.title == "" {
			t.Errorf("problem kind %s: status %d title %q", kind, k.status, k.title)
		}
	}
}

func TestMergePatch(t *testing.T) {
	var target, patch map[string]any
	_ = decodeNumbers([]byte(`{"a": 1, "b": {"c": 2, "d": 3}, "e": [1, 2], "f": "keep"}`), &target)
	_ = decodeNumbers([]byte(`{"a": null, "b": {"c": null, "x": 4}, "e": [3], "g": {"h": null, "i": 5.50}}`), &patch)
	got, _ := encodeJSON(mergePatch(target, patch))
	// RFC 7386: null removes, objects merge recursively, arrays and scalars replace.
	if want := `{"b":{"d":3,"x":4},"e":[3],"f":"keep","g":{"i":5.50}}`; string(got) != want {
		t.Errorf("merged %s, want %s", got, want)
	}
}
