package domain

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"reflect"
	"strconv"
	"strings"

	"github.com/go-json-experiment/json"
	"github.com/go-json-experiment/json/jsontext"
	"github.com/santhosh-tekuri/jsonschema/v6"
)

// StrictJSON is how every request body is read, configured once: unknown
// members are refused, and (json v2's defaults) names match exactly and a
// name given twice in one object is refused.
// Marshalling writes map keys in order, so equal values encode alike.
func StrictJSON() json.Options {
	return json.JoinOptions(json.RejectUnknownMembers(true), json.Deterministic(true))
}

// DecodeStrict decodes the one JSON value in data into v. Input that is
// not well-formed JSON (a syntax error, an empty body, trailing data)
// gives a *DecodeError; well-formed JSON that does not fit v gives a
// *ValidationError naming the problem by JSON pointer.
// More options (custom unmarshalers) may be given.
func DecodeStrict(data []byte, v any, more ...json.Options) error {
	if len(bytes.TrimSpace(data)) == 0 {
		return &DecodeError{Reason: "the body is empty; send a JSON object"}
	}
	err := json.Unmarshal(data, v, append([]json.Options{StrictJSON()}, more...)...)
	if err == nil {
		return nil
	}
	if broken := malformed(data, err); broken != nil {
		return broken
	}
	return &ValidationError{Problems: []FieldProblem{shapeProblem(err)}}
}

// malformed is a *DecodeError when err says data is not well-formed JSON,
// and nil when it is well-formed but does not fit.
func malformed(data []byte, err error) error {
	var syn *jsontext.SyntacticError
	switch {
	case errors.As(err, &syn) && !errors.Is(err, jsontext.ErrDuplicateName):
		reason := strings.TrimPrefix(syn.Err.Error(), "jsontext: ")
		if errors.Is(syn.Err, io.ErrUnexpectedEOF) {
			reason = "the document ends too early"
		} else if strings.Contains(reason, "after top-level value") {
			reason = "trailing data after the JSON value"
		}
		return &DecodeError{Offset: syn.ByteOffset, Reason: reason + lineCol(data, syn.ByteOffset)}
	case errors.Is(err, io.ErrUnexpectedEOF):
		off := int64(len(data))
		return &DecodeError{Offset: off, Reason: "the document ends too early" + lineCol(data, off)}
	}
	return nil
}

// lineCol says where offset falls, for people reading a file in an editor.
func lineCol(data []byte, offset int64) string {
	offset = min(max(offset, 0), int64(len(data)))
	before := data[:offset]
	line := bytes.Count(before, []byte{'\n'}) + 1
	col := int64(len(before)) - int64(bytes.LastIndexByte(before, '\n'))
	return fmt.Sprintf(" (line %d, column %d)", line, col)
}

// shapeProblem describes a decoding error of well-formed JSON: a name
// given twice, an unknown member, or a value of the wrong kind.
func shapeProblem(err error) FieldProblem {
	var syn *jsontext.SyntacticError
	if errors.As(err, &syn) {
		return FieldProblem{Pointer: string(syn.JSONPointer), Detail: "appears twice in one object"}
	}
	var sem *json.SemanticError
	if !errors.As(err, &sem) {
		return FieldProblem{Detail: "cannot be read: " + err.Error()}
	}
	ptr := string(sem.JSONPointer)
	switch {
	case errors.Is(err, json.ErrUnknownName):
		return FieldProblem{Pointer: ptr, Detail: "is not a known field"}
	case sem.GoType == nil:
		return FieldProblem{Pointer: ptr, Detail: "cannot be read"}
	}
	t := sem.GoType
	for t.Kind() == reflect.Pointer {
		t = t.Elem()
	}
	want := map[string]string{
		"float64": "a number", "int": "a whole number", "int64": "a whole number", "string": "a string",
		"bool": "true or false", "slice": "an array", "struct": "an object", "map": "an object",
	}[t.Kind().String()]
	switch {
	case want == "":
		return FieldProblem{Pointer: ptr, Detail: "has the wrong type"}
	case sem.JSONKind == '0' && (want == "a number" || want == "a whole number"):
		if want == "a whole number" {
			return FieldProblem{Pointer: ptr, Detail: "must be a whole number in range"}
		}
		return FieldProblem{Pointer: ptr, Detail: "is too large a number"}
	}
	return FieldProblem{Pointer: ptr, Detail: "must be " + want}
}

// repeatedNames are the pointers of every member whose name its object
// has already given: the schema sees only the last of them, and the
// decoder stops at the first.
func repeatedNames(data []byte) []string {
	dec := jsontext.NewDecoder(bytes.NewReader(data), jsontext.AllowDuplicateNames(true))
	var seen []map[string]bool // the names of each open object; nil for an array
	var out []string
	for len(out) < MaxProblems {
		tok, err := dec.ReadToken()
		if err != nil {
			return out
		}
		depth := len(seen)
		switch k := tok.Kind(); {
		case k == '{':
			seen = append(seen, map[string]bool{})
			continue
		case k == '[':
			seen = append(seen, nil)
			continue
		case k == '}' || k == ']':
			seen = seen[:depth-1]
			continue
		}
		if depth == 0 || seen[depth-1] == nil {
			continue
		}
		// A string token inside an object that is a name: the decoder's
		// stack counts names and values, names at even places.
		if _, n := dec.StackIndex(dec.StackDepth()); n%2 == 1 {
			name := tok.String()
			if seen[depth-1][name] {
				out = append(out, string(dec.StackPointer()))
			}
			seen[depth-1][name] = true
		}
	}
	return out
}

// numbersAsWritten turns the schema library's json.Number values into
// JSON text, so a document read by it encodes again as it was written.
func numbersAsWritten(v any) any {
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			x[k] = numbersAsWritten(e)
		}
	case []any:
		for i, e := range x {
			x[i] = numbersAsWritten(e)
		}
	case interface{ String() string }:
		return jsontext.Value(x.String())
	}
	return v
}

// leaves are the errors at the bottom of a schema validation error's
// tree: the ones that say what is wrong.
func leaves(e *jsonschema.ValidationError) []*jsonschema.ValidationError {
	if len(e.Causes) == 0 {
		return []*jsonschema.ValidationError{e}
	}
	var out []*jsonschema.ValidationError
	for _, c := range e.Causes {
		out = append(out, leaves(c)...)
	}
	return out
}

// coveredBy tells whether ptr is one already said or lies inside one.
func coveredBy(ptr string, said map[string]bool) bool {
	for p := ptr; ; {
		if said[p] {
			return true
		}
		i := strings.LastIndexByte(p, '/')
		if i < 0 {
			return false
		}
		p = p[:i]
	}
}

// prune sets aside the value at loc: a member is deleted, an array
// element becomes an empty object so the pointers of the others stand.
func prune(doc any, loc []string) any {
	if len(loc) == 0 {
		return map[string]any{}
	}
	switch v := doc.(type) {
	case map[string]any:
		if len(loc) == 1 {
			delete(v, loc[0])
		} else if child, ok := v[loc[0]]; ok {
			v[loc[0]] = prune(child, loc[1:])
		}
	case []any:
		i, err := strconv.Atoi(loc[0])
		switch {
		case err != nil || i < 0 || i >= len(v):
		case len(loc) == 1:
			v[i] = map[string]any{}
		default:
			v[i] = prune(v[i], loc[1:])
		}
	}
	return doc
}

func pointerOf(loc []string) string {
	var b strings.Builder
	for _, t := range loc {
		b.WriteString("/" + PointerToken(t))
	}
	return b.String()
}

// PointerToken is s as one reference token of a JSON pointer (RFC 6901
// section 3): a key holding "/" or "~" names itself.
func PointerToken(s string) string {
	return string(jsontext.Pointer("").AppendToken(s))[1:]
}

// objectAt names the object of a design document at loc.
func objectAt(loc []string) string {
	switch {
	case len(loc) == 0:
		return "design"
	case len(loc) == 2 && loc[0] == "nodes":
		return "node"
	case len(loc) >= 2 && loc[len(loc)-2] == "connectors":
		return "connector"
	}
	return loc[len(loc)-1]
}

func typeWords(want []string) string {
	words := map[string]string{
		"number": "a number", "integer": "a whole number", "string": "a string", "boolean": "true or false",
		"object": "an object", "array": "an array",
	}
	for _, w := range want {
		if s, ok := words[w]; ok {
			return s
		}
	}
	return strings.Join(want, " or ")
}
