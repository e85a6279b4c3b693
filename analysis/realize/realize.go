package realize

import (
	"fmt"
	"math"
	"math/cmplx"

	"ringside/analysis/lti"
	"ringside/analysis/poly"
	"ringside/analysis/roots"
)

// Realization is a block as it runs on the target.
type Realization struct {
	Structure Structure
	Format    Format
	// DeltaExp gives Δ = 2^DeltaExp for the delta form (0 otherwise).
	DeltaExp int
	Ideal    []Section // before rounding
	Sections []Section // the rounded coefficients, as values
	// Raw holds, for fixed point, each section's rounded words: B[0..n]
	// then A[1..n] (A[0] = 1 is structural, never stored).
	Raw [][]int64
	// TF is the transfer function in z of the rounded structure.
	TF poly.Rational
	// Poles of the rounded structure (for sections, the union of the
	// sections' poles), and the ideal poles they are matched with.
	Poles, IdealPoles []complex128
	// fac is the rounded transfer function factored (Factored).
	fac lti.Factored
	// MaxPoleShift is the largest distance between an ideal pole and its
	// rounded counterpart (nearest-first matching).
	MaxPoleShift float64
	// Stable: every rounded pole strictly inside the unit circle (by the
	// tolerance given to Realize).
	Stable    bool
	MaxRadius float64
	// Headroom is nil for floating point.
	Headroom *Headroom
}

// Delta is Δ in seconds-free units (a power of two), 0 unless Delta form.
func (r *Realization) Delta() float64 {
	if r.Structure != Delta {
		return 0
	}
	return math.Ldexp(1, r.DeltaExp)
}

// Coefficients lists, per section, the rounded B then A (with its leading
// 1): the layout of the JSON contract.
func (r *Realization) Coefficients() [][]float64 {
	out := make([][]float64, len(r.Sections))
	for i, s := range r.Sections {
		out[i] = append(append([]float64{}, s.B...), s.A...)
	}
	return out
}

// Realize builds structure st of the causal z transfer function tf at
// sample period T and rounds it to f. tol is the distance from the unit
// circle within which a pole counts as on it. A coefficient the format
// cannot hold is a *RangeError.
func Realize(tf poly.Rational, st Structure, f Format, T, tol float64) (*Realization, error) {
	r, err := Try(tf, st, f, T, tol)
	if err == nil && f.Kind == Fixed {
		r.Headroom = headroom(r, tol)
	}
	return r, err
}

// Try is Realize without the headroom, for searches over formats.
func Try(tf poly.Rational, st Structure, f Format, T, tol float64) (*Realization, error) {
	r := &Realization{Structure: st, Format: f}
	if st == Delta {
		if !(T > 0) {
			return nil, fmt.Errorf("the delta form needs the sample period")
		}
		r.DeltaExp = DeltaExponent(T)
	}
	ideal, err := build(tf, st, r.DeltaExp)
	if err != nil {
		return nil, err
	}
	r.Ideal = ideal
	if err := r.round(); err != nil {
		return nil, err
	}
	r.TF = r.transfer()
	if r.fac, err = r.factor(); err != nil {
		return nil, fmt.Errorf("rounded structure: %v", err)
	}
	r.Poles = r.fac.Poles
	if tf.Den.Degree() > 0 {
		rr, err := roots.Find(tf.Den)
		if err != nil {
			return nil, fmt.Errorf("ideal poles: %v", err)
		}
		r.IdealPoles = rr.Roots
	}
	r.MaxPoleShift = maxShift(r.IdealPoles, r.Poles)
	for _, p := range r.Poles {
		r.MaxRadius = math.Max(r.MaxRadius, cmplx.Abs(p))
	}
	r.Stable = r.MaxRadius < 1-tol
	return r, nil
}

// round rounds every stored coefficient (not the leading 1 of A).
func (r *Realization) round() error {
	many := len(r.Ideal) > 1
	for si, s := range r.Ideal {
		out := Section{B: make([]float64, len(s.B)), A: make([]float64, len(s.A))}
		var raw []int64
		one := func(name string, v float64) (float64, error) {
			if many {
				name = fmt.Sprintf("%s of section %d", name, si+1)
			}
			x, w, err := r.Format.Round(name, v)
			raw = append(raw, w)
			return x, err
		}
		var err error
		for k, v := range s.B {
			if out.B[k], err = one(fmt.Sprintf("b%d", k), v); err != nil {
				return err
			}
		}
		out.A[0] = 1
		for k := 1; k < len(s.A); k++ {
			if out.A[k], err = one(fmt.Sprintf("a%d", k), s.A[k]); err != nil {
				return err
			}
		}
		r.Sections = append(r.Sections, out)
		if r.Format.Kind == Fixed {
			r.Raw = append(r.Raw, raw)
		}
	}
	return nil
}

// zPoly turns coefficients in powers of q^-1 (c[0] + c[1] q^-1 + …, n =
// len(c) − 1) into a polynomial in z, multiplied by q^n: in z directly, or
// with q = δ = (z − 1)/Δ as Σ c[k] Δ^k (z − 1)^(n−k).
func (r *Realization) zPoly(c []float64) poly.Poly {
	n := len(c) - 1
	if r.Structure != Delta {
		return qPoly(c)
	}
	d := r.Delta()
	zm1 := poly.New(-1, 1)
	var p poly.Poly
	for k, v := range c {
		p = p.Add(zm1.Pow(n - k).Scale(v * math.Pow(d, float64(k))))
	}
	return p
}

func (r *Realization) transfer() poly.Rational {
	tf := poly.RConst(1)
	for _, s := range r.Sections {
		tf = tf.Mul(poly.R(r.zPoly(s.B), r.zPoly(s.A)))
	}
	return tf
}

// maxShift matches ideal and rounded poles nearest pair first and returns
// the largest distance of a matched pair.
func maxShift(ideal, rounded []complex128) float64 {
	usedI := make([]bool, len(ideal))
	usedR := make([]bool, len(rounded))
	worst := 0.0
	for range min(len(ideal), len(rounded)) {
		bi, bj, bd := -1, -1, math.Inf(1)
		for i, a := range ideal {
			if usedI[i] {
				continue
			}
			for j, b := range rounded {
				if !usedR[j] {
					if d := cmplx.Abs(a - b); d < bd {
						bi, bj, bd = i, j, d
					}
				}
			}
		}
		usedI[bi], usedR[bj] = true, true
		worst = math.Max(worst, bd)
	}
	return worst
}

// Silenced reports whether rounding turned a section's numerator, nonzero
// in the ideal structure, into zeros: the realized block outputs nothing.
func (r *Realization) Silenced() (section int, ok bool) {
	for i, s := range r.Sections {
		if allZero(s.B) && !allZero(r.Ideal[i].B) {
			return i + 1, true
		}
	}
	return 0, false
}

func allZero(v []float64) bool {
	for _, x := range v {
		if x != 0 {
			return false
		}
	}
	return true
}

// qPoly is the polynomial Σ c[k] q^(n−k) in the structure's own operator q
// (lowest power first).
func qPoly(c []float64) poly.Poly {
	n := len(c) - 1
	p := make(poly.Poly, n+1)
	for k, v := range c {
		p[n-k] = v
	}
	return p
}

// Factored is the rounded structure's transfer function in z as gain, zeros
// and poles (the form the loop analysis works on); its poles are Poles.
func (r *Realization) Factored() lti.Factored {
	return r.fac.Mul(lti.Const(1)) // a copy
}

// factor factors each section on its own — roots of its own polynomials,
// which keeps poles crowded near z = 1 as accurate as the sections
// themselves; the delta form in δ, mapped by z = 1 + Δδ (gain times
// Δ^(poles − zeros)).
func (r *Realization) factor() (lti.Factored, error) {
	f := lti.Const(1)
	d := r.Delta()
	for _, s := range r.Sections {
		g := lti.Const(1)
		if err := g.MulPoly(qPoly(s.B), 1); err != nil {
			return lti.Factored{}, err
		}
		if err := g.MulPoly(qPoly(s.A), -1); err != nil {
			return lti.Factored{}, err
		}
		if err := ownRoots(&g, s); err != nil {
			return lti.Factored{}, err
		}
		if r.Structure == Delta {
			g = toZ(g, d)
		}
		f = f.Mul(g)
	}
	return f, nil
}

// ownRoots puts the roots roots.Find returns one by one into g in place of
// the cluster means the factored form holds, and widens g.Err to cover the
// distance between the two: a cluster mean is the better value of a true
// multiple root, but a pair that the clustering took for one (roots at
// −1 ± j beside a triple root at −1 have that mean) must not move a pole
// onto the real axis unannounced. Either way the error bound holds both.
func ownRoots(g *lti.Factored, s Section) error {
	zs, err := rootsOf(qPoly(s.B))
	if err != nil {
		return err
	}
	ps, err := rootsOf(qPoly(s.A))
	if err != nil {
		return err
	}
	g.Err = math.Max(g.Err, math.Max(maxShift(g.Zeros, zs), maxShift(g.Poles, ps)))
	g.Zeros, g.Poles = zs, ps
	return nil
}

// rootsOf is every root of p, repeated by multiplicity (none for a
// constant or the zero polynomial).
func rootsOf(p poly.Poly) ([]complex128, error) {
	if p.Trim().Degree() < 1 {
		return nil, nil
	}
	rr, err := roots.Find(p)
	return rr.Roots, err
}

// toZ maps a factored function of δ = (z − 1)/Δ to z.
func toZ(g lti.Factored, d float64) lti.Factored {
	out := lti.Factored{Gain: g.Gain * math.Pow(d, float64(len(g.Poles)-len(g.Zeros))), Err: g.Err * d}
	for _, z := range g.Zeros {
		out.Zeros = append(out.Zeros, 1+complex(d, 0)*z)
	}
	for _, p := range g.Poles {
		out.Poles = append(out.Poles, 1+complex(d, 0)*p)
	}
	return out
}
