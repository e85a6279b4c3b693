package syntax

import (
	"fmt"
	"strings"
)

// dump renders the meaning of a file: statements and expression trees
// without spans and without Paren nodes, plus the comment texts. Two files
// with equal dumps mean the same thing.
func dump(f *File) string {
	var b strings.Builder
	for _, s := range f.Stmts {
		b.WriteString(dumpStmt(s))
		b.WriteByte('\n')
	}
	for _, c := range f.Comments {
		fmt.Fprintf(&b, "comment %q\n", strings.TrimRight(c.Text, " \t"))
	}
	return b.String()
}

func dumpNum(n *Number) string {
	if n == nil {
		return "<nil>"
	}
	return fmt.Sprintf("%s%s[%g]%s", map[bool]string{true: "-"}[n.Neg], n.Text, n.Value, n.Unit)
}

func dumpStmt(s Stmt) string {
	switch s := s.(type) {
	case *SampleStmt:
		return "sample " + dumpNum(s.Value)
	case *UseStmt:
		return fmt.Sprintf("use %q", s.Path)
	case *GainStmt:
		v := ""
		if s.Vary != nil {
			v = fmt.Sprintf(" vary=%s..%s", dumpNum(s.Vary.Lo), dumpNum(s.Vary.Hi))
		}
		return fmt.Sprintf("gain %s %s min=%s max=%s%s", s.Name.Name, dumpNum(s.Value), dumpNum(s.Min), dumpNum(s.Max), v)
	case *BlockStmt:
		v := ""
		if s.Via != nil {
			v = " via " + s.Via.Method.Name
			if s.Via.Prewarp != nil {
				v += " prewarp " + dumpNum(s.Via.Prewarp)
			}
		}
		return "block " + s.Name.Name + " " + dumpExpr(s.Expr) + v
	case *LoopStmt:
		var items []string
		for _, it := range s.Items {
			items = append(items, dumpItem(it))
		}
		return fmt.Sprintf("loop %s {%s} closed=%v", s.Name.Name, strings.Join(items, "; "), s.RBrace != NoPos)
	case *RealizeStmt:
		return "realize " + s.Block.Name + " as " + s.Structure.Name + " in " + s.Format.Name
	case *BadStmt:
		return "bad"
	}
	return fmt.Sprintf("?%T", s)
}

func dumpItem(it LoopItem) string {
	switch it := it.(type) {
	case *PathItem:
		var n []string
		for _, id := range it.Names {
			n = append(n, id.Name)
		}
		return it.Keyword.Name + " " + strings.Join(n, " ")
	case *SignItem:
		return "sign " + it.Value.Name
	case *RequireItem:
		return "require " + it.Metric.Name + " " + it.Op + " " + dumpNum(it.Value)
	case *BadItem:
		return "bad"
	}
	return fmt.Sprintf("?%T", it)
}

func dumpExpr(e Expr) string {
	switch e := e.(type) {
	case *NumberLit:
		return e.Text
	case *VarRef:
		return "$" + e.Name
	case *NameRef:
		return e.Name
	case *Paren:
		return dumpExpr(e.X)
	case *Unary:
		return "(" + e.Op + "u " + dumpExpr(e.X) + ")"
	case *Power:
		return fmt.Sprintf("(^ %s %d)", dumpExpr(e.X), e.Exp)
	case *Binary:
		op := e.Op
		if e.Juxtaposed {
			op = "j*"
		}
		return "(" + op + " " + dumpExpr(e.X) + " " + dumpExpr(e.Y) + ")"
	case *BadExpr:
		return "BAD"
	}
	return fmt.Sprintf("?%T", e)
}
