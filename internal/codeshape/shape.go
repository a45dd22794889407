package main

import (
	"fmt"
	"go/ast"
	"go/parser"
	"go/token"
	"io/fs"
	"path/filepath"
	"sort"
	"strings"
)

// file is one parsed non-test Go file.
type file struct {
	path  string // slash-separated, relative to the root
	dir   string
	fset  *token.FileSet
	ast   *ast.File
	lines int
}

// parseTree parses every non-test Go file below root, skipping folders whose
// name starts with ".".
func parseTree(root string) ([]file, error) {
	var out []file
	fset := token.NewFileSet()
	err := filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() {
			if p != root && strings.HasPrefix(d.Name(), ".") {
				return filepath.SkipDir
			}
			return nil
		}
		if !strings.HasSuffix(p, ".go") || strings.HasSuffix(p, "_test.go") {
			return nil
		}
		f, err := parser.ParseFile(fset, p, nil, parser.ParseComments)
		if err != nil {
			return err
		}
		rel, err := filepath.Rel(root, p)
		if err != nil {
			return err
		}
		rel = filepath.ToSlash(rel)
		out = append(out, file{path: rel, dir: pathDir(rel), fset: fset, ast: f, lines: fset.File(f.Pos()).LineCount()})
		return nil
	})
	return out, err
}

func pathDir(rel string) string {
	if i := strings.LastIndexByte(rel, '/'); i >= 0 {
		return rel[:i]
	}
	return "."
}

// function is the shape of one function or method.
type function struct {
	pkg, name, pos    string
	complexity, lines int
}

func (f function) String() string {
	return fmt.Sprintf("%s: %s.%s: cyclomatic complexity %d, %d lines", f.pos, f.pkg, f.name, f.complexity, f.lines)
}

// functions lists the shape of every function declared in fs.
func functions(fs []file) []function {
	var out []function
	for _, f := range fs {
		for _, d := range f.ast.Decls {
			fd, ok := d.(*ast.FuncDecl)
			if !ok || fd.Body == nil {
				continue
			}
			start, end := f.fset.Position(fd.Pos()), f.fset.Position(fd.End())
			out = append(out, function{
				pkg:        f.ast.Name.Name,
				name:       funcName(fd),
				pos:        fmt.Sprintf("%s:%d", f.path, start.Line),
				complexity: complexity(fd),
				lines:      end.Line - start.Line + 1,
			})
		}
	}
	return out
}

// offenders lists the functions above either limit, most complex first.
func offenders(fs []file, maxComplexity, maxLines int) []function {
	var out []function
	for _, f := range functions(fs) {
		if f.complexity > maxComplexity || f.lines > maxLines {
			out = append(out, f)
		}
	}
	sort.SliceStable(out, func(a, b int) bool { return out[a].complexity > out[b].complexity })
	return out
}

// funcName returns "Name" for a function and "(*T).Name" or "(T).Name" for a
// method.
func funcName(fd *ast.FuncDecl) string {
	if fd.Recv == nil || len(fd.Recv.List) == 0 {
		return fd.Name.Name
	}
	return "(" + typeName(fd.Recv.List[0].Type) + ")." + fd.Name.Name
}

func typeName(e ast.Expr) string {
	switch t := e.(type) {
	case *ast.StarExpr:
		return "*" + typeName(t.X)
	case *ast.Ident:
		return t.Name
	case *ast.IndexExpr:
		return typeName(t.X)
	case *ast.IndexListExpr:
		return typeName(t.X)
	}
	return "?"
}

// complexity returns the cyclomatic complexity of fd: 1 plus one for each
// decision point (if, for, range, non-default case and comm clause, && and ||).
func complexity(fd *ast.FuncDecl) int {
	c := 1
	ast.Inspect(fd, func(n ast.Node) bool {
		switch n := n.(type) {
		case *ast.IfStmt, *ast.ForStmt, *ast.RangeStmt:
			c++
		case *ast.CaseClause:
			if n.List != nil {
				c++
			}
		case *ast.CommClause:
			if n.Comm != nil {
				c++
			}
		case *ast.BinaryExpr:
			if n.Op == token.LAND || n.Op == token.LOR {
				c++
			}
		}
		return true
	})
	return c
}

// pkgStats is the size of one package folder.
type pkgStats struct {
	Dir             string
	Exported, Lines int
}

// packageStats counts, per folder, the exported top-level identifiers and
// exported methods of exported types, and the lines of the non-test files.
func packageStats(fs []file) []pkgStats {
	by := map[string]*pkgStats{}
	for _, f := range fs {
		p := by[f.dir]
		if p == nil {
			p = &pkgStats{Dir: f.dir}
			by[f.dir] = p
		}
		p.Lines += f.lines
		p.Exported += exportedNames(f.ast)
	}
	var out []pkgStats
	for _, p := range by {
		out = append(out, *p)
	}
	sort.Slice(out, func(a, b int) bool { return out[a].Dir < out[b].Dir })
	return out
}

func exportedNames(f *ast.File) int {
	n := 0
	for _, d := range f.Decls {
		switch d := d.(type) {
		case *ast.FuncDecl:
			if d.Name.IsExported() && (d.Recv == nil || ast.IsExported(strings.TrimPrefix(typeName(d.Recv.List[0].Type), "*"))) {
				n++
			}
		case *ast.GenDecl:
			for _, s := range d.Specs {
				switch s := s.(type) {
				case *ast.TypeSpec:
					if s.Name.IsExported() {
						n++
					}
				case *ast.ValueSpec:
					for _, id := range s.Names {
						if id.IsExported() {
							n++
						}
					}
				}
			}
		}
	}
	return n
}
