package api

import (
	"go/ast"
	"go/parser"
	"go/token"
	"testing"
)

// A handler decodes, calls one use case and encodes: the handlers of the
// resources members and staff change stay at most 30 lines, so logic
// that grows goes to domain or the store, where it can be tested alone.
func TestHandlersStayThin(t *testing.T) {
	const most = 30
	fs := token.NewFileSet()
	seen := 0
	for _, name := range []string{"components.go", "designs.go", "reviews.go", "limits.go"} {
		file, err := parser.ParseFile(fs, name, nil, 0)
		if err != nil {
			t.Fatal(err)
		}
		for _, d := range file.Decls {
			fd, ok := d.(*ast.FuncDecl)
			if !ok || fd.Recv == nil || fd.Type.Params.NumFields() != 1 || fd.Type.Results.NumFields() != 1 {
				continue
			}
			if p, ok := fd.Type.Params.List[0].Type.(*ast.SelectorExpr); !ok || p.Sel.Name != "Context" {
				continue // not an echo handler: func (s *server) x(c echo.Context) error
			}
			seen++
			if n := fs.Position(fd.End()).Line - fs.Position(fd.Pos()).Line + 1; n > most {
				t.Errorf("%s: handler %s is %d lines, more than %d", name, fd.Name.Name, n, most)
			}
		}
	}
	if seen < 10 {
		t.Errorf("found only %d handlers: the test no longer recognises them", seen)
	}
}
