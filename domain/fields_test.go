package domain

import (
	"reflect"
	"testing"
)

// TestFieldAccessAgreesWithReflection sets each declared field of each
// declared struct alone, through reflection, and reads every field back
// through its precomputed offset: only the field set may read as given,
// with the number it was set to. A wrong offset or shape (an embedded
// struct moved, a field's type changed) reads another field or garbage.
func TestFieldAccessAgreesWithReflection(t *testing.T) {
	for typ, fields := range declaredFields() {
		for k, set := range fields {
			v := reflect.New(typ)
			fv := v.Elem().FieldByIndex(set.Index)
			want := float64(k) + 1.5 // a value no zero field holds
			if fv.Kind() == reflect.Pointer {
				fv.Set(reflect.New(fv.Type().Elem()))
				fv = fv.Elem()
			}
			switch fv.Kind() {
			case reflect.Float64:
				fv.SetFloat(want)
			case reflect.Int, reflect.Int64:
				want = float64(k + 1)
				fv.SetInt(int64(k + 1))
			case reflect.String:
				fv.SetString("x")
			case reflect.Bool:
				fv.SetBool(true)
			case reflect.Slice:
				fv.Set(reflect.MakeSlice(fv.Type(), k+2, k+2))
			}
			base := v.UnsafePointer()
			for j, f := range fields {
				given := f.at.given(base)
				switch {
				case j == k && !given:
					t.Errorf("%s.%s set alone does not read as given", typ.Name(), f.Name)
				case j != k && given && f.at.shape != shapePlain:
					t.Errorf("%s.%s reads as given when only %s is set", typ.Name(), f.Name, set.Name)
				}
			}
			switch {
			case set.Kind == "string":
				if got := set.at.text(base); got != "x" {
					t.Errorf("%s.%s reads %q, set to \"x\"", typ.Name(), set.Name, got)
				}
			case set.Kind == "number" || set.Kind == "integer":
				if got := set.at.number(base); got != want {
					t.Errorf("%s.%s reads %g, set to %g", typ.Name(), set.Name, got, want)
				}
			case set.Kind == "array":
				if got := set.at.items(base); got != k+2 {
					t.Errorf("%s.%s reads %d items, set to %d", typ.Name(), set.Name, got, k+2)
				}
			}
		}
	}
}
