package api

import (
	"context"
	"encoding/base64"
	"encoding/json"
	"io"
	"log/slog"
	"net/http"
	"net/url"
	"strings"
	"testing"

	"github.com/prometheus/client_golang/prometheus"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

// TestCraftedCursorsAreRefused sends cursors a client made up rather than
// was given: the shapes the service issued before cursors were signed, one
// carrying a NUL byte (PostgreSQL refuses NUL in text, SQLSTATE 22021, per
// its documentation of character types), and issued cursors with a byte
// changed. Each is a 400 naming the cursor; none reaches the database.
func TestCraftedCursorsAreRefused(t *testing.T) {
	h := newDesignHarness(t, Config{})
	for _, name := range []string{"Amber lamp", "Blue lamp", "Cyan lamp"} {
		h.expect(h.call(http.MethodPost, "/v1/components", "ada", []byte(`{"name": "`+name+`", "kind": "light", "bin": "L1"}`)), http.StatusCreated, nil)
	}
	var shelf ShelfView
	h.expect(h.call(http.MethodGet, "/v1/shelf?limit=1", "", nil), http.StatusOK, &shelf)
	var comps ComponentPage
	h.expect(h.call(http.MethodGet, "/v1/components?limit=1", "ada", nil), http.StatusOK, &comps)
	if shelf.Next == "" || comps.Next == "" {
		t.Fatalf("no cursors issued: shelf %q, components %q", shelf.Next, comps.Next)
	}
	b64 := base64.RawURLEncoding.EncodeToString
	tests := []struct{ name, path string }{
		{"shelf cursor with a NUL", "/v1/shelf?cursor=" + b64([]byte(`{"b":"L1\u0000","n":"x","i":1}`))},
		{"shelf cursor with a NUL in the name", "/v1/shelf?cursor=" + b64([]byte(`{"b":"L1","n":"\u0000","i":1}`))},
		{"unsigned shelf cursor", "/v1/shelf?cursor=" + b64([]byte(`{"b":"L1","n":"Amber lamp","i":1}`))},
		{"unsigned id cursor", "/v1/components?cursor=" + b64([]byte("after:1"))},
		{"unsigned design cursor", "/v1/designs?cursor=" + b64([]byte("after:1"))},
		{"shelf cursor with its payload changed", "/v1/shelf?cursor=" + url.QueryEscape(tamper(shelf.Next))},
		{"id cursor with its payload changed", "/v1/components?cursor=" + url.QueryEscape(tamper(comps.Next))},
		{"id cursor used on the shelf", "/v1/shelf?cursor=" + url.QueryEscape(comps.Next)},
		{"shelf cursor used on components", "/v1/components?cursor=" + url.QueryEscape(shelf.Next)},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			rec := h.call(http.MethodGet, tt.path, "ada", nil)
			var p Problem
			if err := json.Unmarshal(rec.Body.Bytes(), &p); err != nil || rec.Code != http.StatusBadRequest {
				t.Fatalf("status %d, want 400: %s", rec.Code, rec.Body)
			}
			if p.Type != ProblemTypePrefix+"bad-query" || len(p.Errors) != 1 || p.Errors[0].Pointer != "/cursor" {
				t.Errorf("problem %+v, want bad-query at /cursor", p)
			}
		})
	}
}

// tamper changes the first character of a cursor's payload.
func tamper(cursor string) string {
	swap := byte('A')
	if cursor[0] == 'A' {
		swap = 'B'
	}
	return string(swap) + cursor[1:]
}

// TestCursorsWorkAcrossReplicas follows a cursor that one router issued
// through another router on the same database: the key lives in the
// database, so replicas sign alike.
func TestCursorsWorkAcrossReplicas(t *testing.T) {
	h := newDesignHarness(t, Config{})
	for _, name := range []string{"Amber lamp", "Blue lamp"} {
		h.expect(h.call(http.MethodPost, "/v1/components", "ada", []byte(`{"name": "`+name+`", "kind": "light", "bin": "L1"}`)), http.StatusCreated, nil)
	}
	other, err := store.Open(context.Background(), h.dbURL)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(other.Close)
	replica := &designHarness{t: t, store: other, tokens: h.tokens}
	if replica.router, err = New(Config{Store: other, Logger: slog.New(slog.NewTextHandler(io.Discard, nil)),
		Registry: prometheus.NewRegistry()}); err != nil {
		t.Fatal(err)
	}
	var first, second ShelfView
	h.expect(h.call(http.MethodGet, "/v1/shelf?limit=1", "", nil), http.StatusOK, &first)
	replica.expect(replica.call(http.MethodGet, "/v1/shelf?limit=1&cursor="+url.QueryEscape(first.Next), "", nil), http.StatusOK, &second)
	if len(first.Items) != 1 || len(second.Items) != 1 || first.Items[0].Name != "Amber lamp" || second.Items[0].Name != "Blue lamp" {
		t.Errorf("pages %+v then %+v, want Amber lamp then Blue lamp", first.Items, second.Items)
	}
	var comps ComponentPage
	h.expect(h.call(http.MethodGet, "/v1/components?limit=1", "ada", nil), http.StatusOK, &comps)
	replica.expect(replica.call(http.MethodGet, "/v1/components?limit=1&cursor="+url.QueryEscape(comps.Next), "ada", nil), http.StatusOK, nil)
}

// TestSignedShelfCursorIsStillValidated signs payloads with the codec's
// own key, as a leaked key would let anyone do: whatever a stored
// component's bin and name cannot be is still refused.
func TestSignedShelfCursorIsStillValidated(t *testing.T) {
	cc := cursorCodec{key: []byte("test key, not a secret")}
	long := strings.Repeat("x", domain.MaxNameLen+1)
	tests := []struct {
		name    string
		payload string
		ok      bool
	}{
		{"an issued shape", `{"b":"L1","n":"Amber lamp","i":7}`, true},
		{"NUL in the bin", `{"b":"L\u0000","n":"Amber lamp","i":7}`, false},
		{"NUL in the name", `{"b":"L1","n":"A\u0000","i":7}`, false},
		{"invalid UTF-8", "{\"b\":\"L1\",\"n\":\"\xff\",\"i\":7}", false},
		{"name too long", `{"b":"L1","n":"` + long + `","i":7}`, false},
		{"bin too long", `{"b":"` + strings.Repeat("b", domain.MaxShortFieldLen+1) + `","n":"A","i":7}`, false},
		{"empty name", `{"b":"L1","n":"","i":7}`, false},
		{"id zero", `{"b":"L1","n":"A","i":0}`, false},
		{"unknown field", `{"b":"L1","n":"A","i":7,"x":1}`, false},
		{"two objects", `{"b":"L1","n":"A","i":7}{}`, false},
		{"not an object", `[1,2]`, false},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			cur, err := cc.decodeShelf(cc.seal(cursorPurposeShelf, []byte(tt.payload)))
			if tt.ok != (err == nil) {
				t.Errorf("decode %q: %+v, %v; want ok=%v", tt.payload, cur, err, tt.ok)
			}
		})
	}
	// What the codec issues, it takes back unchanged.
	want := store.ShelfCursor{Bin: "L1", Name: "Amber lamp", ID: 7}
	if got, err := cc.decodeShelf(cc.encodeShelf(want)); err != nil || got != want {
		t.Errorf("round trip %+v: %+v, %v", want, got, err)
	}
}
