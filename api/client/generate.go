// Package client is a typed Go client of the wattshelf API, generated from
// the OpenAPI document the service serves (api/openapi.yaml). The CLI's
// review command and the load harness talk to the service through it.
//
// Regenerate after changing the document: go generate ./api/client
package client

//go:generate go tool oapi-codegen -config oapi.yaml ../openapi.yaml
