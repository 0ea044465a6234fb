package client

import (
	"encoding/json"
	"fmt"
	"mime"
	"net/http"
	"strings"
)

// Error makes a problem document (RFC 9457) an error: its title, detail
// and every field it names.
func (p *Problem) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s (HTTP %d)", p.Title, p.Status)
	if p.Detail != nil && *p.Detail != "" {
		b.WriteString(": " + *p.Detail)
	}
	if p.Errors != nil {
		for _, e := range *p.Errors {
			ptr := e.Pointer
			if ptr == "" {
				ptr = "(document)"
			}
			fmt.Fprintf(&b, "\n  %s: %s", ptr, e.Detail)
		}
	}
	return b.String()
}

// ProblemOf is the problem document an answer carries as a typed error,
// or nil when the answer is not one.
func ProblemOf(resp *http.Response, body []byte) *Problem {
	mt, _, err := mime.ParseMediaType(resp.Header.Get("Content-Type"))
	if err != nil || mt != "application/problem+json" {
		return nil
	}
	var p Problem
	if json.Unmarshal(body, &p) != nil || p.Type == "" {
		return nil
	}
	return &p
}
