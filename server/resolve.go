package server

import (
	"ringside/analysis"
	"ringside/syntax"
)

// A target is the named thing under the cursor.
type target struct {
	name  string
	span  syntax.Span    // of the identifier under the cursor
	decl  *analysis.Decl // gain or block (own or used); nil for a loop
	loop  *analysis.Loop // loop declared here (nil in quick results)
	lstmt *syntax.LoopStmt
}

// resolveAt finds the gain, block or loop name at byte offset pos of the
// result's own file: a declaration, a use in an expression, or a name in a
// forward/feedback path. Keywords, numbers, comments and blank space have
// no target.
func resolveAt(res *analysis.Result, pos syntax.Pos) *target {
	if res == nil || res.File == nil {
		return nil
	}
	path := res.File.NodeAt(pos)
	if len(path) == 0 {
		return nil
	}
	inner := path[len(path)-1]
	switch n := inner.(type) {
	case *syntax.NameRef:
		return declTarget(res, n.Name, n.Span)
	case *syntax.Ident:
		if len(path) < 2 {
			return nil
		}
		switch p := path[len(path)-2].(type) {
		case *syntax.GainStmt:
			if p.Name == n {
				return declTarget(res, n.Name, n.Span)
			}
		case *syntax.BlockStmt:
			if p.Name == n {
				return declTarget(res, n.Name, n.Span)
			}
		case *syntax.PathItem:
			if &p.Keyword != n {
				return declTarget(res, n.Name, n.Span)
			}
		case *syntax.LoopStmt:
			if p.Name == n {
				t := &target{name: n.Name, span: n.Span, lstmt: p}
				for _, l := range res.Loops {
					if l.Stmt == p {
						t.loop = l
					}
				}
				return t
			}
		}
	}
	return nil
}

func declTarget(res *analysis.Result, name string, span syntax.Span) *target {
	d := res.Scope[name]
	if d == nil {
		return nil
	}
	return &target{name: name, span: span, decl: d}
}

// refsTo returns the spans in file f that name decl: its declaration (when
// f is the declaring file) and every use, as resolved by scope (the scope
// of the result that f belongs to).
func refsTo(f *syntax.File, scope map[string]*analysis.Decl, decl *analysis.Decl, includeDecl bool) []syntax.Span {
	same := func(name string) bool {
		d := scope[name]
		return d != nil && d.Path == decl.Path && d.Ident.From == decl.Ident.From
	}
	var out []syntax.Span
	syntax.Walk(f, func(n syntax.Node) bool {
		switch n := n.(type) {
		case *syntax.GainStmt:
			if includeDecl && n.Name != nil && n.Name.Name == decl.Name && f.Name == decl.Path && n.Name.From == decl.Ident.From {
				out = append(out, n.Name.Span)
			}
			return false
		case *syntax.BlockStmt:
			if includeDecl && n.Name != nil && n.Name.Name == decl.Name && f.Name == decl.Path && n.Name.From == decl.Ident.From {
				out = append(out, n.Name.Span)
			}
			if n.Expr != nil {
				syntax.Walk(n.Expr, func(e syntax.Node) bool {
					if r, ok := e.(*syntax.NameRef); ok && r.Name == decl.Name && same(r.Name) {
						out = append(out, r.Span)
					}
					return true
				})
			}
			return false
		case *syntax.PathItem:
			for _, id := range n.Names {
				if id.Name == decl.Name && same(id.Name) {
					out = append(out, id.Span)
				}
			}
			return false
		case *syntax.RealizeStmt:
			if n.Block != nil && n.Block.Name == decl.Name && same(n.Block.Name) {
				out = append(out, n.Block.Span)
			}
			return false
		}
		return true
	})
	return out
}
