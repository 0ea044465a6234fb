package web

import (
	"crypto/sha256"
	"embed"
	"encoding/hex"
	"fmt"
	"html/template"
	"io"
	"io/fs"
	"math"
	"mime"
	"os"
	"path"
	"strconv"
	"strings"
	"sync"
)

//go:embed templates/*.tmpl static/*
var files embed.FS

// views holds the parsed page templates and the static assets.
type views struct {
	kiosk, component, report, errorPage *template.Template
	assets                              map[string]asset
	// build is the digest of the running program (buildDigest), which
	// holds the templates and all the code that renders a page.
	build []byte
}

type asset struct {
	body        []byte
	contentType string
	etag        string
}

func newViews() (*views, error) {
	base, err := template.New("base").Funcs(template.FuncMap{
		"num":      formatNumber,
		"status":   statusOf,
		"pct":      func(share float64) string { return formatNumber(share*100) + " %" },
		"deref":    func(p *float64) float64 { return *p },
		"plotArgs": func(i int, p dischargePlot) plotArgs { return plotArgs{Index: i, Plot: p} },
	}).ParseFS(files, "templates/base.tmpl")
	if err != nil {
		return nil, fmt.Errorf("parse base template: %w", err)
	}
	page := func(name string) (*template.Template, error) {
		t, err := template.Must(base.Clone()).ParseFS(files, "templates/"+name+".tmpl")
		if err != nil {
			return nil, fmt.Errorf("parse %s template: %w", name, err)
		}
		return t, nil
	}
	v := &views{assets: map[string]asset{}}
	for name, dst := range map[string]**template.Template{
		"kiosk": &v.kiosk, "component": &v.component, "report": &v.report, "error": &v.errorPage,
	} {
		if *dst, err = page(name); err != nil {
			return nil, err
		}
	}
	if v.build, err = buildDigest(); err != nil {
		return nil, err
	}
	entries, err := fs.ReadDir(files, "static")
	if err != nil {
		return nil, fmt.Errorf("list static files: %w", err)
	}
	for _, e := range entries {
		body, err := fs.ReadFile(files, "static/"+e.Name())
		if err != nil {
			return nil, fmt.Errorf("read static file %s: %w", e.Name(), err)
		}
		sum := sha256.Sum256(body)
		ct := mime.TypeByExtension(path.Ext(e.Name()))
		if ct == "" {
			ct = "application/octet-stream"
		}
		v.assets[e.Name()] = asset{body: body, contentType: ct, etag: `"` + hex.EncodeToString(sum[:8]) + `"`}
	}
	return v, nil
}

// buildDigest is the SHA-256 of the running program, read once: it holds
// the templates and every line of code that renders a page, so a report
// page's ETag that covers it changes with any build that could render the
// page otherwise, and no version needs bumping by hand. Reading a 30 MB
// program takes some tens of milliseconds, once per process.
var buildDigest = sync.OnceValues(func() ([]byte, error) {
	// On Linux /proc/self/exe is the file running, even when a new build
	// has replaced it on disk since.
	path := "/proc/self/exe"
	if _, err := os.Stat(path); err != nil {
		if path, err = os.Executable(); err != nil {
			return nil, fmt.Errorf("find the running program: %w", err)
		}
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("read the running program: %w", err)
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return nil, fmt.Errorf("read the running program: %w", err)
	}
	return h.Sum(nil), nil
})

func (v *views) renderKiosk(w io.Writer, page kioskPage) error {
	return v.kiosk.ExecuteTemplate(w, "page", page)
}

func (v *views) renderComponent(w io.Writer, page componentPage) error {
	return v.component.ExecuteTemplate(w, "page", page)
}

func (v *views) renderError(w io.Writer, page errorView) error {
	return v.errorPage.ExecuteTemplate(w, "page", page)
}

// plotArgs hands a plot and its position on the page to its template, so
// each plot's title id is unique.
type plotArgs struct {
	Index int
	Plot  dischargePlot
}

// errorView is an HTML error page.
type errorView struct {
	Status  int
	Title   string
	Message string
}

// statusLook is how a status is shown: a word, a symbol and a colour class,
// so no reader depends on colour alone.
type statusLook struct {
	Key    string // CSS class suffix and symbol id
	Word   string
	Symbol string // id of the symbol in the page's sprite
}

// statusOf maps a review status, or a component condition, to its look.
// Conditions have keys and symbols of their own, none of a review's.
func statusOf(s string) statusLook {
	switch s {
	case "pass":
		return statusLook{"pass", "Pass", "sym-pass"}
	case "warn":
		return statusLook{"warn", "Warning", "sym-warn"}
	case "fail":
		return statusLook{"fail", "Fail", "sym-fail"}
	case "out_of_scope":
		return statusLook{"scope", "Out of scope", "sym-scope"}
	case "working":
		return statusLook{"working", "Working", "sym-cond-working"}
	case "faulty":
		return statusLook{"faulty", "Faulty", "sym-cond-faulty"}
	case "untested":
		return statusLook{"untested", "Untested", "sym-cond-untested"}
	}
	return statusLook{"none", "Not checked", "sym-none"}
}

// formatNumber shows a value to three significant figures without an
// exponent: 0.0815, 1.32, 14.4, 14800.
func formatNumber(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "—"
	}
	if x == 0 {
		return "0"
	}
	digits := 2 - int(math.Floor(math.Log10(math.Abs(x))))
	if digits < 0 {
		p := math.Pow(10, float64(-digits))
		return strconv.FormatFloat(math.Round(x/p)*p, 'f', 0, 64)
	}
	s := strconv.FormatFloat(x, 'f', digits, 64)
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	return s
}
