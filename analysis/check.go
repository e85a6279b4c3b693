package analysis

import (
	"context"
	"fmt"
	"path/filepath"
	"slices"
	"sort"
	"sync"

	"ringside/internal/par"
	"ringside/syntax"
)

// Check analyses the file at path with contents src. It never fails: every
// problem becomes a diagnostic. A cancelled ctx stops the loop analysis
// early and says so.
func Check(ctx context.Context, path string, src []byte, env Env) *Result {
	env.Options = env.Options.withDefaults()
	if env.Options.Budget > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(ctx, env.Options.Budget)
		defer cancel()
	}
	path = filepath.Clean(path)
	roots := env.Roots
	if len(roots) == 0 {
		roots = []string{filepath.Dir(path)}
	}
	diags := &diagList{}
	res := &Result{Path: path, Scope: map[string]*Decl{}, Files: map[string]*syntax.File{}}
	if len(src) > MaxFileSize {
		src = src[:0]
		diags.add(path, syntax.Span{}, Error, CodeTooComplex, fmt.Sprintf("file is over the %d-byte limit for a .loop file; not analysed", MaxFileSize))
	}
	ld := &loader{env: &env, roots: roots, units: map[string]*unit{}, diags: diags}
	root := ld.load(path, src, nil)
	res.File = root.file
	res.Uses = root.uses
	for _, u := range ld.order {
		res.Files[u.path] = u.file
	}
	for _, e := range root.errs {
		diags.add(path, e.Span, Error, CodeSyntax, e.Msg)
	}
	c := &checker{env: &env, res: res, diags: diags, ld: ld, root: root, forms: &sync.Map{}, memo: env.Memo.begin(path)}
	c.run(ctx)
	res.Diagnostics = capped(diags.sorted(path))
	checkedFixes(res, res.Diagnostics, c.memo)
	if ctx.Err() == nil {
		c.memo.commit()
	}
	return res
}

// checker carries the state of one Check.
type checker struct {
	env   *Env
	res   *Result
	diags *diagList
	ld    *loader
	root  *unit
	gains map[string]float64
	// forms caches affine fits of loops in a gain (gain searches).
	forms *sync.Map
	// loopNames holds the first loop of each name, for duplicates.
	loopNames map[string]*syntax.LoopStmt
	// base evaluates blocks at the declared gains; sweeps reuse it.
	base *evaluator
	// pending are loop diagnostics waiting for gain fixes.
	pending []pendingFix
	// using lists, per gain, the analysed loops that depend on it (set by
	// the gain-limit stage).
	using map[string][]*Loop
	// trial marks the loop analyses of a fix search: figures that no
	// requirement of the loop needs are skipped (see wants).
	trial bool
	// fitSearches counts the gain fix searches run (MaxFitSearches).
	fitSearches int
	// memo is this check's view of Env.Memo (nil: none).
	memo *memoRun
	// names are the names in scope, sorted (set once the scope is built).
	names []string
	// refs are the other blocks in scope each block's expression names,
	// uses every name it uses in the order written (set by the block
	// stage, before any block is evaluated).
	refs map[*Decl][]*Decl
	uses map[*Decl][]*syntax.NameRef
}

func (c *checker) run(ctx context.Context) {
	// About one finding per statement (a summary per loop and gain, a
	// note per integrator): room for them at once.
	c.diags.list = slices.Grow(c.diags.list, len(c.root.file.Stmts)+8)
	c.samples()
	c.declare()
	c.names = sortedDecls(c.res.Scope)
	c.gainValues()
	ev := c.evaluator(c.gains, c.diags)
	c.base = ev
	// Every block in scope is evaluated before the loops, which then only
	// read the shared evaluator and can be analysed side by side.
	c.blocks(ev)
	c.realizations(ev)
	var stmts []*syntax.LoopStmt
	for _, st := range c.root.file.Stmts {
		if ls, ok := st.(*syntax.LoopStmt); ok && ls.Name != nil {
			stmts = append(stmts, ls)
		}
	}
	if len(stmts) > MaxLoops {
		for _, ls := range stmts[MaxLoops:] {
			c.diags.add(c.res.Path, ls.Name.Span, Error, CodeTooComplex, fmt.Sprintf("more than %d loops in one file: this loop is not analysed; split the file", MaxLoops))
		}
		stmts = stmts[:MaxLoops]
	}
	// Each loop reports into a list of its own; the lists are joined in
	// source order, so the result does not depend on the scheduling.
	loops := make([]*Loop, len(stmts))
	own := make([]*checker, len(stmts))
	par.Each(len(stmts), func(i int) {
		ls := stmts[i]
		lc := *c
		lc.diags, lc.pending = &diagList{}, nil
		own[i] = &lc
		if ctx.Err() != nil {
			// An error, so that a check that did not decide every loop
			// never passes (exit status 1).
			lc.diags.add(c.res.Path, ls.Name.Span, Error, CodeNumeric, "analysis stopped (cancelled or out of its time budget) before this loop: it has no figures and no verdict; check it again with a larger --budget")
			loops[i] = &Loop{Name: ls.Name.Name, Stmt: ls, NotReached: true}
			return
		}
		loops[i] = lc.memoLoop(ev, ls, func() *Loop { return lc.guardedLoop(ev, ls) })
	})
	for i, lc := range own {
		base := len(c.diags.list)
		c.diags.list = append(c.diags.list, lc.diags.list...)
		for _, p := range lc.pending {
			p.diag += base
			c.pending = append(c.pending, p)
		}
		c.res.Loops = append(c.res.Loops, loops[i])
	}
	c.robustLoops(ctx)
	c.quietIntegrators()
	c.gainLimits(ctx)
	c.summaries()
}

// guardedLoop analyses one loop; a panic inside the numerics (a bug, or a
// library failing on a pathological matrix) becomes an error on the loop
// with no verdict, never a crash of the check or a guessed figure.
func (c *checker) guardedLoop(ev *evaluator, ls *syntax.LoopStmt) (l *Loop) {
	defer func() {
		if r := recover(); r != nil {
			c.diags.list = nil
			c.pending = nil
			c.diags.add(c.res.Path, ls.Name.Span, Error, CodeNumeric,
				fmt.Sprintf("loop %s: the analysis failed inside its numerics (%v); no verdict: please report this file", ls.Name.Name, r))
			l = &Loop{Name: ls.Name.Name, Stmt: ls}
		}
	}()
	return c.loop(ev, ls)
}

func (c *checker) evaluator(gains map[string]float64, diags *diagList) *evaluator {
	return &evaluator{scope: c.res.Scope, gains: gains, t: c.res.SampleT, memo: map[string]*blockValue{}, diags: diags, numbers: c.memo}
}

// samples reads the sample period: this file's own, else one shared by the
// files it uses.
func (c *checker) samples() {
	for _, u := range c.ld.order {
		var first *syntax.SampleStmt
		for _, st := range u.file.Stmts {
			s, ok := st.(*syntax.SampleStmt)
			if !ok || s.Value == nil {
				continue
			}
			if first != nil {
				if u == c.root {
					line, _ := u.file.Lines.LineCol(first.From)
					c.diags.add(u.path, s.Span, Error, CodeSampleTwice, fmt.Sprintf("a second sample line; the file's period is already set on line %d (one sample per file)", line))
				}
				continue
			}
			first = s
			t, err := samplePeriod(s.Value)
			if err != nil {
				if u == c.root {
					c.diags.add(u.path, s.Value.Span, Error, CodeBadUnit, err.Error())
				}
				continue
			}
			u.t, u.tOK, u.tSpan = t, true, s.Span
		}
	}
	if c.root.tOK {
		c.res.SampleT = c.root.t
	}
	for _, u := range c.ld.order[1:] {
		if !u.tOK {
			continue
		}
		if c.res.SampleT == 0 {
			c.res.SampleT = u.t
			continue
		}
		if !sameT(u.t, c.res.SampleT) {
			for _, use := range c.useLinesReaching(u.path) {
				c.diags.add(c.res.Path, use.Stmt.PathSpan, Error, CodeSampleMismatch,
					fmt.Sprintf("%s runs at a sample period of %s, this file at %s: blocks of different periods cannot share a loop", filepath.Base(u.path), fmtTime(u.t), fmtTime(c.res.SampleT)))
			}
		}
	}
}

func sameT(a, b float64) bool { return abs64(a-b) <= 1e-12*max(abs64(a), abs64(b)) }

// useLinesReaching returns the root's use lines through which path is read.
func (c *checker) useLinesReaching(path string) []*Use {
	var out []*Use
	for _, use := range c.root.uses {
		if use.Path == "" {
			continue
		}
		if use.Path == path || c.reaches(use.Path, path, map[string]bool{}) {
			out = append(out, use)
		}
	}
	return out
}

func (c *checker) reaches(from, to string, seen map[string]bool) bool {
	if seen[from] {
		return false
	}
	seen[from] = true
	u := c.ld.units[from]
	if u == nil {
		return false
	}
	for _, use := range u.uses {
		if use.Path == to || (use.Path != "" && c.reaches(use.Path, to, seen)) {
			return true
		}
	}
	return false
}

// declare builds the scope: used files first (so this file's own
// declarations are the ones reported as duplicates), then this file.
func (c *checker) declare() {
	n := 0
	for _, u := range c.ld.order {
		n += len(u.file.Stmts)
	}
	c.res.Scope = make(map[string]*Decl, n) // room for every statement's name
	for i := len(c.ld.order) - 1; i >= 0; i-- {
		u := c.ld.order[i]
		own := u == c.root
		for _, st := range u.file.Stmts {
			var d *Decl
			switch s := st.(type) {
			case *syntax.GainStmt:
				if s.Name == nil {
					continue
				}
				g := &Gain{Name: s.Name.Name, Path: u.path, Stmt: s}
				d = &Decl{Name: g.Name, Path: u.path, Ident: s.Name, Gain: g}
			case *syntax.BlockStmt:
				if s.Name == nil {
					continue
				}
				b := &Block{Name: s.Name.Name, Path: u.path, Stmt: s}
				d = &Decl{Name: b.Name, Path: u.path, Ident: s.Name, Block: b}
			case *syntax.LoopStmt:
				if own && s.Name != nil {
					c.checkLoopName(s)
				}
				continue
			default:
				continue
			}
			if prev, dup := c.res.Scope[d.Name]; dup {
				if own {
					where := "above"
					if prev.Path != u.path {
						where = "in " + filepath.Base(prev.Path)
					} else {
						line, _ := u.file.Lines.LineCol(prev.Ident.From)
						where = fmt.Sprintf("on line %d", line)
					}
					x := c.diags.add(u.path, d.Ident.Span, Error, CodeDuplicateName, fmt.Sprintf("%s is already declared %s; give this one another name", d.Name, where))
					x.Related = append(x.Related, Related{Path: prev.Path, Span: prev.Ident.Span, Message: "first declared here"})
				}
				continue
			}
			c.res.Scope[d.Name] = d
			if own {
				if d.Gain != nil {
					c.res.Gains = append(c.res.Gains, d.Gain)
				} else {
					c.res.Blocks = append(c.res.Blocks, d.Block)
				}
			}
		}
	}
}

func (c *checker) checkLoopName(s *syntax.LoopStmt) {
	if c.loopNames == nil {
		c.loopNames = map[string]*syntax.LoopStmt{}
	}
	if first, dup := c.loopNames[s.Name.Name]; dup {
		line, _ := c.root.file.Lines.LineCol(first.From)
		c.diags.add(c.root.path, s.Name.Span, Error, CodeDuplicateName, fmt.Sprintf("loop %s is already declared on line %d", s.Name.Name, line))
		return
	}
	c.loopNames[s.Name.Name] = s
}

// gainValues reads every gain in scope and checks the declared range.
func (c *checker) gainValues() {
	c.gains = make(map[string]float64, len(c.res.Scope))
	for name, d := range c.res.Scope {
		if d.Gain == nil {
			continue
		}
		g, s := d.Gain, d.Gain.Stmt
		if s.Value != nil {
			g.Value = s.Value.Value
		}
		if s.Min != nil {
			v := s.Min.Value
			g.Min = &v
		}
		if s.Max != nil {
			v := s.Max.Value
			g.Max = &v
		}
		c.gains[name] = g.Value
		c.varyRange(g, g.Path == c.res.Path && s.Value != nil)
		if g.Path != c.res.Path || s.Value == nil {
			continue
		}
		for _, n := range []*syntax.Number{s.Value, s.Min, s.Max} {
			if n != nil && n.Unit != "" {
				c.diags.add(g.Path, n.UnitSpan, Error, CodeBadUnit, fmt.Sprintf("gain %s is a plain number; remove the unit %q", name, n.Unit))
			}
		}
		switch {
		case g.Min != nil && g.Max != nil && *g.Min > *g.Max:
			c.diags.add(g.Path, syntax.Span{From: s.Min.From, To: s.Max.To}, Error, CodeGainRangeEmpty,
				fmt.Sprintf("gain %s has min %s above max %s: no value is allowed", name, s.Min, s.Max))
		case g.Min != nil && g.Value < *g.Min:
			c.diags.add(g.Path, s.Value.Span, Error, CodeGainRange, fmt.Sprintf("gain %s = %s is below its declared min %s", name, s.Value, s.Min))
		case g.Max != nil && g.Value > *g.Max:
			c.diags.add(g.Path, s.Value.Span, Error, CodeGainRange, fmt.Sprintf("gain %s = %s is above its declared max %s", name, s.Value, s.Max))
		}
	}
}

func sortedDecls(scope map[string]*Decl) []string {
	names := make([]string, 0, len(scope))
	for n := range scope {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}
