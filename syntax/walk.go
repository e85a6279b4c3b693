package syntax

// Pos is 0: a file covers all of its source.
func (f *File) Pos() Pos { return 0 }

// End is the length of the source.
func (f *File) End() Pos { return Pos(len(f.Src)) }

// Children returns the direct children of n in source order, skipping
// absent optional parts. Leaves (Ident, Number, NumberLit, VarRef, NameRef,
// Bad nodes, Comment) have none.
func Children(n Node) []Node {
	var c []Node
	add := func(x Node, present bool) {
		if present {
			c = append(c, x)
		}
	}
	switch n := n.(type) {
	case *File:
		for _, s := range n.Stmts {
			c = append(c, s)
		}
	case *SampleStmt:
		add(n.Value, n.Value != nil)
	case *GainStmt:
		add(n.Name, n.Name != nil)
		add(n.Value, n.Value != nil)
		// min and max in the order written
		if n.Min != nil && n.Max != nil && n.MaxKw.From < n.MinKw.From {
			c = append(c, n.Max, n.Min)
		} else {
			add(n.Min, n.Min != nil)
			add(n.Max, n.Max != nil)
		}
		add(n.Vary, n.Vary != nil)
	case *Vary:
		add(n.Lo, n.Lo != nil)
		add(n.Hi, n.Hi != nil)
	case *BlockStmt:
		add(n.Name, n.Name != nil)
		add(n.Expr, n.Expr != nil)
		add(n.Via, n.Via != nil)
	case *RealizeStmt:
		add(n.Block, n.Block != nil)
		add(n.Structure, n.Structure != nil)
		add(n.Format, n.Format != nil)
	case *Via:
		add(n.Method, n.Method != nil)
		add(n.Prewarp, n.Prewarp != nil)
	case *LoopStmt:
		add(n.Name, n.Name != nil)
		for _, it := range n.Items {
			c = append(c, it)
		}
	case *PathItem:
		c = append(c, &n.Keyword)
		for _, id := range n.Names {
			c = append(c, id)
		}
	case *SignItem:
		add(n.Value, n.Value != nil)
	case *RequireItem:
		add(n.Metric, n.Metric != nil)
		add(n.Value, n.Value != nil)
	case *Binary:
		c = append(c, n.X, n.Y)
	case *Unary:
		c = append(c, n.X)
	case *Power:
		c = append(c, n.X)
	case *Paren:
		c = append(c, n.X)
	}
	return c
}

// Walk visits n and then, if f returned true, each of its children,
// depth-first in source order (pre-order). It visits statements, loop
// items, Via clauses, Idents, Numbers and every expression node; a NameRef
// is visited as itself, not as its embedded Ident. Comments are not
// visited (they are in File.Comments).
func Walk(n Node, f func(Node) bool) {
	if n == nil || !f(n) {
		return
	}
	// Expressions, walked most often (every block, every check), go
	// without a list of children: the same order, no allocation.
	switch x := n.(type) {
	case *Binary:
		Walk(x.X, f)
		Walk(x.Y, f)
		return
	case *Unary:
		Walk(x.X, f)
		return
	case *Power:
		Walk(x.X, f)
		return
	case *Paren:
		Walk(x.X, f)
		return
	case *NameRef, *NumberLit, *VarRef, *Ident:
		return
	}
	for _, c := range Children(n) {
		Walk(c, f)
	}
}

// NodeAt returns the path of nodes containing p, from the top-level
// statement down to the innermost node. Containment is Span.Contains, so a
// cursor just after a name is still on it; where two siblings touch at p
// (the end of one is the start of the next) the later one wins. The result
// is nil when p lies in no statement.
func (f *File) NodeAt(p Pos) []Node {
	var path []Node
	kids := Children(f)
	for {
		var hit Node
		for _, c := range kids {
			if c.Pos() <= p && p <= c.End() {
				hit = c
				if p < c.End() {
					break
				}
			}
		}
		if hit == nil {
			return path
		}
		path = append(path, hit)
		kids = Children(hit)
	}
}
