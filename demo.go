// Package wattshelf carries the invented demo scenario in the binary, so
// `serve --demo` works wherever the program runs. It lives at the module
// root because go:embed cannot reach testdata/ from a subdirectory.
package wattshelf

import "embed"

// DemoFiles holds testdata/demo: the demo shelf and demo designs.
//
//go:embed testdata/demo
var DemoFiles embed.FS
