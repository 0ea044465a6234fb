package api

import (
	"bytes"
	"errors"
	"mime"
	"net/http"
	"strconv"

	"github.com/go-json-experiment/json"
	"github.com/go-json-experiment/json/jsontext"
	"github.com/labstack/echo/v4"

	"wattshelf/domain"
)

// readBody reads the whole request body; the body-limit middleware turns
// an oversized one into 413 before this returns.
func readBody(c echo.Context) ([]byte, error) {
	if !isJSON(c.Request().Header.Get(echo.HeaderContentType)) {
		return nil, echo.ErrUnsupportedMediaType
	}
	req := c.Request()
	var buf bytes.Buffer
	// A body that says its length is read into one buffer of that size
	// (bytes.MinRead beyond it, for the read that finds the end) instead
	// of one grown step by step; the body-limit middleware still stops
	// one that sends more than it said.
	if n := req.ContentLength; n > 0 && n <= MaxBodyBytes {
		buf.Grow(int(n) + bytes.MinRead)
	}
	_, err := buf.ReadFrom(req.Body)
	body := buf.Bytes()
	if err != nil {
		var he *echo.HTTPError
		if errors.As(err, &he) {
			return nil, he
		}
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return nil, echo.ErrStatusRequestEntityTooLarge
		}
		// Any other failure is the client's: it stopped sending, or sent so
		// slowly that the server's read timeout ran out. Left as a network
		// error it would be mistaken for the database being unreachable.
		return nil, &domain.DecodeError{Reason: "the request body did not arrive whole in time"}
	}
	return body, nil
}

// isJSON tells whether a Content-Type names JSON: application/json, or
// a merge patch (RFC 7386), with any parameters (a charset).
func isJSON(contentType string) bool {
	mt, _, err := mime.ParseMediaType(contentType)
	return err == nil && (mt == echo.MIMEApplicationJSON || mt == "application/merge-patch+json")
}

// bindStrict reads and strictly decodes the request body into v: broken
// JSON is a *domain.DecodeError (400), JSON that does not fit v a
// *domain.ValidationError (422) naming the member by JSON pointer.
func bindStrict(c echo.Context, v any) error {
	body, err := readBody(c)
	if err != nil {
		return err
	}
	return domain.DecodeStrict(body, v)
}

// decodeNumbers decodes one JSON object keeping numbers as written, so a
// merge patch does not round the values it leaves alone.
func decodeNumbers(body []byte, v *map[string]any) error {
	keep := json.WithUnmarshalers(json.UnmarshalFromFunc(func(dec *jsontext.Decoder, v *any) error {
		if dec.PeekKind() != '0' {
			return errors.ErrUnsupported // not a number: decode it as usual
		}
		num, err := dec.ReadValue()
		*v = num.Clone()
		return err
	}))
	if len(bytes.TrimSpace(body)) == 0 {
		return &domain.DecodeError{Reason: "the body is empty; send a JSON object"}
	}
	return domain.DecodeStrict(body, v, keep)
}

// jsonSerializer is echo's JSON through the one strict configuration.
type jsonSerializer struct{}

func (jsonSerializer) Serialize(c echo.Context, v any, indent string) error {
	out, err := json.Marshal(v, domain.StrictJSON())
	if err != nil {
		return err
	}
	// With its length said, a large answer (a review's report) goes out
	// as it is, not in chunks with a last one of its own to write.
	res := c.Response()
	res.Header().Set(echo.HeaderContentLength, strconv.Itoa(len(out)+1))
	_, err = res.Write(append(out, '\n'))
	return err
}

func (jsonSerializer) Deserialize(c echo.Context, v any) error {
	return bindStrict(c, v)
}

// encodeJSON encodes v through the one strict configuration.
func encodeJSON(v any) ([]byte, error) { return json.Marshal(v, domain.StrictJSON()) }
