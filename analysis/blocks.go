package analysis

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"ringside/analysis/discretize"
	"ringside/analysis/pole"
	"ringside/analysis/poly"
	"ringside/analysis/roots"
	"ringside/internal/par"
	"ringside/syntax"
)

// CommonRootTolerance: a numerator and denominator root closer than this
// (relative to max(1, |root|)) count as shared. Roots written identically
// agree to rounding (~1e-15); 1e-8 also catches roots of repeated factors,
// which the root finder places only to about sqrt(eps).
const CommonRootTolerance = 1e-8

// blocks evaluates every block in scope, this file's and used files'
// (transfer function, factored form, poles and zeros), and reports this
// file's per-block findings. Blocks go by level of dependency: first those
// that name no other block, side by side, then those that name only
// blocks already done, and so on; blocks in a cycle of names (reported by
// the evaluation) go one at a time at the end, in the order of the file.
// With a memo, a block whose key (blockMemoKey) is unchanged is not
// evaluated again.
func (c *checker) blocks(ev *evaluator) {
	levels, rest := c.blockLevels()
	jobs := make(map[*Decl]*blockJob, len(c.res.Scope))
	for _, level := range levels {
		done := make([]*blockJob, len(level))
		par.Each(len(level), func(i int) { done[i] = c.blockJob(ev, level[i], false) })
		for _, j := range done {
			ev.memo[j.decl.Name] = j.bv
			jobs[j.decl] = j
		}
	}
	for _, d := range rest {
		jobs[d] = c.blockJob(ev, d, true)
	}
	needSample := false
	for _, b := range c.res.Blocks {
		d := c.res.Scope[b.Name]
		if j := jobs[d]; j != nil {
			c.diags.list = append(c.diags.list, j.diags...)
		}
		if b.Var == 's' && c.res.SampleT == 0 {
			needSample = true
		}
	}
	if needSample || (c.res.SampleT == 0 && len(c.loopStmts()) > 0) {
		c.noSample()
	}
}

// blockJob is one block's evaluation and findings, with what they reported
// (the findings of a used file's block are that file's own, and dropped).
type blockJob struct {
	decl  *Decl
	bv    *blockValue
	diags []Diagnostic
}

// blockJob evaluates d, fills in its Block and finds what to report. The
// blocks d names are already in ev; alone (a block in a cycle of names)
// evaluates in ev itself, else in an evaluator of its own over ev, so that
// jobs of one level run side by side.
func (c *checker) blockJob(ev *evaluator, d *Decl, alone bool) *blockJob {
	key := c.blockMemoKey(ev, d)
	if key != "" && !alone {
		if e, ok := lookup(c.memo, blocksOf, key); ok {
			if j, ok := c.replayBlock(e, d); ok {
				c.memo.keepBlock(key, e)
				return j
			}
		}
	}
	own := &diagList{}
	sub := &evaluator{scope: ev.scope, gains: ev.gains, t: ev.t, memo: map[string]*blockValue{}, diags: own, numbers: ev.numbers, base: ev}
	if alone {
		sub = ev
		saved := ev.diags
		ev.diags = own
		defer func() { ev.diags = saved }()
	}
	bv := sub.block(d)
	if !alone {
		bv.gainNames = sortedKeys(bv.gains)
	}
	lc := *c
	lc.diags = own
	lc.findings(d.Block, bv)
	j := &blockJob{decl: d, bv: bv, diags: own.list}
	if d.Path != c.res.Path {
		j.diags = nil
	}
	if key != "" && !alone {
		bv.key = key
		if e, ok := c.recordBlock(d, bv, own.list); ok {
			c.memo.keepBlock(key, e)
		}
	}
	return j
}

// findings fills in b from its evaluation and adds its poles and zeros,
// with the warnings they call for.
func (c *checker) findings(b *Block, bv *blockValue) {
	fillBlock(b, bv)
	if b.Var == 's' && bv.contOK {
		c.continuousChecks(b)
	}
	if b.OK {
		c.blockPoles(b)
	}
}

// blockLevels orders the blocks in scope by level of dependency (level 0
// names no block; level n names blocks of levels below n), each level in
// the order of the file (this file's blocks, then the others by name);
// rest are the blocks in, or depending on, a cycle of names.
func (c *checker) blockLevels() (levels [][]*Decl, rest []*Decl) {
	var order []*Decl
	for _, b := range c.res.Blocks {
		order = append(order, c.res.Scope[b.Name])
	}
	for _, name := range c.names {
		if d := c.res.Scope[name]; d.Block != nil && d.Path != c.res.Path {
			order = append(order, d)
		}
	}
	const visiting, cyclic = -1, -2
	level := make(map[*Decl]int, len(order))
	c.refs = make(map[*Decl][]*Decl, len(order))
	c.uses = make(map[*Decl][]*syntax.NameRef, len(order))
	var visit func(d *Decl) int
	visit = func(d *Decl) int {
		if l, seen := level[d]; seen {
			if l == visiting {
				return cyclic
			}
			return l
		}
		level[d] = visiting
		l := 0
		refs := c.blockRefs(d)
		c.refs[d] = refs
		for _, ref := range refs {
			dl := visit(ref)
			if dl == cyclic {
				l = cyclic
				break
			}
			l = max(l, dl+1)
		}
		level[d] = l
		return l
	}
	for _, d := range order {
		l := visit(d)
		if l < 0 {
			rest = append(rest, d)
			continue
		}
		for len(levels) <= l {
			levels = append(levels, nil)
		}
		levels[l] = append(levels[l], d)
	}
	return levels, rest
}

// blockRefs lists the other blocks in scope that d's expression names.
func (c *checker) blockRefs(d *Decl) []*Decl {
	var out []*Decl
	names := nameRefs(d)
	c.uses[d] = names
	for _, x := range names {
		if ref := c.res.Scope[x.Name]; ref != nil && ref.Block != nil && ref != d {
			out = append(out, ref)
		}
	}
	return out
}

// nameRefs lists the names d's expression uses, in the order written.
func nameRefs(d *Decl) []*syntax.NameRef {
	var out []*syntax.NameRef
	if d.Block.Stmt.Expr == nil {
		return nil
	}
	syntax.Walk(d.Block.Stmt.Expr, func(n syntax.Node) bool {
		if x, ok := n.(*syntax.NameRef); ok {
			out = append(out, x)
		}
		return true
	})
	return out
}

// fillBlock copies an evaluation into the block.
func fillBlock(b *Block, bv *blockValue) {
	b.Var, b.Cont, b.TF, b.OK = bv.v, bv.cont, bv.tf, bv.ok
	b.Factored, b.FactoredOK = bv.fac, bv.facErr == nil
	b.Gains = bv.gainNames
	if b.Gains == nil {
		b.Gains = sortedKeys(bv.gains)
	}
	if b.Var == 's' && b.Stmt.Via != nil && b.Stmt.Via.Method != nil {
		b.Method, _ = discretize.ParseMethod(b.Stmt.Via.Method.Name)
		if p := b.Stmt.Via.Prewarp; p != nil {
			b.PrewarpHz, _ = prewarpHz(p)
		}
	}
}

func (c *checker) loopStmts() []*syntax.LoopStmt {
	var out []*syntax.LoopStmt
	for _, st := range c.root.file.Stmts {
		if l, ok := st.(*syntax.LoopStmt); ok {
			out = append(out, l)
		}
	}
	return out
}

func (c *checker) noSample() {
	for _, st := range c.root.file.Stmts {
		if _, ok := st.(*syntax.SampleStmt); ok {
			return // a sample line that could not be read: its own error says why
		}
	}
	span := syntax.Span{}
	if len(c.root.file.Stmts) > 0 {
		first := c.root.file.Stmts[0]
		span = syntax.Span{From: first.Pos(), To: first.Pos()}
		if l := c.root.file.Lines; l != nil {
			span.To = l.LineEnd(0)
		}
	}
	// The new line goes after a byte order mark, which is part of nothing,
	// and uses the file's own line break.
	src := c.root.file.Src
	bom := syntax.Pos(syntax.BOMLen(src))
	x := c.diags.add(c.res.Path, span, Error, CodeNoSample,
		"no sample line: s blocks cannot be discretized and frequencies cannot be given in Hz without the sample period; add one, e.g. `sample 1 ms`")
	x.Fixes = append(x.Fixes, Fix{Title: "Add `sample 1 ms` (then set your controller's real period)", Edits: []Edit{{Path: c.res.Path, Span: syntax.Span{From: bom, To: bom}, NewText: "sample 1 ms" + syntax.LineBreak(src)}}})
}

// continuousChecks warns of continuous poles beyond Nyquist and shared
// roots in an s block.
func (c *checker) continuousChecks(b *Block) {
	span := exprSpan(b.Stmt.Expr)
	c.commonRoots(b, b.Cont, 's', span)
	if c.res.SampleT == 0 {
		return
	}
	nyq := math.Pi / c.res.SampleT // rad/s
	pr, err := c.findRoots(b.Cont.Den)
	if err != nil {
		return
	}
	for _, p := range pr.Clusters {
		if w := cmplx.Abs(p.Value); w > nyq {
			c.diags.add(b.Path, span, Warning, CodeAliasing,
				fmt.Sprintf("block %s has a continuous pole at s = %s (%.4g Hz), above the Nyquist frequency %.4g Hz of `sample`: the discrete model aliases it and misrepresents the plant; sample faster or drop the fast mode",
					b.Name, fmtComplex(p.Value), w/(2*math.Pi), nyq/(2*math.Pi)))
			return
		}
	}
}

// commonRoots warns when a block's numerator and denominator share a root.
func (c *checker) commonRoots(b *Block, r poly.Rational, v byte, span syntax.Span) {
	if r.Num.Degree() < 1 || r.Den.Degree() < 1 {
		return
	}
	nr, err1 := c.findRoots(r.Num)
	dr, err2 := c.findRoots(r.Den)
	if err1 != nil || err2 != nil {
		return
	}
	c.sharedRoot(b, nr.Clusters, dr.Clusters, v, span)
}

// sharedRoot warns when a numerator root (zeros) and a denominator root
// (poles) of a block coincide.
func (c *checker) sharedRoot(b *Block, zeros, poles []roots.Cluster, v byte, span syntax.Span) {
	for _, p := range poles {
		for _, q := range zeros {
			if cmplx.Abs(p.Value-q.Value) <= CommonRootTolerance*math.Max(1, cmplx.Abs(p.Value)) {
				c.diags.add(b.Path, span, Warning, CodeCommonRoot,
					fmt.Sprintf("block %s has numerator and denominator sharing the root %c = %s; loops use the block as written, so this mode stays in every loop's characteristic polynomial (and is reported as hidden)",
						b.Name, v, fmtComplex(p.Value)))
				return
			}
		}
	}
}

// blockPoles fills in a block's discrete poles and zeros.
func (c *checker) blockPoles(b *Block) {
	b.DCGain = dcGain(b.TF)
	t := c.res.SampleT
	if t == 0 {
		t = 1 // pole radius and angle do not need it; times are then per sample
	}
	tol := c.env.Options.Tolerance
	if !b.FactoredOK {
		return
	}
	f := b.Factored
	for _, p := range f.Poles {
		b.Poles = append(b.Poles, pole.Describe(p, t, tol))
	}
	if !f.IsZero() {
		for _, z := range f.Zeros {
			b.Zeros = append(b.Zeros, pole.Describe(z, t, tol))
		}
		if b.Var == 'z' {
			c.sharedRoot(b, clustersOf(f.Zeros), clustersOf(f.Poles), 'z', exprSpan(b.Stmt.Expr))
		}
	}
	sortPoles(b.Poles)
	sortPoles(b.Zeros)
	if len(b.Poles) == 0 {
		return
	}
	span := exprSpan(b.Stmt.Expr)
	worst := b.Poles[0]
	switch worst.Shape {
	case pole.Growing:
		c.diags.add(b.Path, span, Warning, CodeBlockOutside,
			fmt.Sprintf("block %s is open-loop unstable: pole at z = %s (radius %s) outside the unit circle; only a loop around it can make it safe", b.Name, fmtComplex(worst.Z), FormatRadius(worst.Radius)))
	case pole.Constant:
		c.diags.add(b.Path, span, Warning, CodeBlockOnCircle,
			fmt.Sprintf("block %s has a pole on the unit circle at z = %s: alone it is not BIBO stable (an integrator or oscillator); a loop around it must stabilise it", b.Name, fmtComplex(worst.Z)))
	}
}

// clustersOf groups identical roots (a factored form repeats a multiple
// root's value exactly).
func clustersOf(zs []complex128) []roots.Cluster {
	var out []roots.Cluster
next:
	for _, z := range zs {
		for i := range out {
			if out[i].Value == z {
				out[i].Multiplicity++
				continue next
			}
		}
		out = append(out, roots.Cluster{Value: z, Multiplicity: 1})
	}
	return out
}

func dcGain(r poly.Rational) float64 {
	d := r.Den.Eval(1)
	n := r.Num.Eval(1)
	if d == 0 {
		if n == 0 {
			return math.NaN()
		}
		return math.Copysign(math.Inf(1), n)
	}
	return n / d
}

// sortPoles orders largest radius first, then by angle (upper member of a
// pair first).
func sortPoles(p []pole.Info) {
	sort.SliceStable(p, func(i, j int) bool {
		if math.Abs(p[i].Radius-p[j].Radius) > 1e-12 {
			return p[i].Radius > p[j].Radius
		}
		return imag(p[i].Z) > imag(p[j].Z)
	})
}

func sortedKeys(m map[string]bool) []string {
	out := make([]string, 0, len(m))
	for k := range m {
		out = append(out, k)
	}
	sort.Strings(out)
	return out
}
