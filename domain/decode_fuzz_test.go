package domain

import (
	"errors"
	"testing"

	"github.com/go-json-experiment/json"
	"github.com/go-json-experiment/json/jsontext"
)

// FuzzDecodeDesign holds DecodeDesign to its contract on any input: it
// never panics; broken JSON is a *DecodeError and well-formed JSON that
// does not fit a *ValidationError with at least one problem, each at a
// valid JSON pointer; and a document it accepts encodes and decodes
// again to the same JSON.
func FuzzDecodeDesign(f *testing.F) {
	f.Add([]byte(validDoc))
	f.Add([]byte(`{"format": 1, "nodes": [{"id": "a", "type": "load", "feed": {"from": "b"}, "feed": {}}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		d, err := DecodeDesign(data)
		var de *DecodeError
		var ve *ValidationError
		switch {
		case err == nil:
			again, err := json.Marshal(d, StrictJSON())
			if err != nil {
				t.Fatalf("an accepted design does not encode: %v", err)
			}
			d2, err := DecodeDesign(again)
			if err != nil {
				t.Fatalf("an encoded design does not decode: %v\n%s", err, again)
			}
			// Compared as JSON: a nil and an empty list encode alike.
			if third, _ := json.Marshal(d2, StrictJSON()); string(third) != string(again) {
				t.Fatalf("decode(encode(d)) differs:\n%s\n%s", again, third)
			}
		case errors.As(err, &de):
		case errors.As(err, &ve):
			if len(ve.Problems) == 0 {
				t.Fatal("a validation error without problems")
			}
			for _, p := range ve.Problems {
				if p.Pointer != "" && !jsontext.Pointer(p.Pointer).IsValid() {
					t.Fatalf("problem at an invalid pointer %q", p.Pointer)
				}
			}
		default:
			t.Fatalf("error of type %T: %v", err, err)
		}
	})
}
