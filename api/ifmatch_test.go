package api

import (
	"bytes"
	"fmt"
	"net/http"
	"net/http/httptest"
	"slices"
	"testing"

	"wattshelf/domain"
)

// TestParseIfMatch holds the parser to RFC 9110: If-Match is "*" or a
// comma-separated list of entity tags (sections 8.8.3 and 13.1.1), empty
// list elements are allowed (section 5.6.1), and a weak tag never takes
// part in the strong comparison a write needs (section 8.8.3.2).
func TestParseIfMatch(t *testing.T) {
	tests := []struct {
		field    string
		any      bool
		versions []int64
		bad      bool
	}{
		{field: `*`, any: true},
		{field: ` * `, any: true},
		{field: `"3"`, versions: []int64{3}},
		{field: `"3", "5"`, versions: []int64{3, 5}},
		{field: `"3","5" ,, "8"`, versions: []int64{3, 5, 8}},
		{field: `W/"3"`},
		{field: `W/"3", "5"`, versions: []int64{5}},
		{field: `"abc", "4"`, versions: []int64{4}},
		{field: `"a,b", "4"`, versions: []int64{4}}, // a comma may sit inside a tag
		{field: `"03"`},                             // not how this service writes version 3
		{field: `"-3"`},                             // no version is negative
		{field: `"0"`},                              // versions start at 1
		{field: `""`},                               // an empty tag is a tag, of no record here
		{field: `w/"3"`, bad: true},                 // the weak prefix is case-sensitive
		{field: `3`, bad: true},
		{field: `"3`, bad: true},
		{field: `"3" "4"`, bad: true},
		{field: `*, "3"`, bad: true},
		{field: `,`, bad: true},
	}
	for _, tt := range tests {
		t.Run(tt.field, func(t *testing.T) {
			got, err := parseIfMatch(tt.field)
			if (err != nil) != tt.bad {
				t.Fatalf("error %v, want bad=%v", err, tt.bad)
			}
			if got.any != tt.any || !slices.Equal(got.versions, tt.versions) {
				t.Errorf("got %+v, want any=%v versions=%v", got, tt.any, tt.versions)
			}
		})
	}
}

// TestIfMatchOnWrites sends If-Match fields to a component's PUT and
// DELETE and a design's PUT, with the record at version 1: a weak tag
// never matches a write, a list matches if any strong tag in it does, and
// several If-Match lines are one list (RFC 9110 section 5.3).
func TestIfMatchOnWrites(t *testing.T) {
	h := newDesignHarness(t, Config{})
	var d struct{ ID int64 }
	h.expect(h.call(http.MethodPost, "/v1/designs", "ada", []byte(benchLampDesign)), http.StatusCreated, &d)
	designPath := fmt.Sprintf("/v1/designs/%d", d.ID)
	newComponent := func() string {
		var c domain.Component
		h.expect(h.call(http.MethodPost, "/v1/components", "ada", []byte(`{"name": "Tagged lamp", "kind": "light"}`)), http.StatusCreated, &c)
		return fmt.Sprintf("/v1/components/%d", c.ID)
	}
	replacement := []byte(`{"name": "Tagged lamp", "kind": "light", "quantity": 2}`)
	tests := []struct {
		name   string
		lines  []string
		status int
	}{
		{"the current strong tag", []string{`"1"`}, 200},
		{"the current tag, weak", []string{`W/"1"`}, 412},
		{"a stale tag", []string{`"2"`}, 412},
		{"a list holding the current tag", []string{`"7", "1"`}, 200},
		{"a list holding it only weak", []string{`"7", W/"1"`}, 412},
		{"a list of stale tags", []string{`"7", "9"`}, 412},
		{"a list over two lines", []string{`"7"`, `"1"`}, 200},
		{"any current record", []string{`*`}, 200},
		{"a star in a list", []string{`*, "1"`}, 412},
		{"no quotes", []string{`1`}, 412},
		{"empty", []string{``}, 428},
	}
	send := func(method, path string, body []byte, lines []string) *httptest.ResponseRecorder {
		req := httptest.NewRequest(method, path, bytes.NewReader(body))
		req.Header.Set("Content-Type", "application/json")
		req.Header.Set("Authorization", "Bearer "+h.tokens["ada"])
		for _, l := range lines {
			req.Header.Add("If-Match", l)
		}
		rec := httptest.NewRecorder()
		h.router.ServeHTTP(rec, req)
		return rec
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if rec := send(http.MethodPut, newComponent(), replacement, tt.lines); rec.Code != tt.status {
				t.Errorf("PUT component: %d, want %d (%s)", rec.Code, tt.status, rec.Body)
			}
			wantDelete := tt.status
			switch wantDelete {
			case 200:
				wantDelete = 204
			case 428:
				wantDelete = 204 // a delete needs no If-Match
			}
			if rec := send(http.MethodDelete, newComponent(), nil, tt.lines); rec.Code != wantDelete {
				t.Errorf("DELETE component: %d, want %d (%s)", rec.Code, wantDelete, rec.Body)
			}
			// The design is only changed by the tags that match, so it
			// stays at version 1 until the first success.
			if tt.status != 200 {
				if rec := send(http.MethodPut, designPath, []byte(benchLampDesign), tt.lines); rec.Code != tt.status {
					t.Errorf("PUT design: %d, want %d (%s)", rec.Code, tt.status, rec.Body)
				}
			}
		})
	}
}
