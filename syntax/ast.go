package syntax

// The tree of a .loop file. Every node knows its byte span; a statement or
// expression the parser could not read is an explicit Bad node, so the rest
// of the file still yields a tree. Accessors may meet nil for optional parts
// (a gain without a range, a block without via).

// Node is anything with a source span.
type Node interface {
	Pos() Pos // first byte
	End() Pos // one past the last byte
}

// File is a parsed .loop file.
type File struct {
	Name     string
	Src      []byte
	Lines    *Lines
	Stmts    []Stmt
	Comments []*Comment
}

// Comment is one '#' comment, from '#' to the end of the line (the newline
// not included).
type Comment struct {
	Span
	Text string // including the leading '#'
}

// Ident is a name as written.
type Ident struct {
	Span
	Name string
}

// Number is a literal number with an optional unit, e.g. "-1.5e-3", "40 ms",
// "3 Hz", "6 dB". Neg is set when a leading minus was written; Value already
// includes it. Unit is "" when absent; its spelling is kept ("µs" and "us"
// are both "us" in UnitCanon).
type Number struct {
	Span
	Value    float64
	Text     string // the digits as written, without sign or unit
	Neg      bool
	Unit     string // as written: "ms", "µs", "rad/s", "%", ...
	UnitSpan Span
}

// String is the number as written: sign, digits and unit ("-2.5 ms"),
// for messages that must quote the user's value, not a reformatting.
func (n *Number) String() string {
	s := n.Text
	if n.Neg {
		s = "-" + s
	}
	if n.Unit != "" {
		s += " " + n.Unit
	}
	return s
}

// UnitCanon returns the unit in canonical spelling ("µs" and "μs" become
// "us"), or "" when there is none.
func (n *Number) UnitCanon() string {
	switch n.Unit {
	case "µs", "μs":
		return "us"
	}
	return n.Unit
}

func (s Span) Pos() Pos { return s.From }
func (s Span) End() Pos { return s.To }

// ---- statements ----

// Stmt is a top-level statement.
type Stmt interface {
	Node
	stmtNode()
}

// SampleStmt: "sample 1 ms" or "sample 10 kHz".
type SampleStmt struct {
	Span
	Value *Number
}

// UseStmt: use "path".
type UseStmt struct {
	Span
	Path     string // unquoted
	PathSpan Span   // including the quotes
}

// GainStmt: "gain kp = 0.8", optionally followed by "min X" and/or "max X",
// or by "vary A to B" (an uncertain gain; never together with min/max).
type GainStmt struct {
	Span
	Name     *Ident
	Value    *Number
	Min, Max *Number // nil when not given
	MinKw    Span    // span of the "min" keyword when Min != nil
	MaxKw    Span    // span of the "max" keyword when Max != nil
	Vary     *Vary   // nil when not given
}

// Vary is "vary A to B": every value from A to B may occur.
type Vary struct {
	Span           // from "vary" to the end of B
	Lo, Hi *Number // A and B
	ToKw   Span    // span of the "to" keyword
}

// BlockStmt: "block name = expr [via method [prewarp F unit]]".
type BlockStmt struct {
	Span
	Name *Ident
	Expr Expr
	Via  *Via // nil when absent
}

// Via is a discretization clause.
type Via struct {
	Span
	Method  *Ident  // zoh, foh, tustin, matched (checked by analysis)
	Prewarp *Number // nil unless "prewarp F Hz" was written
}

// LoopStmt: "loop name { items }".
type LoopStmt struct {
	Span
	Name   *Ident
	LBrace Pos
	RBrace Pos // NoPos when the closing brace is missing
	Items  []LoopItem
}

// RealizeStmt: "realize BLOCK as STRUCTURE in FORMAT", how a block runs on
// the target. The structure and format are kept as written (analysis says
// which exist); Format may be two tokens written together ("q3" ".12").
type RealizeStmt struct {
	Span
	Block     *Ident
	AsKw      Span
	Structure *Ident
	InKw      Span
	Format    *Ident
}

// BadStmt covers a statement that could not be parsed.
type BadStmt struct {
	Span
}

func (*SampleStmt) stmtNode()  {}
func (*UseStmt) stmtNode()     {}
func (*GainStmt) stmtNode()    {}
func (*BlockStmt) stmtNode()   {}
func (*LoopStmt) stmtNode()    {}
func (*RealizeStmt) stmtNode() {}
func (*BadStmt) stmtNode()     {}

// ---- loop items ----

// LoopItem is one line inside a loop's braces.
type LoopItem interface {
	Node
	itemNode()
}

// PathItem: "forward a b c" or "feedback h".
type PathItem struct {
	Span
	Keyword Ident // "forward" or "feedback"
	Names   []*Ident
}

// SignItem: "sign negative" or "sign positive".
type SignItem struct {
	Span
	Value *Ident
}

// RequireItem: "require metric >= value [unit]".
type RequireItem struct {
	Span
	Metric *Ident
	Op     string // ">=" or "<="
	OpSpan Span
	Value  *Number
}

// BadItem covers a loop line that could not be parsed.
type BadItem struct {
	Span
}

func (*PathItem) itemNode()    {}
func (*SignItem) itemNode()    {}
func (*RequireItem) itemNode() {}
func (*BadItem) itemNode()     {}

// ---- expressions ----

// Expr is a rational-function expression.
type Expr interface {
	Node
	exprNode()
}

// NumberLit is a plain number inside an expression (never signed: a minus is
// a Unary).
type NumberLit struct {
	Span
	Value float64
	Text  string
}

// VarRef is the transform variable "s" or "z".
type VarRef struct {
	Span
	Name string // "s" or "z"
}

// NameRef is a gain or block name.
type NameRef struct {
	Ident
}

// Binary is X op Y. Op is one of "+", "-", "*", "/"; Juxtaposed is true for
// two factors written side by side ("9s", "2(z - 1)"), which multiply.
type Binary struct {
	Span
	Op         string
	OpPos      Pos // NoPos when Juxtaposed
	Juxtaposed bool
	X, Y       Expr
}

// Unary is -X or +X.
type Unary struct {
	Span
	Op string
	X  Expr
}

// Power is X^Exp with an integer exponent (negative allowed).
type Power struct {
	Span
	X       Expr
	Exp     int
	ExpSpan Span
}

// Paren is (X).
type Paren struct {
	Span
	X Expr
}

// BadExpr covers an expression that could not be parsed.
type BadExpr struct {
	Span
}

func (*NumberLit) exprNode() {}
func (*VarRef) exprNode()    {}
func (*NameRef) exprNode()   {}
func (*Binary) exprNode()    {}
func (*Unary) exprNode()     {}
func (*Power) exprNode()     {}
func (*Paren) exprNode()     {}
func (*BadExpr) exprNode()   {}

// ---- errors ----

// Error is a syntax error with its exact span.
type Error struct {
	Span
	Msg string
}

func (e *Error) Error() string { return e.Msg }

// ErrorList collects syntax errors in source order.
type ErrorList []*Error
