package api

import (
	"crypto/hmac"
	"crypto/sha256"
	"encoding/base64"
	"errors"
	"fmt"
	"strconv"
	"strings"

	"wattshelf/domain"
	"wattshelf/domain/store"
)

// cursorCodec makes page cursors opaque and unforgeable: each carries its
// payload and an HMAC-SHA256 of it under the database's cursor key, so a
// cursor any replica issued is taken by all of them and a client can only
// send back one it was given. A decoded payload is still checked in full:
// the key could leak, and a cursor must never carry what the database
// cannot take.
type cursorCodec struct{ key []byte }

// cursorMACBytes is how much of the HMAC a cursor carries: 128 bits, as
// truncated HMACs commonly keep (RFC 2104 section 5 allows truncation to
// half the hash length).
const cursorMACBytes = 16

// Cursor purposes are signed with the payload, so a shelf cursor is never
// taken as an id cursor or the other way round.
const (
	cursorPurposeID    = "id"
	cursorPurposeShelf = "shelf"
)

func (cc cursorCodec) mac(purpose string, payload []byte) []byte {
	m := hmac.New(sha256.New, cc.key)
	m.Write([]byte(purpose))
	m.Write([]byte{0})
	m.Write(payload)
	return m.Sum(nil)[:cursorMACBytes]
}

func (cc cursorCodec) seal(purpose string, payload []byte) string {
	return base64.RawURLEncoding.EncodeToString(payload) + "." + base64.RawURLEncoding.EncodeToString(cc.mac(purpose, payload))
}

// errForgedCursor says a cursor was not issued by this service.
var errForgedCursor = errors.New("cursor signature does not match")

func (cc cursorCodec) open(purpose, s string) ([]byte, error) {
	body, sig, ok := strings.Cut(s, ".")
	if !ok {
		return nil, errForgedCursor
	}
	payload, err := base64.RawURLEncoding.DecodeString(body)
	if err != nil {
		return nil, fmt.Errorf("cursor payload: %w", err)
	}
	mac, err := base64.RawURLEncoding.DecodeString(sig)
	if err != nil {
		return nil, fmt.Errorf("cursor signature: %w", err)
	}
	if !hmac.Equal(mac, cc.mac(purpose, payload)) {
		return nil, errForgedCursor
	}
	return payload, nil
}

// encodeID is the cursor of a listing in id order, after afterID.
func (cc cursorCodec) encodeID(afterID int64) string {
	return cc.seal(cursorPurposeID, strconv.AppendInt(nil, afterID, 10))
}

func (cc cursorCodec) decodeID(s string) (int64, error) {
	payload, err := cc.open(cursorPurposeID, s)
	if err != nil {
		return 0, err
	}
	id, err := strconv.ParseInt(string(payload), 10, 64)
	if err != nil || id < 1 {
		return 0, fmt.Errorf("cursor id %q", payload)
	}
	return id, nil
}

// encodeShelf is the cursor after the last item of a shelf page.
func (cc cursorCodec) encodeShelf(cur store.ShelfCursor) string {
	raw, _ := encodeJSON(cur) // two strings and a number always encode
	return cc.seal(cursorPurposeShelf, raw)
}

func (cc cursorCodec) decodeShelf(s string) (store.ShelfCursor, error) {
	var cur store.ShelfCursor
	payload, err := cc.open(cursorPurposeShelf, s)
	if err != nil {
		return cur, err
	}
	// The strict decoder refuses invalid UTF-8, unknown members and data
	// after the object.
	if err := domain.DecodeStrict(payload, &cur); err != nil {
		return cur, fmt.Errorf("shelf cursor: %w", err)
	}
	return cur, validShelfCursor(cur)
}

// validShelfCursor holds a shelf cursor to what a stored component can
// be: its bin and name are storable text within their lengths.
func validShelfCursor(cur store.ShelfCursor) error {
	switch {
	case cur.ID < 1:
		return fmt.Errorf("shelf cursor id %d", cur.ID)
	case !storableText(cur.Bin) || len(cur.Bin) > domain.MaxShortFieldLen:
		return errors.New("shelf cursor bin is not a bin")
	case !storableText(cur.Name) || len(cur.Name) > domain.MaxNameLen || cur.Name == "":
		return errors.New("shelf cursor name is not a name")
	}
	return nil
}
