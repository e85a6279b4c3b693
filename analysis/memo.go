package analysis

import (
	"crypto/sha256"
	"encoding/binary"
	"math"
	"sync"

	"ringside/analysis/discretize"
	"ringside/analysis/lti"
	"ringside/analysis/pole"
	"ringside/analysis/poly"
	"ringside/analysis/roots"
	"ringside/analysis/step"
	"ringside/syntax"
)

// StepSamplesKept is how many samples of a loop's step response a result
// keeps: those a view shows (one and a half settling times, at least 20,
// at most 2,000: what a plot draws). The step figures are read off the
// whole simulation before it is cut.
func StepSamplesKept(st *step.Result) int {
	n := len(st.Samples)
	k := n
	if st.Settled && st.T > 0 {
		k = int(math.Ceil(1.5 * st.SettlingS / st.T))
	}
	return min(max(k, 20), n, 2000)
}

// trimStep cuts a loop's step samples to StepSamplesKept (or drops them),
// so that results hold what views need, not the whole horizon of a slow
// loop (up to 100,000 samples).
func trimStep(l *Loop, drop bool) {
	if l == nil || l.Step == nil {
		return
	}
	st := *l.Step
	if drop {
		st.Samples = nil
	} else {
		st.Samples = append([]float64(nil), st.Samples[:StepSamplesKept(&st)]...)
	}
	l.Step = &st
}

// Memo keeps loop results and gain limits between checks of the same
// files, so that an edit re-analyses only the loops whose inputs changed.
// An entry is found by a key of exactly what the result depends on: the
// loop statement as written, each path element's declaration as written
// and its transfer function's coefficients, the gains it depends on, the
// sample period and the options. A Memo holds, per file, only what the
// latest finished check of that file used, so it never grows beyond the
// results of the files in use. It is safe for concurrent checks; the zero
// value is not usable, call NewMemo. A nil *Memo memoises nothing.
type Memo struct {
	mu      sync.Mutex
	byPath  map[string]*memoFile
	commits uint64
}

// NewMemo returns an empty memo.
func NewMemo() *Memo { return &Memo{byPath: map[string]*memoFile{}} }

// memoFiles is how many files' results a Memo keeps: the ones being edited
// (a result of 200 loops holds about 1.7 MB without step samples, 3.5 MB
// with).
const memoFiles = 2

type memoFile struct {
	used  uint64 // commit count when last committed
	loops map[string]*loopEntry
	gains map[string]*GainLimits
	// nums holds results of pure numeric functions of coefficients:
	// roots of block polynomials, discretizations.
	nums map[string]numResult
	// blocks holds blocks' evaluations and findings (blockMemoKey).
	blocks map[string]*blockEntry
	// fixes holds whether a fix reads back, by syntax.FixRegion.Key.
	fixes map[string]bool
	// loopTexts and gainTexts hold the one-line summaries of loops and
	// gains, keyed by the loop's or the gain limits' memo key (the text is
	// a function of the result).
	loopTexts, gainTexts map[string]string
}

type numResult struct {
	roots roots.Result
	tf    poly.Rational
	err   error
}

func newMemoFile() *memoFile { return newMemoFileLike(nil) }

// newMemoFileLike returns an empty memo file with room for as many entries
// as like holds (the next check of a file keeps about as many).
func newMemoFileLike(like *memoFile) *memoFile {
	if like == nil {
		like = &memoFile{}
	}
	return &memoFile{loops: make(map[string]*loopEntry, len(like.loops)), gains: make(map[string]*GainLimits, len(like.gains)),
		nums: make(map[string]numResult, len(like.nums)), blocks: make(map[string]*blockEntry, len(like.blocks)),
		loopTexts: make(map[string]string, len(like.loopTexts)), gainTexts: make(map[string]string, len(like.gainTexts)),
		fixes: make(map[string]bool, len(like.fixes))}
}

func loopsOf(f *memoFile) map[string]*loopEntry   { return f.loops }
func gainsOf(f *memoFile) map[string]*GainLimits  { return f.gains }
func numsOf(f *memoFile) map[string]numResult     { return f.nums }
func blocksOf(f *memoFile) map[string]*blockEntry { return f.blocks }
func fixesOf(f *memoFile) map[string]bool         { return f.fixes }
func loopTextsOf(f *memoFile) map[string]string   { return f.loopTexts }
func gainTextsOf(f *memoFile) map[string]string   { return f.gainTexts }

// lookup finds key among this check's entries, then the previous check's.
func lookup[V any](r *memoRun, of func(*memoFile) map[string]V, key string) (V, bool) {
	r.mu.Lock()
	defer r.mu.Unlock()
	if v, ok := of(r.next)[key]; ok {
		return v, true
	}
	v, ok := of(r.old)[key]
	return v, ok
}

// memoRun is one check's view of the memo: what the previous check of the
// file kept, and what this one uses (kept when it finishes).
type memoRun struct {
	m         *Memo
	path      string
	old, next *memoFile
	mu        sync.Mutex
	// keys of the loops of this check, for the gain-limit keys.
	loopKeys map[*Loop]string
	// keys of the gains' limits in this check, for their summaries.
	gainKeys map[*Gain]string
}

func (m *Memo) begin(path string) *memoRun {
	if m == nil {
		return nil
	}
	m.mu.Lock()
	old := m.byPath[path]
	m.mu.Unlock()
	if old == nil {
		old = newMemoFile()
	}
	return &memoRun{m: m, path: path, old: old, next: newMemoFileLike(old),
		loopKeys: make(map[*Loop]string, len(old.loops)), gainKeys: make(map[*Gain]string, len(old.gains))}
}

// commit makes this check's entries the file's memo.
func (r *memoRun) commit() {
	if r == nil {
		return
	}
	r.m.mu.Lock()
	defer r.m.mu.Unlock()
	r.m.commits++
	r.next.used = r.m.commits
	r.m.byPath[r.path] = r.next
	for len(r.m.byPath) > memoFiles {
		oldest := ""
		for p, f := range r.m.byPath {
			if oldest == "" || f.used < r.m.byPath[oldest].used {
				oldest = p
			}
		}
		delete(r.m.byPath, oldest)
	}
}

// Forget drops what the memo holds for path (a closed document).
func (m *Memo) Forget(path string) {
	if m == nil {
		return
	}
	m.mu.Lock()
	delete(m.byPath, path)
	m.mu.Unlock()
}

// loopEntry is a loop's result as one check computed it, with the spans of
// its diagnostics made relative, so that a later check of a file where the
// loop moved can place them.
type loopEntry struct {
	loop    *Loop
	diags   []Diagnostic
	pending []pendingFix // diag indexes into diags
	refs    []spanRef    // one per span in diags, in walk order
}

// spanRef places a span relative to the statement it lies in: the loop
// (decl "") or the declaration of a path element.
type spanRef struct {
	decl    string
	realize bool       // the statement is decl's realize line
	off     syntax.Pos // span.From − statement start
}

// keyBuf builds a memo key.
type keyBuf []byte

func (k *keyBuf) str(s string) {
	*k = binary.AppendUvarint(*k, uint64(len(s)))
	*k = append(*k, s...)
}

// bytes adds b as str adds string(b), without the copy.
func (k *keyBuf) bytes(b []byte) {
	*k = binary.AppendUvarint(*k, uint64(len(b)))
	*k = append(*k, b...)
}

func (k *keyBuf) num(f float64) { *k = binary.LittleEndian.AppendUint64(*k, math.Float64bits(f)) }

func (k *keyBuf) poly(p poly.Poly) {
	*k = binary.AppendUvarint(*k, uint64(len(p)))
	for _, v := range p {
		k.num(v)
	}
}

func (k *keyBuf) complexes(zs []complex128) {
	*k = binary.AppendUvarint(*k, uint64(len(zs)))
	for _, z := range zs {
		k.num(real(z))
		k.num(imag(z))
	}
}

// factored adds a factored form (gain, zeros, poles, error bound).
func (k *keyBuf) factored(f lti.Factored, err error) {
	if err != nil {
		k.str("no factored form: " + err.Error())
		return
	}
	k.num(f.Gain)
	k.complexes(f.Zeros)
	k.complexes(f.Poles)
	k.num(f.Err)
}

func (k *keyBuf) options(o Options) {
	k.num(o.GainMarginDB)
	k.num(o.PhaseMarginDeg)
	k.num(o.Tolerance)
	if o.NoStepSamples {
		k.str("no step samples")
	}
}

// stmtText is the source of a statement as written.
func stmtText(src []byte, n syntax.Node) string { return string(stmtSrc(src, n)) }

// stmtSrc is stmtText without a copy (nil when n lies outside src).
func stmtSrc(src []byte, n syntax.Node) []byte {
	if n == nil || int(n.End()) > len(src) || n.Pos() < 0 || n.Pos() > n.End() {
		return nil
	}
	return src[n.Pos():n.End()]
}

// loopKey is the key of a loop's analysis, or "" when the loop is not to be
// memoised (an element that does not resolve: its messages depend on the
// whole scope). It is the SHA-256 digest of what the analysis reads: the
// loop as written, each element's block key (blockMemoKey; else its
// statement, coefficients and factored form), realize line and gains with
// their ranges, the sample period and the options.
func (c *checker) loopKey(ev *evaluator, ls *syntax.LoopStmt) string {
	if c.env.Options.Quick {
		return ""
	}
	sh := shapeOf(ls)
	k := getKeyBuf()
	defer putKeyBuf(k)
	k.str(c.res.Path)
	k.bytes(stmtSrc(c.root.file.Src, ls))
	k.num(c.res.SampleT)
	k.options(c.env.Options)
	for _, path := range [2][]*syntax.Ident{sh.fwd, sh.fb} {
		k.str("path")
		for _, id := range path {
			if !c.elementKey(k, ev, id.Name) {
				return ""
			}
		}
	}
	sum := sha256.Sum256(*k)
	return string(sum[:])
}

// elementKey adds to k what a loop's analysis reads of the path element
// name; false when it does not resolve or its block cannot be used.
func (c *checker) elementKey(k *keyBuf, ev *evaluator, name string) bool {
	d := c.res.Scope[name]
	if d == nil {
		return false
	}
	k.str(name)
	k.str(d.Path)
	if d.Gain != nil {
		k.str("gain")
		k.bytes(c.declSrc(d))
		k.num(ev.gain(name))
		return true
	}
	bv := ev.block(d)
	if !bv.ok {
		return false
	}
	if bv.key != "" {
		// The block's key stands for its statement and everything its
		// value depends on.
		k.str(bv.key)
	} else {
		k.bytes(c.declSrc(d))
		k.poly(bv.tf.Num)
		k.poly(bv.tf.Den)
		k.factored(bv.fac, bv.facErr)
	}
	k.str(c.realizeKey(element{block: d.Block, decl: d}))
	gains := bv.gainNames
	if gains == nil {
		gains = sortedKeys(bv.gains)
	}
	for _, g := range gains {
		k.str(g)
		if gd := c.res.Scope[g]; gd != nil {
			k.bytes(c.declSrc(gd)) // its range too
		}
	}
	k.str("")
	return true
}

// keyBufs keeps the buffers keys are built in (the keys themselves are
// digests): a check of many loops then allocates none.
var keyBufs = sync.Pool{New: func() any { k := make(keyBuf, 0, 1024); return &k }}

func getKeyBuf() *keyBuf {
	k := keyBufs.Get().(*keyBuf)
	*k = (*k)[:0]
	return k
}

func putKeyBuf(k *keyBuf) {
	if cap(*k) <= 64<<10 { // an unusual key's large buffer is not kept
		keyBufs.Put(k)
	}
}

// declStmt is the statement declaring d.
func declStmt(d *Decl) syntax.Node {
	switch {
	case d.Block != nil && d.Block.Stmt != nil:
		return d.Block.Stmt
	case d.Gain != nil && d.Gain.Stmt != nil:
		return d.Gain.Stmt
	}
	return nil
}

// declSrc is d's statement as written (nil when unknown).
func (c *checker) declSrc(d *Decl) []byte {
	f := c.res.Files[d.Path]
	if d.Path == c.res.Path {
		f = c.root.file
	}
	n := declStmt(d)
	if f == nil || n == nil {
		return nil
	}
	return stmtSrc(f.Src, n)
}

// memoLoop analyses a loop through the memo: a hit is the stored result
// placed in this file; a miss runs analyse and stores what it reported.
func (c *checker) memoLoop(ev *evaluator, ls *syntax.LoopStmt, compute func() *Loop) *Loop {
	analyse := func() *Loop {
		l := compute()
		trimStep(l, c.env.Options.NoStepSamples)
		return l
	}
	if c.memo == nil {
		return analyse()
	}
	key := c.loopKey(ev, ls)
	if key == "" {
		return analyse()
	}
	if e, ok := lookup(c.memo, loopsOf, key); ok {
		if l, ok := c.replay(e, ls); ok {
			c.memo.keepLoop(key, e, l)
			return l
		}
	}
	l := analyse()
	if e, ok := c.record(l, ls); ok {
		c.memo.keepLoop(key, e, l)
	}
	return l
}

// keepLoop keeps entry e for the next check and notes l's key.
func (r *memoRun) keepLoop(key string, e *loopEntry, l *Loop) {
	r.mu.Lock()
	r.next.loops[key] = e
	r.loopKeys[l] = key
	r.mu.Unlock()
}

// eachSpan calls f with a pointer to every span of a diagnostic, with the
// path it belongs to, in a fixed order.
func eachSpan(x *Diagnostic, f func(path string, s *syntax.Span)) {
	f(x.Path, &x.Span)
	for i := range x.Related {
		f(x.Related[i].Path, &x.Related[i].Span)
	}
	for i := range x.Fixes {
		for j := range x.Fixes[i].Edits {
			e := &x.Fixes[i].Edits[j]
			f(e.Path, &e.Span)
		}
	}
}

// record turns what one loop's analysis reported (the checker's own lists)
// into an entry; false when a span lies outside the loop and every path
// element's declaration.
func (c *checker) record(l *Loop, ls *syntax.LoopStmt) (*loopEntry, bool) {
	e := &loopEntry{loop: l, pending: c.pending}
	for _, x := range c.diags.list {
		e.diags = append(e.diags, cloneDiag(x))
	}
	ok := true
	for i := range e.diags {
		eachSpan(&e.diags[i], func(path string, s *syntax.Span) {
			if path == c.res.Path && s.From >= ls.From && s.To <= ls.To {
				e.refs = append(e.refs, spanRef{off: s.From - ls.From})
				return
			}
			for _, name := range append(append([]string{}, l.Forward...), l.Feedback...) {
				d := c.res.Scope[name]
				if d == nil || d.Path != path {
					continue
				}
				if n := declStmt(d); n != nil && s.From >= n.Pos() && s.To <= n.End() {
					e.refs = append(e.refs, spanRef{decl: name, off: s.From - n.Pos()})
					return
				}
				if n := realizeStmt(d); n != nil && s.From >= n.Pos() && s.To <= n.End() {
					e.refs = append(e.refs, spanRef{decl: name, realize: true, off: s.From - n.Pos()})
					return
				}
			}
			ok = false
		})
	}
	return e, ok
}

// replay places a stored entry in this check: spans moved with their
// statements, the loop pointing at this check's tree.
func (c *checker) replay(e *loopEntry, ls *syntax.LoopStmt) (*Loop, bool) {
	l := *e.loop
	l.Stmt = ls
	old := e.loop.Stmt
	if len(old.Items) != len(ls.Items) {
		return nil, false
	}
	l.Requirements = placeRequirements(e.loop.Requirements, old, ls)
	if r := e.loop.Realized; r != nil {
		fig := *r.Figures
		fig.Stmt, fig.Requirements = ls, placeRequirements(fig.Requirements, old, ls)
		rr := *r
		rr.Figures = &fig
		l.Realized = &rr
	}
	diags := make([]Diagnostic, len(e.diags))
	n := 0
	ok := true
	for i, x := range e.diags {
		x = cloneDiag(x)
		eachSpan(&x, func(_ string, s *syntax.Span) {
			ref := e.refs[n]
			n++
			start := ls.From
			if ref.decl != "" {
				d := c.res.Scope[ref.decl]
				st := syntax.Node(nil)
				switch {
				case d != nil && ref.realize:
					st = realizeStmt(d)
				case d != nil:
					st = declStmt(d)
				}
				if st == nil {
					ok = false
					return
				}
				start = st.Pos()
			}
			w := s.To - s.From
			s.From = start + ref.off
			s.To = s.From + w
		})
		diags[i] = x
	}
	if !ok {
		return nil, false
	}
	c.diags.list = append(c.diags.list, diags...)
	for _, p := range e.pending {
		p.loop = &l
		c.pending = append(c.pending, p)
	}
	return &l, true
}

// placeRequirements points requirements of the loop statement old at the
// same items of ls.
func placeRequirements(reqs []Requirement, old, ls *syntax.LoopStmt) []Requirement {
	out := make([]Requirement, len(reqs))
	for i, q := range reqs {
		if q.Item != nil {
			for j, it := range old.Items {
				if it == q.Item {
					q.Item = ls.Items[j].(*syntax.RequireItem)
				}
			}
		}
		out[i] = q
	}
	return out
}

// gainKey is the key of a gain's limits over loops, or "" when not to be
// memoised: the gain's value, each loop's key, and every block that
// depends on the gain as written with the values of what it names.
func (c *checker) gainKey(g *Gain, loops []*Loop, deps *gainDeps) string {
	if c.memo == nil {
		return ""
	}
	keys := make([]string, len(loops))
	size := 64 + len(g.Name) + len(g.Path)
	c.memo.mu.Lock()
	for i, l := range loops {
		key, ok := c.memo.loopKeys[l]
		if !ok {
			c.memo.mu.Unlock()
			return ""
		}
		keys[i] = key
		size += len(key) + binary.MaxVarintLen64
	}
	c.memo.mu.Unlock()
	for _, name := range deps.blocks[g.Name] {
		size += len(deps.keys[name]) + binary.MaxVarintLen64
	}
	k := make(keyBuf, 0, size) // one allocation for the usual key
	k.str(g.Name)
	k.str(g.Path)
	k.num(g.Value)
	if d := c.res.Scope[g.Name]; d != nil {
		k.bytes(c.declSrc(d))
	}
	for _, key := range keys {
		k.str(key)
	}
	for _, name := range deps.blocks[g.Name] {
		k.str(deps.keys[name])
	}
	return string(k)
}

// gainDeps lists, per gain, the blocks in scope that depend on it, and
// each such block's part of a key: its statement as written with the
// values of the gains and blocks it names.
type gainDeps struct {
	blocks map[string][]string
	keys   map[string]string
}

func (c *checker) dependents() *gainDeps {
	n := len(c.res.Scope)
	deps := &gainDeps{blocks: make(map[string][]string, n), keys: make(map[string]string, n)}
	if c.memo == nil {
		return deps
	}
	for _, name := range c.names {
		d := c.res.Scope[name]
		bv := c.base.memo[name]
		if d.Block == nil || bv == nil || len(bv.gains) == 0 {
			continue
		}
		for g := range bv.gains {
			deps.blocks[g] = append(deps.blocks[g], name)
		}
		if bv.key != "" {
			deps.keys[name] = bv.key // stands for all blockKey holds
		} else {
			deps.keys[name] = c.blockKey(d)
		}
	}
	return deps
}

// blockKey is a block's statement as written with the values of the gains
// and blocks it names.
func (c *checker) blockKey(d *Decl) string {
	var k keyBuf
	k.str(d.Name)
	k.bytes(c.declSrc(d))
	syntax.Walk(d.Block.Stmt, func(n syntax.Node) bool {
		ref, ok := n.(*syntax.NameRef)
		if !ok {
			return true
		}
		k.str(ref.Name)
		if v, isGain := c.gains[ref.Name]; isGain {
			k.num(v)
		} else if bv := c.base.memo[ref.Name]; bv != nil {
			k.poly(bv.tf.Num)
			k.poly(bv.tf.Den)
			k.poly(bv.cont.Num)
			k.poly(bv.cont.Den)
			k.factored(bv.fac, bv.facErr)
		}
		return true
	})
	return string(k)
}

// memoLimits computes a gain's limits through the memo.
func (c *checker) memoLimits(g *Gain, loops []*Loop, deps *gainDeps, compute func() *GainLimits) *GainLimits {
	key := c.gainKey(g, loops, deps)
	if key == "" {
		return compute()
	}
	lim, ok := lookup(c.memo, gainsOf, key)
	if !ok {
		lim = compute()
	}
	c.memo.mu.Lock()
	c.memo.next.gains[key] = lim
	c.memo.gainKeys[g] = key
	c.memo.mu.Unlock()
	return lim
}

// text returns the text memoised under key in the map of, or computes and
// keeps it; key "" (not memoised) always computes.
func (r *memoRun) text(of func(*memoFile) map[string]string, key string, compute func() string) string {
	if r == nil || key == "" {
		return compute()
	}
	s, ok := lookup(r, of, key)
	if !ok {
		s = compute()
	}
	r.mu.Lock()
	of(r.next)[key] = s
	r.mu.Unlock()
	return s
}

// loopKeyOf and gainKeyOf are the memo keys this check used for l and g,
// or "" when they were not memoised.
func (r *memoRun) loopKeyOf(l *Loop) string {
	if r == nil {
		return ""
	}
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.loopKeys[l]
}

func (r *memoRun) gainKeyOf(g *Gain) string {
	if r == nil {
		return ""
	}
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.gainKeys[g]
}

// loopsByGain lists, per gain name, the analysed loops that depend on it,
// in source order: one pass over the loops instead of one per gain.
func loopsByGain(loops []*Loop) map[string][]*Loop {
	out := make(map[string][]*Loop, 2*len(loops)) // a gain or two per loop, usually
	for _, l := range loops {
		if !l.OK {
			continue
		}
		for _, g := range l.Gains {
			out[g] = append(out[g], l)
		}
	}
	return out
}

// cloneDiag copies a diagnostic with its own related, fix and edit lists
// (later passes append to them).
func cloneDiag(x Diagnostic) Diagnostic {
	x.Related = append([]Related(nil), x.Related...)
	x.Fixes = append([]Fix(nil), x.Fixes...)
	for j := range x.Fixes {
		x.Fixes[j].Edits = append([]Edit(nil), x.Fixes[j].Edits...)
	}
	return x
}

// number returns the memoised result of key, or computes and keeps it. The
// functions memoised are pure, and their results are never modified.
func (r *memoRun) number(key string, compute func() numResult) numResult {
	if r == nil {
		return compute()
	}
	v, ok := lookup(r, numsOf, key)
	if !ok {
		v = compute()
	}
	r.mu.Lock()
	r.next.nums[key] = v
	r.mu.Unlock()
	return v
}

// findRoots is roots.Find through the memo.
func (c *checker) findRoots(p poly.Poly) (roots.Result, error) {
	if c.memo == nil {
		return roots.Find(p)
	}
	k := keyBuf("roots")
	k.poly(p)
	v := c.memo.number(string(k), func() numResult {
		res, err := roots.Find(p)
		return numResult{roots: res, err: err}
	})
	return v.roots, v.err
}

// discretize is discretize.Discretize through the memo.
func (r *memoRun) discretize(h poly.Rational, opt discretize.Options) (poly.Rational, error) {
	if r == nil {
		return discretize.Discretize(h, opt)
	}
	k := keyBuf("discretize")
	k.poly(h.Num)
	k.poly(h.Den)
	k.num(float64(opt.Method))
	k.num(opt.T)
	k.num(opt.PrewarpHz)
	v := r.number(string(k), func() numResult {
		tf, err := discretize.Discretize(h, opt)
		return numResult{tf: tf, err: err}
	})
	return v.tf, v.err
}

// blockEntry is a block's evaluation and findings as one check made them:
// the value (never modified once made), the poles, zeros and DC gain, and
// what was reported, with spans relative to the block's statement.
type blockEntry struct {
	bv     *blockValue
	poles  []pole.Info
	zeros  []pole.Info
	dc     float64
	diags  []Diagnostic
	starts []syntax.Pos // the statement's start when recorded, per diags
}

// blockMemoKey is the key of d's evaluation and findings: the block's file,
// name and statement as written, the sample period and the pole
// tolerance, and for each name its expression uses, the gain's value or
// the named block's own key with where it is declared (a later block is an
// error). "" when not memoised: no memo, or a name that does not resolve
// (its message suggests names from the whole scope), or a named block not
// memoised itself. The key is a SHA-256 digest of all that.
func (c *checker) blockMemoKey(ev *evaluator, d *Decl) string {
	if c.memo == nil || d.Block.Stmt == nil {
		return ""
	}
	k := getKeyBuf()
	defer putKeyBuf(k)
	k.str("block")
	k.str(d.Path)
	k.str(d.Name)
	k.bytes(c.declSrc(d))
	k.num(c.res.SampleT)
	k.num(c.env.Options.Tolerance)
	uses, known := c.uses[d]
	if !known {
		uses = nameRefs(d)
	}
	for _, x := range uses {
		k.str(x.Name)
		ref := c.res.Scope[x.Name]
		switch {
		case ref == nil:
			return ""
		case ref.Gain != nil:
			k.str("gain")
			k.num(ev.gain(x.Name))
		case ref == d:
			k.str("itself")
		default:
			bv := ev.memo[x.Name]
			if bv == nil || bv.key == "" {
				return ""
			}
			k.str(bv.key)
			k.num(float64(boolBit(ref.Path == d.Path && ref.Ident.From > d.Ident.From)))
			k.num(float64(boolBit(ref.Block.Stmt.Via == nil)))
		}
	}
	sum := sha256.Sum256(*k)
	return string(sum[:])
}

func boolBit(b bool) int {
	if b {
		return 1
	}
	return 0
}

// recordBlock makes an entry of d's evaluation bv (already in d.Block) and of
// what it reported; false when a span lies outside d's statement.
func (c *checker) recordBlock(d *Decl, bv *blockValue, diags []Diagnostic) (*blockEntry, bool) {
	b := d.Block
	st := declStmt(d)
	e := &blockEntry{bv: bv, poles: b.Poles, zeros: b.Zeros, dc: b.DCGain}
	for _, x := range diags {
		x = cloneDiag(x)
		inside := true
		eachSpan(&x, func(path string, s *syntax.Span) {
			if path != d.Path || s.From < st.Pos() || s.To > st.End() {
				inside = false
			}
		})
		if !inside {
			return nil, false
		}
		e.diags = append(e.diags, x)
		e.starts = append(e.starts, st.Pos())
	}
	return e, true
}

// replayBlock places a stored entry in this check: d's Block filled in,
// the spans moved with the statement.
func (c *checker) replayBlock(e *blockEntry, d *Decl) (*blockJob, bool) {
	b := d.Block
	fillBlock(b, e.bv)
	b.Poles, b.Zeros, b.DCGain = e.poles, e.zeros, e.dc
	j := &blockJob{decl: d, bv: e.bv}
	if d.Path != c.res.Path {
		return j, true
	}
	st := declStmt(d)
	j.diags = make([]Diagnostic, len(e.diags))
	for i, x := range e.diags {
		x = cloneDiag(x)
		shift := st.Pos() - e.starts[i]
		eachSpan(&x, func(_ string, s *syntax.Span) {
			s.From += shift
			s.To += shift
		})
		j.diags[i] = x
	}
	return j, true
}

// keepBlock keeps a block's entry for the next check.
func (r *memoRun) keepBlock(key string, e *blockEntry) {
	r.mu.Lock()
	r.next.blocks[key] = e
	r.mu.Unlock()
}

// readsBack is r.ReadsBack through the memo: the answer depends only on the
// region's text and edits (a nil run memoises nothing).
func (r *memoRun) readsBack(fr syntax.FixRegion) bool {
	if r == nil {
		return fr.ReadsBack()
	}
	key := fr.Key()
	ok, found := lookup(r, fixesOf, key)
	if !found {
		ok = fr.ReadsBack()
	}
	r.mu.Lock()
	r.next.fixes[key] = ok
	r.mu.Unlock()
	return ok
}
