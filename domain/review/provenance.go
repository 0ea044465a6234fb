package review

import (
	"fmt"
	"reflect"
	"time"
)

// MarkEdits records, in the source of every scalar limit whose value staff
// changed from previous without writing a source of their own, who
// changed it, when, and the published rule it departs from: otherwise a
// report would cite a 3 % rule for a 2 % limit. The source then opens with
// the change, which is what a report cites ("staff change by kim on
// 2026-12-02, was 3 under marine DC wiring practice"); the rest of the
// published source follows it. Table rows (conductors, chemistries,
// families) carry their own source fields and are left as staff wrote them.
func (l *Limits) MarkEdits(previous Limits, who string, when time.Time) {
	markEdits(reflect.ValueOf(l).Elem(), reflect.ValueOf(previous), who, when)
}

func markEdits(now, before reflect.Value, who string, when time.Time) {
	if now.Type() == reflect.TypeFor[Sourced]() {
		n, b := now.Addr().Interface().(*Sourced), before.Interface().(Sourced)
		if n.Value != b.Value && n.Source == b.Source {
			n.Source = fmt.Sprintf("staff change by %s on %s, was %g under %s; %s",
				who, when.UTC().Format(time.DateOnly), b.Value, cite(b.Source), b.Source)
		}
		return
	}
	if now.Kind() == reflect.Struct {
		for i := range now.NumField() {
			markEdits(now.Field(i), before.Field(i), who, when)
		}
	}
}
