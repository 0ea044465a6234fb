package domain

import (
	"fmt"
	"reflect"
	"strconv"
	"strings"

	"github.com/go-json-experiment/json"
	"github.com/go-json-experiment/json/jsontext"
)

// DesignSchemaID names the design document's JSON Schema; the API serves
// it at /v1/schemas/design.json.
const DesignSchemaID = "urn:wattshelf:design-format:1"

// designObjects are the objects of a design document, in the order the
// format reference lists them, with the names the schema and the messages
// give them.
func designObjects() []designObject {
	return []designObject{
		{"design", reflect.TypeFor[Design]()},
		{"node", reflect.TypeFor[Node]()},
		{"feed", reflect.TypeFor[Feed]()},
		{"wire", reflect.TypeFor[Wire]()},
		{"fuse", reflect.TypeFor[Fuse]()},
		{"connector", reflect.TypeFor[Connector]()},
	}
}

type designObject struct {
	name string
	typ  reflect.Type
}

func objectName(t reflect.Type) string {
	for _, o := range designObjects() {
		if o.typ == t {
			return o.name
		}
	}
	panic("no object name for " + t.String())
}

// DesignSchema is the JSON Schema (draft 2020-12) of a design document,
// made from the declaration of its fields.
func DesignSchema() []byte {
	root := objectSchema(reflect.TypeFor[Design]())
	root["$schema"] = "https://json-schema.org/draft/2020-12/schema"
	root["$id"] = DesignSchemaID
	root["title"] = "wattshelf design document, format 1"
	root["description"] = "A tree of power: batteries and supplies at the roots, every other node fed from one parent " +
		"through a feed (wire pair, optional fuse and connectors). Units are SI, the unit in each name. " +
		"Mains-powered circuits are out of scope."
	defs := map[string]any{}
	for _, o := range designObjects()[1:] {
		defs[o.name] = objectSchema(o.typ)
	}
	root["$defs"] = defs
	out, err := json.Marshal(root, json.Deterministic(true))
	if err != nil {
		panic(fmt.Sprintf("encode the design schema: %v", err)) // maps of plain values always encode
	}
	v := jsontext.Value(out)
	if err := v.Indent(jsontext.WithIndent("  ")); err != nil {
		panic(fmt.Sprintf("indent the design schema: %v", err))
	}
	return append(v, '\n')
}

func objectSchema(t reflect.Type) map[string]any {
	props := map[string]any{}
	required := []string{}
	for _, f := range FieldsOf(t) {
		props[f.Name] = fieldSchema(f)
		if f.Required {
			required = append(required, f.Name)
		}
	}
	return map[string]any{
		"type": "object", "properties": props, "required": required, "additionalProperties": false,
	}
}

func fieldSchema(f Field) map[string]any {
	s := map[string]any{"description": f.Description()}
	jsonType := f.Kind
	switch f.Kind {
	case "object":
		s["$ref"] = "#/$defs/" + objectName(f.Elem)
	case "array":
		s["type"] = "array"
		s["items"] = map[string]any{"$ref": "#/$defs/" + objectName(f.Elem)}
		if f.Max != nil {
			s["maxItems"] = int(*f.Max)
		}
	case "number", "integer":
		if f.Min != nil {
			s["minimum"] = *f.Min
		}
		if f.Max != nil {
			s["maximum"] = *f.Max
		}
		if d, err := strconv.ParseFloat(f.Default, 64); err == nil {
			s["default"] = d
		}
	case "string":
		s["maxLength"] = f.MaxLen
		if len(f.Enum) > 0 {
			s["enum"] = f.Enum
		}
	case "boolean":
		if b, err := strconv.ParseBool(f.Default); err == nil {
			s["default"] = b
		}
	}
	if f.Unit != "" {
		s["x-unit"] = f.Unit
	}
	// The decoder takes null as "left out", so an optional field may be
	// null; the schema says what the decoder does.
	switch {
	case f.Kind == "object" && !f.Required:
		ref := s["$ref"]
		delete(s, "$ref")
		s["anyOf"] = []any{map[string]any{"$ref": ref}, map[string]any{"type": "null"}}
	case f.Kind == "object":
	case f.Kind == "array":
	case f.Required:
		s["type"] = jsonType
	default:
		s["type"] = []string{jsonType, "null"}
	}
	return s
}

// Description is the field's meaning with its unit, default and the node
// types it applies to, as the schema and the format reference say it.
func (f Field) Description() string {
	var b strings.Builder
	b.WriteString(f.Doc)
	if f.Unit != "" {
		fmt.Fprintf(&b, " (%s)", f.Unit)
	}
	b.WriteString(".")
	if len(f.For) > 0 {
		fmt.Fprintf(&b, " For %s.", forText(f.For))
	}
	if f.Default != "" {
		fmt.Fprintf(&b, " Default: %s.", f.Default)
	}
	return b.String()
}

// forText says which node types a field applies to, in words:
// "regulator/buck|boost" reads "switching (buck, boost) regulators".
func forText(rules []string) string {
	parts := make([]string, 0, len(rules))
	for _, r := range rules {
		typ, topo, ok := strings.Cut(r, "/")
		switch {
		case !ok:
			parts = append(parts, typ)
		case topo == TopologyLinear:
			parts = append(parts, "linear "+typ)
		default:
			parts = append(parts, "switching "+typ+" ("+strings.ReplaceAll(topo, "|", ", ")+")")
		}
	}
	return strings.Join(parts, ", ")
}

// DesignReference is the format's reference for people, in Markdown: a
// table per object of the document, every field with its type, unit,
// range, default and meaning. The README carries it, and a test keeps the
// README's copy equal to this.
func DesignReference() string {
	var b strings.Builder
	for _, o := range designObjects() {
		fmt.Fprintf(&b, "**%s**\n\n| field | type | unit | range | default | applies to | meaning |\n|---|---|---|---|---|---|---|\n", o.name)
		for _, f := range FieldsOf(o.typ) {
			typ := f.Kind
			switch {
			case f.Kind == "object":
				typ = objectName(f.Elem)
			case f.Kind == "array":
				typ = "array of " + objectName(f.Elem)
			case len(f.Enum) > 0:
				typ = "`" + strings.Join(f.Enum, "` \\| `") + "`"
			}
			if f.Required {
				typ += ", required"
			}
			rng := ""
			if f.Min != nil || f.Max != nil {
				rng = f.bounds()
				if f.Kind == "array" {
					rng = fmt.Sprintf("at most %g items", *f.Max)
				}
			}
			applies := "all"
			if len(f.For) > 0 {
				applies = forText(f.For)
			}
			if o.name != "node" {
				applies = ""
			}
			fmt.Fprintf(&b, "| `%s` | %s | %s | %s | %s | %s | %s |\n", f.Name, typ, f.Unit, rng, f.Default, applies, f.Doc)
		}
		b.WriteString("\n")
	}
	return b.String()
}
