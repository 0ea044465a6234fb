package main

import (
	"context"
	"fmt"
	"io"
	"net/http"
	"net/url"
	"strings"

	"wattshelf/api/client"
)

// loadClient is one simulated client: it sends its requests one after
// another over the shared keep-alive transport. Every request is built by
// the generated constructors of api/client; the harness only adds the
// token and reads (or drains) the answer itself, since the generated
// response parsers would decode every report it does not need.
type loadClient struct {
	http  *http.Client
	base  string
	token string
	id    int
}

// do sends req, made by a generated constructor, with the client's token.
func (c *loadClient) do(ctx context.Context, req *http.Request, buildErr error) (*http.Response, error) {
	if buildErr != nil {
		return nil, fmt.Errorf("build request: %w", buildErr)
	}
	req = req.WithContext(ctx)
	if c.token != "" {
		req.Header.Set("Authorization", "Bearer "+c.token)
	}
	return c.http.Do(req)
}

// expect sends req and reads its answer to the end without keeping it:
// a route that needs nothing from the body should not spend the CPU the
// server shares with it on decoding or copying it. Any status other than
// want is an error, the problem document when the answer is one.
func (c *loadClient) expect(ctx context.Context, req *http.Request, buildErr error, want int) (int, http.Header, error) {
	res, err := c.do(ctx, req, buildErr)
	if err != nil {
		return 0, nil, err
	}
	defer res.Body.Close()
	if res.StatusCode != want {
		return res.StatusCode, res.Header, unexpected(res, want)
	}
	_, err = io.Copy(io.Discard, res.Body)
	return res.StatusCode, res.Header, err
}

// unexpected reads an answer that is not the one wanted into an error:
// the typed problem document when it is one.
func unexpected(res *http.Response, want int) error {
	body, _ := io.ReadAll(io.LimitReader(res.Body, 64<<10))
	if p := client.ProblemOf(res, body); p != nil {
		return p
	}
	return fmt.Errorf("status %d, want %d: %.300s", res.StatusCode, want, body)
}

// parsed checks an answer read by a generated parser: ok says whether the
// typed body for the wanted status is there.
func parsed(res *http.Response, body []byte, ok bool) error {
	if ok {
		return nil
	}
	if p := client.ProblemOf(res, body); p != nil {
		return p
	}
	return fmt.Errorf("status %d: %.300s", res.StatusCode, body)
}

// shareIDOf reads a stored review's share id from the Location of its
// answer (/reports/{share_id}, absolute when the server knows its public
// address), so the 50 KB report need not be decoded.
func shareIDOf(h http.Header) (string, error) {
	loc := h.Get("Location")
	u, err := url.Parse(loc)
	if err != nil {
		return "", fmt.Errorf("stored review's Location %q: %w", loc, err)
	}
	share, ok := strings.CutPrefix(u.Path, "/reports/")
	if !ok || share == "" || strings.Contains(share, "/") {
		return "", fmt.Errorf("stored review's Location %q names no report", loc)
	}
	return share, nil
}
