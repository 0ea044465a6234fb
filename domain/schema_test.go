package domain

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/go-json-experiment/json"
	"github.com/santhosh-tekuri/jsonschema/v6"
)

var update = flag.Bool("update", false, "rewrite the README's design format reference from the declaration")

func compiledSchema(t *testing.T) *jsonschema.Schema {
	t.Helper()
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(DesignSchema()))
	if err != nil {
		t.Fatal(err)
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource(DesignSchemaID, doc); err != nil {
		t.Fatal(err)
	}
	s, err := c.Compile(DesignSchemaID)
	if err != nil {
		t.Fatalf("the design schema does not compile as draft 2020-12: %v", err)
	}
	return s
}

func instance(t *testing.T, data []byte) any {
	t.Helper()
	v, err := jsonschema.UnmarshalJSON(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// Every demo design is valid by the schema and by Validate.
func TestSchemaAcceptsTheDemoDesigns(t *testing.T) {
	s := compiledSchema(t)
	files, _ := filepath.Glob("../testdata/demo/designs/*.json")
	if len(files) == 0 {
		t.Fatal("no demo designs found")
	}
	for _, f := range append(files, "") {
		data := []byte(validDoc)
		if f != "" {
			var err error
			if data, err = os.ReadFile(f); err != nil {
				t.Fatal(err)
			}
		}
		if err := s.Validate(instance(t, data)); err != nil {
			t.Errorf("%s: %v", f, err)
		}
		d, err := DecodeDesign(data)
		if err == nil {
			err = d.Validate()
		}
		if err != nil {
			t.Errorf("%s: %v", f, err)
		}
	}
}

// Broken documents fail the schema at the value that is wrong.
func TestSchemaRefusesBrokenDesigns(t *testing.T) {
	s := compiledSchema(t)
	tests := []struct{ name, from, to, at string }{
		{"unknown member", `"ambient_c": 25,`, `"ambient_c": 25, "colour": "red",`, ""},
		{"wrong type", `"duty": 0.5`, `"duty": "half"`, "/nodes/2/duty"},
		{"out of range", `"duty": 0.5`, `"duty": 1.5`, "/nodes/2/duty"},
		{"unknown node type", `"type": "load"`, `"type": "lamp"`, "/nodes/4/type"},
		{"whole number wanted", `"series": 8`, `"series": 8.5`, "/nodes/0/series"},
		{"missing wire", `"wire": {"gauge": "20AWG", "length_m": 0.3}`, `"fuse": {"rating_a": 2}`, "/nodes/2/feed"},
		{"unknown wire member", `"length_m": 0.3}`, `"length_m": 0.3, "colour": "red"}`, "/nodes/2/feed/wire"},
		{"negative wire", `"length_m": 0.3}`, `"length_m": -0.3}`, "/nodes/2/feed/wire/length_m"},
		{"bad fuse speed", `"speed": "slow"`, `"speed": "lazy"`, "/nodes/1/feed/fuse/speed"},
		{"enclosed not a boolean", `"length_m": 0.3}`, `"length_m": 0.3, "enclosed": "yes"}`, "/nodes/2/feed/wire/enclosed"},
		{"breaking capacity out of range", `"speed": "slow"`, `"speed": "slow", "breaking_capacity_a": 0`, "/nodes/1/feed/fuse/breaking_capacity_a"},
		{"current limit out of range", `"continuous_a": 3,`, `"continuous_a": 3, "current_limit_a": -1,`, "/nodes/1/current_limit_a"},
		{"no nodes", `"nodes": [`, `"nodez": [`, ""},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			doc := strings.Replace(validDoc, tt.from, tt.to, 1)
			if doc == validDoc {
				t.Fatalf("%q is not in the document", tt.from)
			}
			err := s.Validate(instance(t, []byte(doc)))
			if err == nil {
				t.Fatal("the schema accepted it")
			}
			var ve *jsonschema.ValidationError
			if !errorsAs(err, &ve) {
				t.Fatalf("%T: %v", err, err)
			}
			var at []string
			for _, l := range leaves(ve) {
				at = append(at, pointerOf(l.InstanceLocation))
			}
			if !slices.Contains(at, tt.at) {
				t.Errorf("failures at %q, want one at %q", at, tt.at)
			}
		})
	}
}

func errorsAs(err error, target **jsonschema.ValidationError) bool {
	ve, ok := err.(*jsonschema.ValidationError)
	*target = ve
	return ok
}

// The schema's members of each object are exactly the names json gives
// the Go struct's fields, so neither can gain or lose a field alone.
func TestSchemaMatchesTheStructs(t *testing.T) {
	var schema struct {
		Properties map[string]any `json:"properties"`
		Defs       map[string]struct {
			Properties map[string]any `json:"properties"`
		} `json:"$defs"`
	}
	if err := json.Unmarshal(DesignSchema(), &schema); err != nil {
		t.Fatal(err)
	}
	for _, o := range designObjects() {
		props := schema.Properties
		if o.name != "design" {
			props = schema.Defs[o.name].Properties
		}
		var inSchema []string
		for k := range props {
			inSchema = append(inSchema, k)
		}
		slices.Sort(inSchema)
		if got := jsonNames(t, o.typ); !slices.Equal(inSchema, got) {
			t.Errorf("%s: schema has %v, json writes %v", o.name, inSchema, got)
		}
	}
}

// jsonNames marshals a value of struct type t with every field set and
// returns the member names json writes.
func jsonNames(t *testing.T, typ reflect.Type) []string {
	t.Helper()
	v := reflect.New(typ).Elem()
	for _, f := range reflect.VisibleFields(typ) {
		fv := v.FieldByIndex(f.Index)
		if f.Anonymous || !f.IsExported() {
			continue
		}
		ft := f.Type
		if ft.Kind() == reflect.Pointer {
			fv.Set(reflect.New(ft.Elem()))
			fv = fv.Elem()
			ft = ft.Elem()
		}
		switch ft.Kind() {
		case reflect.Float64:
			fv.SetFloat(1)
		case reflect.Int, reflect.Int64:
			fv.SetInt(1)
		case reflect.String:
			fv.SetString("x")
		case reflect.Bool:
			fv.SetBool(true)
		case reflect.Slice:
			fv.Set(reflect.MakeSlice(ft, 1, 1))
		}
	}
	out, err := json.Marshal(v.Interface())
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(out, &m); err != nil {
		t.Fatal(err)
	}
	var names []string
	for k := range m {
		names = append(names, k)
	}
	slices.Sort(names)
	return names
}

// The bounds other code uses by name are the declared ones.
func TestNamedBoundsAreTheDeclaredOnes(t *testing.T) {
	declared := func(typ reflect.Type, name string) float64 {
		for _, f := range FieldsOf(typ) {
			if f.Name == name {
				return *f.Max
			}
		}
		t.Fatalf("%s has no field %s", typ, name)
		return 0
	}
	for _, c := range []struct {
		name     string
		constant float64
		typ      reflect.Type
		field    string
	}{
		{"MaxDesignNodes", MaxDesignNodes, reflect.TypeFor[Design](), "nodes"},
		{"MaxAmbientC", MaxAmbientC, reflect.TypeFor[Design](), "ambient_c"},
		{"MaxWireLengthM", MaxWireLengthM, reflect.TypeFor[Wire](), "length_m"},
		{"MaxPackCells", MaxPackCells, reflect.TypeFor[Ratings](), "series"},
		{"MaxConnectorsPerFeed", MaxConnectorsPerFeed, reflect.TypeFor[Feed](), "connectors"},
		{"MaxVoltageV", MaxVoltageV, reflect.TypeFor[Ratings](), "output_v"},
		{"MaxCurrentA", MaxCurrentA, reflect.TypeFor[Ratings](), "max_a"},
	} {
		if got := declared(c.typ, c.field); got != c.constant {
			t.Errorf("%s is %g, the declaration of %s says %g", c.name, c.constant, c.field, got)
		}
	}
}

// The README carries the format reference made from the declaration;
// go test ./domain -update writes it again.
func TestREADMECarriesTheFormatReference(t *testing.T) {
	const begin, end = "<!-- design-format-reference: begin -->\n", "<!-- design-format-reference: end -->"
	readme, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	i, j := bytes.Index(readme, []byte(begin)), bytes.Index(readme, []byte(end))
	if i < 0 || j < i {
		t.Fatalf("README.md has no %q … %q section", strings.TrimSpace(begin), end)
	}
	want := DesignReference()
	if got := string(readme[i+len(begin) : j]); got != want {
		if !*update {
			t.Fatalf("README.md's format reference differs from the declaration; run go test ./domain -update")
		}
		out := slices.Concat(readme[:i+len(begin)], []byte(want), readme[j:])
		if err := os.WriteFile("../README.md", out, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}
