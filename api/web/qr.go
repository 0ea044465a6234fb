package web

import (
	"fmt"
	"strconv"
	"strings"

	qrcode "github.com/skip2/go-qrcode"
)

// QR codes use the medium error-correction level: a phone still reads a
// code behind a scuffed or glare-struck kiosk screen, and a page address
// stays a small symbol.
const qrLevel = qrcode.Medium

// qrSVG draws the code as one path of unit squares, four modules of quiet
// zone included (ISO/IEC 18004 asks for four), with crisp edges so a
// scaled-down code stays readable.
func qrSVG(content string) ([]byte, error) {
	code, err := qrcode.New(content, qrLevel)
	if err != nil {
		return nil, fmt.Errorf("encode qr code: %w", err)
	}
	bits := code.Bitmap()
	n := len(bits)
	var d strings.Builder
	for y, row := range bits {
		for x := 0; x < len(row); x++ {
			if !row[x] {
				continue
			}
			start := x
			for x < len(row) && row[x] {
				x++
			}
			fmt.Fprintf(&d, "M%d %dh%dv1h-%dz", start, y, x-start, x-start)
		}
	}
	size := strconv.Itoa(n)
	svg := `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ` + size + ` ` + size +
		`" shape-rendering="crispEdges"><rect width="` + size + `" height="` + size +
		`" fill="#fff"/><path fill="#000" d="` + d.String() + `"/></svg>`
	return []byte(svg), nil
}

// qrPNG renders the code with each module moduleSize pixels wide.
func qrPNG(content string, moduleSize int) ([]byte, error) {
	body, err := qrcode.Encode(content, qrLevel, -moduleSize)
	if err != nil {
		return nil, fmt.Errorf("encode qr code: %w", err)
	}
	return body, nil
}
