package api

import (
	"embed"
	"fmt"
	"net/http"

	"github.com/labstack/echo/v4"
)

// openAPIFiles holds the OpenAPI document; openapi_test.go checks real
// responses against it, so it cannot drift from the code unnoticed.
//
//go:embed openapi.yaml
var openAPIFiles embed.FS

// OpenAPIDocument returns the embedded OpenAPI 3 document.
func OpenAPIDocument() ([]byte, error) {
	doc, err := openAPIFiles.ReadFile("openapi.yaml")
	if err != nil {
		return nil, fmt.Errorf("read embedded OpenAPI document: %w", err)
	}
	return doc, nil
}

func serveOpenAPI(c echo.Context) error {
	doc, err := OpenAPIDocument()
	if err != nil {
		return err
	}
	c.Response().Header().Set("Cache-Control", "no-cache")
	return c.Blob(http.StatusOK, "application/yaml", doc)
}
