package domain

import (
	"errors"
	"strings"
	"testing"
)

func TestProblemsCollectAndReport(t *testing.T) {
	var p Problems
	if err := p.Err(); err != nil {
		t.Fatalf("no problems gave %v", err)
	}
	p.Add("/a", "is %d too big", 3)
	p.CheckText("/b", "", 10, true)
	p.CheckText("/c", "", 10, false)            // optional and empty: fine
	p.CheckRange("/d", 5, 0, 10, "V")           // inside
	p.CheckOptionalRange("/e", nil, 0, 10, "A") // absent: fine
	if p.Len() != 2 {
		t.Fatalf("Len %d, want 2", p.Len())
	}
	err := p.Err()
	var ve *ValidationError
	if !errors.As(err, &ve) || len(ve.Problems) != 2 {
		t.Fatalf("Err() = %#v, want a ValidationError with two problems", err)
	}
	if got, want := err.Error(), "invalid input: /a: is 3 too big; /b: is required"; got != want {
		t.Errorf("Error() = %q, want %q", got, want)
	}
}

func TestCheckRangeBounds(t *testing.T) {
	for _, tt := range []struct {
		v    float64
		fail bool
	}{{0, false}, {10, false}, {-0.0001, true}, {10.0001, true}} {
		var p Problems
		p.CheckRange("/x", tt.v, 0, 10, "V")
		if (p.Len() > 0) != tt.fail {
			t.Errorf("CheckRange(%g in [0,10]) problems %d, want failure %t", tt.v, p.Len(), tt.fail)
		}
	}
	var p Problems
	p.CheckRange("/x", 11, 0, 10, "V")
	if err := p.Err(); !strings.Contains(err.Error(), "between 0 and 10 V") {
		t.Errorf("range message %q does not state the range and unit", err)
	}
}

func TestDecodeErrorMessage(t *testing.T) {
	if got := (&DecodeError{Offset: 12, Reason: "bad"}).Error(); got != "malformed JSON at byte 12: bad" {
		t.Errorf("with offset: %q", got)
	}
	if got := (&DecodeError{Reason: "empty"}).Error(); got != "malformed JSON: empty" {
		t.Errorf("without offset: %q", got)
	}
}
