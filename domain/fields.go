package domain

import (
	"fmt"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"sync"
	"unsafe"
)

// The design document and a part's ratings are declared once, as Go
// structs whose tags say everything else needs to know about each field:
//
//	json:"name,omitzero"  its name; a field without omitzero is required
//	doc:"…"               what it means, for the JSON Schema and the format reference
//	unit:"V"              its unit
//	min:"0" max:"1000"    its accepted range, inclusive, for numbers
//	for:"motor load"      the node types it applies to ("regulator/linear": of that topology only);
//	                      no tag: every type
//	default:"…"           what a left-out value means
//	enum:"a b c"          the values a string may take
//	maxlen:"120"          the longest a string may be (default MaxShortFieldLen)
//
// Validation, the filling of a node from its stored component, the JSON
// Schema and the format reference all read this table, so none of them
// lists a field again.

// Field is one declared field of a struct of the design document or of a
// part's ratings.
type Field struct {
	Name     string // its JSON name
	Index    []int  // for reflect.Value.FieldByIndex
	Kind     string // number, integer, string, boolean, object, array
	Elem     reflect.Type
	Required bool
	Doc      string
	Unit     string
	Min, Max *float64
	For      []string // node types, "type" or "type/topology"; empty: all
	forRules []forRule
	Default  string
	Enum     []string
	MaxLen   int
	at       access
}

// access reads a declared field straight from its struct's address, at
// the offset reflection found once: validation reads every field of every
// node, and reflect.Value.FieldByIndex per field was most of its time.
type access struct {
	offset uintptr
	shape  shape
	num    reflect.Kind // a number's Go kind (Float64, Int, Int64); Invalid for other fields
}

// shape is how a field holds its value, which says when it is given.
type shape uint8

const (
	shapePlain   shape = iota // a plain number or struct: always given
	shapePointer              // *T: given when not nil
	shapeText                 // string: given when not empty
	shapeBool                 // bool: given when true
	shapeList                 // []T: given when not nil
)

// declaredFields reads the tags of the declared structs once: validation
// runs on every node of every review, and the tags cannot change while
// the program runs, so the table is as constant as they are.
var declaredFields = sync.OnceValue(func() map[reflect.Type][]Field {
	m := map[reflect.Type][]Field{}
	for _, t := range []reflect.Type{
		reflect.TypeFor[Design](), reflect.TypeFor[Node](), reflect.TypeFor[Feed](), reflect.TypeFor[Wire](),
		reflect.TypeFor[Fuse](), reflect.TypeFor[Connector](), reflect.TypeFor[Ratings](), reflect.TypeFor[Electrical](),
	} {
		m[t] = readFields(t, nil, 0)
	}
	return m
})

// FieldsOf returns the declared fields of struct type t, embedded structs
// flattened into their parent as JSON flattens them.
func FieldsOf(t reflect.Type) []Field {
	if f, ok := declaredFields()[t]; ok {
		return f
	}
	return readFields(t, nil, 0)
}

func readFields(t reflect.Type, index []int, offset uintptr) []Field {
	var out []Field
	for i := range t.NumField() {
		sf := t.Field(i)
		idx := append(slices.Clone(index), i)
		tag := sf.Tag.Get("json")
		if sf.Anonymous && tag == "" {
			out = append(out, readFields(sf.Type, idx, offset+sf.Offset)...)
			continue
		}
		name, opts, _ := strings.Cut(tag, ",")
		if name == "-" || !sf.IsExported() {
			continue
		}
		f := Field{
			Name: name, Index: idx, Required: !strings.Contains(opts, "omit"),
			Doc: sf.Tag.Get("doc"), Unit: sf.Tag.Get("unit"), Default: sf.Tag.Get("default"),
			MaxLen: MaxShortFieldLen, at: access{offset: offset + sf.Offset},
		}
		ft := sf.Type
		switch ft.Kind() {
		case reflect.Pointer:
			ft, f.at.shape = ft.Elem(), shapePointer
		case reflect.String:
			f.at.shape = shapeText
		case reflect.Bool:
			f.at.shape = shapeBool
		case reflect.Slice:
			f.at.shape = shapeList
		}
		switch ft.Kind() {
		case reflect.Float64:
			f.Kind, f.at.num = "number", reflect.Float64
		case reflect.Int, reflect.Int64:
			f.Kind, f.at.num = "integer", ft.Kind()
		case reflect.String:
			f.Kind = "string"
		case reflect.Bool:
			f.Kind = "boolean"
		case reflect.Struct:
			f.Kind, f.Elem = "object", ft
		case reflect.Slice:
			f.Kind, f.Elem = "array", ft.Elem()
		default:
			panic(fmt.Sprintf("field %s.%s: no JSON kind for %s", t.Name(), sf.Name, ft))
		}
		f.Min, f.Max = tagNumber(t, sf, "min"), tagNumber(t, sf, "max")
		if s := sf.Tag.Get("for"); s != "" {
			f.For = strings.Fields(s)
			for _, rule := range f.For {
				typ, topo, _ := strings.Cut(rule, "/")
				f.forRules = append(f.forRules, forRule{typ: typ, topologies: strings.FieldsFunc(topo, func(r rune) bool { return r == '|' })})
			}
		}
		if s := sf.Tag.Get("enum"); s != "" {
			f.Enum = strings.Fields(s)
		}
		if s := sf.Tag.Get("maxlen"); s != "" {
			f.MaxLen = int(*tagNumber(t, sf, "maxlen"))
		}
		out = append(out, f)
	}
	return out
}

// tagNumber reads a numeric tag. A malformed one is a mistake in this
// file's declarations, found by the first test that reads them.
func tagNumber(t reflect.Type, sf reflect.StructField, key string) *float64 {
	s, ok := sf.Tag.Lookup(key)
	if !ok {
		return nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		panic(fmt.Sprintf("field %s.%s: tag %s=%q is not a number", t.Name(), sf.Name, key, s))
	}
	return &v
}

// AppliesTo tells whether the field applies to a node of type typ and,
// for a regulator, topology. A regulator of unknown topology may carry any
// regulator field: its topology is reported instead.
func (f *Field) AppliesTo(typ, topology string) bool {
	if len(f.For) == 0 {
		return true
	}
	for _, rule := range f.forRules {
		if rule.typ != typ {
			continue
		}
		if len(rule.topologies) == 0 || topology == "" || slices.Contains(rule.topologies, topology) ||
			!slices.Contains(Topologies(), topology) {
			return true
		}
	}
	return false
}

// forRule is one node type a field applies to, and the regulator
// topologies it is limited to (none: all).
type forRule struct {
	typ        string
	topologies []string
}

// RangeText says a numeric field's accepted range, for messages and the
// format reference.
func (f Field) RangeText() string {
	if f.Unit == "" {
		return f.bounds()
	}
	return f.bounds() + " " + f.Unit
}

func (f Field) bounds() string {
	switch {
	case f.Min != nil && f.Max != nil:
		return "at least " + plain(*f.Min) + " and at most " + plain(*f.Max)
	case f.Min != nil:
		return "at least " + plain(*f.Min)
	case f.Max != nil:
		return "at most " + plain(*f.Max)
	}
	return ""
}

// plain writes a bound as people write it: 1000000, not 1e+06.
func plain(x float64) string { return strconv.FormatFloat(x, 'f', -1, 64) }

// isSet tells whether v, a field's value, was given: a pointer that is not
// nil, a string that is not empty, a true bool.
func isSet(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Pointer, reflect.Slice:
		return !v.IsNil()
	case reflect.String:
		return v.Len() > 0
	case reflect.Bool:
		return v.Bool()
	}
	return true
}

// given tells whether the field was given in the struct at base: a
// pointer that is not nil, a string that is not empty, a true bool.
func (a access) given(base unsafe.Pointer) bool {
	at := unsafe.Add(base, a.offset)
	switch a.shape {
	case shapePointer, shapeList: // a slice's first word is its array, nil for a nil slice
		return *(*unsafe.Pointer)(at) != nil
	case shapeText:
		return len(*(*string)(at)) > 0
	case shapeBool:
		return *(*bool)(at)
	}
	return true
}

// number is a numeric field's value, following a pointer; the field must
// be given.
func (a access) number(base unsafe.Pointer) float64 {
	at := unsafe.Add(base, a.offset)
	if a.shape == shapePointer {
		at = *(*unsafe.Pointer)(at)
	}
	switch a.num {
	case reflect.Int:
		return float64(*(*int)(at))
	case reflect.Int64:
		return float64(*(*int64)(at))
	}
	return *(*float64)(at)
}

// text is a string field's value.
func (a access) text(base unsafe.Pointer) string { return *(*string)(unsafe.Add(base, a.offset)) }

// items is a list field's length. Every slice has the same header,
// whatever it holds.
func (a access) items(base unsafe.Pointer) int {
	return len(*(*[]struct{})(unsafe.Add(base, a.offset)))
}

// checkDeclared records the problems with the values of *v, at ptr+sub,
// that the declaration alone decides: numbers out of range, strings too
// long or not one of their enum, and, for a node of type typ, fields that
// do not apply to it. Nested objects and arrays are their owners' to
// check. The pointer comes in two parts so that it is only put together
// for a problem.
func checkDeclared[T any](p *Problems, ptr, sub string, v *T, typ, topology string) {
	knownType := typ != "" && slices.Contains(NodeTypes(), typ)
	base := unsafe.Pointer(v)
	fields := FieldsOf(reflect.TypeFor[T]())
	for i := range fields {
		f := &fields[i]
		if !f.at.given(base) {
			continue
		}
		if knownType && !f.AppliesTo(typ, topology) {
			p.Add(ptr+sub+"/"+f.Name, "does not apply to %s", describeType(typ, topology))
		}
		switch f.Kind {
		case "number", "integer":
			x := f.at.number(base)
			if (f.Min != nil && !(x >= *f.Min)) || (f.Max != nil && !(x <= *f.Max)) {
				p.Add(ptr+sub+"/"+f.Name, "must be %s", f.RangeText())
			}
		case "string":
			s := f.at.text(base)
			if len(f.Enum) > 0 && !slices.Contains(f.Enum, s) {
				p.Add(ptr+sub+"/"+f.Name, "must be one of %s", strings.Join(f.Enum, ", "))
				continue
			}
			// A string no longer in bytes than its limit is no longer in
			// characters either: only a suspect one needs its pointer.
			if len(s) > f.MaxLen || strings.IndexByte(s, 0) >= 0 {
				p.CheckText(ptr+sub+"/"+f.Name, s, f.MaxLen, false)
			}
		case "array":
			if n := f.at.items(base); f.Max != nil && float64(n) > *f.Max {
				p.Add(ptr+sub+"/"+f.Name, "lists %d items; at most %g are allowed", n, *f.Max)
			}
		}
	}
}

// fillFrom sets every field of dst (a struct value) that is not given and
// that applies to a node of type typ from the same field of src. Topology
// is declared before the fields that depend on it, so a regulator's
// topology is filled before it decides which of them apply.
func fillFrom(dst, src reflect.Value, typ string) {
	topology := dst.FieldByName("Topology")
	for _, f := range FieldsOf(dst.Type()) {
		d := dst.FieldByIndex(f.Index)
		if isSet(d) || !f.AppliesTo(typ, topology.String()) {
			continue
		}
		s := src.FieldByIndex(f.Index)
		if !isSet(s) {
			continue
		}
		if s.Kind() == reflect.Pointer {
			c := reflect.New(s.Type().Elem())
			c.Elem().Set(s.Elem())
			d.Set(c)
		} else {
			d.Set(s)
		}
	}
}
