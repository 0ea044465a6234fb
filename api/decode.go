package api

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"reflect"
	"strings"

	"github.com/labstack/echo/v4"

	"wattshelf/domain"
)

// readBody reads the whole request body; the body-limit middleware turns
// an oversized one into 413 before this returns.
func readBody(c echo.Context) ([]byte, error) {
	r := c.Request()
	var buf bytes.Buffer
	// With the length known the body is read into one allocation instead of
	// a growing series (the body limit still cuts off a body that lies).
	if n := r.ContentLength; n > 0 && n <= MaxBodyBytes {
		buf.Grow(int(n) + bytes.MinRead)
	}
	_, err := buf.ReadFrom(r.Body)
	body := buf.Bytes()
	if err != nil {
		var he *echo.HTTPError
		if errors.As(err, &he) {
			return nil, he
		}
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return nil, echo.ErrStatusRequestEntityTooLarge
		}
		// Any other failure is the client's: it stopped sending, or sent so
		// slowly that the server's read timeout ran out. Left as a network
		// error it would be mistaken for the database being unreachable.
		return nil, &domain.DecodeError{Reason: "the request body did not arrive whole in time"}
	}
	return body, nil
}

// decodeStrict decodes one JSON value into v, rejecting unknown fields,
// wrong types and trailing data. Syntax problems are *domain.DecodeError
// (400); unknown fields and wrong types are *domain.ValidationError (422)
// naming the field by JSON pointer.
func decodeStrict(body []byte, v any) error {
	return decodeOne(body, v, (*json.Decoder).DisallowUnknownFields)
}

// decodeOne decodes exactly one JSON value from body into v, with the
// decoder set up by setup; an empty body and trailing data are malformed.
func decodeOne(body []byte, v any, setup func(*json.Decoder)) error {
	if len(bytes.TrimSpace(body)) == 0 {
		return &domain.DecodeError{Reason: "the body is empty; send a JSON object"}
	}
	dec := json.NewDecoder(bytes.NewReader(body))
	setup(dec)
	if err := dec.Decode(v); err != nil {
		return classifyDecodeErrorFor(err, dec.InputOffset(), reflect.TypeOf(v))
	}
	if _, err := dec.Token(); err != io.EOF {
		return &domain.DecodeError{Offset: dec.InputOffset(), Reason: "trailing data after the JSON value"}
	}
	return nil
}

// classifyDecodeErrorFor sorts a decoding error into malformed (400) or
// invalid (422); target, the type decoded into, lets wrong-type pointers
// name the keys the client sent.
func classifyDecodeErrorFor(err error, offset int64, target reflect.Type) error {
	var syn *json.SyntaxError
	var typ *json.UnmarshalTypeError
	switch {
	case errors.As(err, &syn):
		return &domain.DecodeError{Offset: syn.Offset, Reason: syn.Error()}
	case errors.Is(err, io.ErrUnexpectedEOF), errors.Is(err, io.EOF):
		return &domain.DecodeError{Offset: offset, Reason: "the JSON ends too early"}
	case errors.As(err, &typ):
		return &domain.ValidationError{Problems: []domain.FieldProblem{{
			Pointer: fieldPointer(target, typ.Field), Detail: fmt.Sprintf("must be %s, not a JSON %s", jsonKind(typ.Type.Kind().String()), typ.Value),
		}}}
	case strings.HasPrefix(err.Error(), "json: unknown field "):
		field := strings.Trim(strings.TrimPrefix(err.Error(), "json: unknown field "), `"`)
		return &domain.ValidationError{Problems: []domain.FieldProblem{{
			Pointer: "/" + escapePointerToken(field), Detail: "is not a known field",
		}}}
	}
	return &domain.DecodeError{Offset: offset, Reason: err.Error()}
}

// fieldPointer turns encoding/json's dotted field path into the JSON
// pointer of the keys the client sent. The path names embedded structs by
// their Go name ("Electrical.max_v"), which no client ever sent, so those
// steps are dropped by looking them up in the decoded type.
func fieldPointer(target reflect.Type, path string) string {
	if path == "" {
		return ""
	}
	var b strings.Builder
	t := target
	for _, step := range strings.Split(path, ".") {
		for t != nil && (t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice || t.Kind() == reflect.Array || t.Kind() == reflect.Map) {
			t = t.Elem()
		}
		if t != nil && t.Kind() == reflect.Struct {
			if f, ok := t.FieldByName(step); ok && f.Anonymous && f.Tag.Get("json") == "" {
				t = f.Type
				continue
			}
			t = jsonFieldType(t, step)
		} else {
			t = nil
		}
		b.WriteString("/" + escapePointerToken(step))
	}
	return b.String()
}

// jsonFieldType is the type of the field of struct t that JSON calls
// name, or nil.
func jsonFieldType(t reflect.Type, name string) reflect.Type {
	for _, f := range reflect.VisibleFields(t) {
		tag, _, _ := strings.Cut(f.Tag.Get("json"), ",")
		if tag == name || (tag == "" && f.Name == name) {
			return f.Type
		}
	}
	return nil
}

// escapePointerToken escapes one reference token of a JSON pointer
// (RFC 6901 section 3), so a key holding "/" or "~" names itself.
func escapePointerToken(key string) string {
	return strings.NewReplacer("~", "~0", "/", "~1").Replace(key)
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
