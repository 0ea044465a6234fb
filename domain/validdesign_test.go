package domain

import "testing"

// A ValidDesign is only had from a document that passes Validate, and
// holds that document; the zero ValidDesign holds none.
func TestValidatedHoldsOnlyAValidDocument(t *testing.T) {
	d := decodeValid(t)
	v, err := d.Validated()
	if err != nil {
		t.Fatal(err)
	}
	got, err := v.Design()
	if err != nil || got.Name != d.Name || len(got.Nodes) != len(d.Nodes) {
		t.Errorf("Validated holds %q with %d nodes (%v), want %q with %d", got.Name, len(got.Nodes), err, d.Name, len(d.Nodes))
	}

	bad := mutate(t, func(_ map[string]any, n []any) { node(n, 2)["type"] = "servo" })
	if _, err := bad.Validated(); !hasProblem(problemsOf(t, err), "/nodes/2/type", "must be one of") {
		t.Errorf("an unknown node type was validated: %v", err)
	}
	if _, err := (ValidDesign{}).Design(); err == nil {
		t.Error("the zero ValidDesign gives a document")
	}
}
