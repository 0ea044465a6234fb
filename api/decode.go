package api

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"strings"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
)

// readBody reads the whole request body; the body-limit middleware turns
// an oversized one into 413 before this returns.
func readBody(c echo.Context) ([]byte, error) {
	body, err := io.ReadAll(c.Request().Body)
	if err != nil {
		var he *echo.HTTPError
		if errors.As(err, &he) {
			return nil, he
		}
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return nil, echo.ErrStatusRequestEntityTooLarge
		}
		return nil, fmt.Errorf("read request body: %w", err)
	}
	return body, nil
}

// decodeStrict decodes one JSON value into v, rejecting unknown fields,
// wrong types and trailing data. Syntax problems are *domain.DecodeError
// (400); unknown fields and wrong types are *domain.ValidationError (422)
// naming the field by JSON pointer.
func decodeStrict(body []byte, v any) error {
	if len(bytes.TrimSpace(body)) == 0 {
		return &domain.DecodeError{Reason: "the body is empty; send a JSON object"}
	}
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return classifyDecodeError(err, dec.InputOffset())
	}
	if _, err := dec.Token(); err != io.EOF {
		return &domain.DecodeError{Offset: dec.InputOffset(), Reason: "trailing data after the JSON value"}
	}
	return nil
}

func classifyDecodeError(err error, offset int64) error {
	var syn *json.SyntaxError
	var typ *json.UnmarshalTypeError
	switch {
	case errors.As(err, &syn):
		return &domain.DecodeError{Offset: syn.Offset, Reason: syn.Error()}
	case errors.Is(err, io.ErrUnexpectedEOF), errors.Is(err, io.EOF):
		return &domain.DecodeError{Offset: offset, Reason: "the JSON ends too early"}
	case errors.As(err, &typ):
		ptr := "/" + strings.ReplaceAll(typ.Field, ".", "/")
		if typ.Field == "" {
			ptr = ""
		}
		return &domain.ValidationError{Problems: []domain.FieldProblem{{
			Pointer: ptr, Detail: fmt.Sprintf("must be %s, not a JSON %s", jsonKind(typ.Type.Kind().String()), typ.Value),
		}}}
	case strings.HasPrefix(err.Error(), "json: unknown field "):
		field := strings.Trim(strings.TrimPrefix(err.Error(), "json: unknown field "), `"`)
		return &domain.ValidationError{Problems: []domain.FieldProblem{{
			Pointer: "/" + field, Detail: "is not a known field",
		}}}
	}
	return &domain.DecodeError{Offset: offset, Reason: err.Error()}
}

func jsonKind(goKind string) string {
	switch {
	case strings.HasPrefix(goKind, "int"), strings.HasPrefix(goKind, "uint"):
		return "a whole number"
	case strings.HasPrefix(goKind, "float"):
		return "a number"
	case goKind == "string":
		return "a string"
	case goKind == "bool":
		return "true or false"
	case goKind == "slice", goKind == "array":
		return "an array"
	}
	return "an object"
}

// bindStrict reads and strictly decodes the request body into v.
func bindStrict(c echo.Context, v any) error {
	body, err := readBody(c)
	if err != nil {
		return err
	}
	return decodeStrict(body, v)
}
