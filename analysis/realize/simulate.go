package realize

import (
	"math"
)

// The target's arithmetic, step by step. Every structure is a cascade of
// transposed direct form II sections (one for direct and delta); for section
// coefficients B, A of order n, input x and states s1 … sn:
//
//	y      = B0·x + s1
//	z form: si ← Bi·x − Ai·y + s(i+1)            (s(n+1) = 0)
//	δ form: si ← si + Δ·(Bi·x − Ai·y + s(i+1))   (old s(i+1))
//
// and y is the next section's input. Floating point evaluates exactly this
// in float64 or float32, each operation rounded to the type (no fused
// multiply-add). Fixed point (qM.N; x, y and coefficients raw words with N
// fraction bits):
//   - products and sums in a 64-bit accumulator with 2N fraction bits, which
//     saturates at the int64 range instead of wrapping;
//   - states are kept in the accumulator (2N fraction bits);
//   - each section's y is the accumulator rounded to N fraction bits, to
//     nearest with ties away from zero, and saturated to the word range
//     [−2^(M+N), 2^(M+N) − 1];
//   - the δ form's product by Δ = 2^k is a shift by k bits, rounded the same
//     way (saturating when k > 0).

// Machine runs the fixed-point arithmetic on raw input words.
type Machine struct {
	r      *Realization
	states [][]int64
	// Saturations counts every clamp (accumulator or word) so far.
	Saturations int
}

// NewMachine returns the fixed-point machine in its reset state.
func NewMachine(r *Realization) *Machine {
	m := &Machine{r: r}
	for _, s := range r.Sections {
		m.states = append(m.states, make([]int64, s.Order()))
	}
	return m
}

// Step feeds one raw input word and returns the raw output word.
func (m *Machine) Step(x int64) int64 {
	f := m.r.Format
	for si, s := range m.r.Sections {
		raw, st := m.r.Raw[si], m.states[si]
		n := s.Order()
		acc := m.mul(raw[0], x)
		if n > 0 {
			acc = m.add(acc, st[0])
		}
		y := m.clampWord(roundShift(acc, f.N), f)
		for i := 1; i <= n; i++ {
			v := m.sub(m.mul(raw[i], x), m.mul(raw[n+i], y))
			if i < n {
				v = m.add(v, st[i])
			}
			if m.r.Structure == Delta {
				v = m.add(st[i-1], m.scale(v, m.r.DeltaExp))
			}
			st[i-1] = v
		}
		x = y
	}
	return x
}

func (m *Machine) mul(a, b int64) int64 {
	p, ok := satMul(a, b)
	if !ok {
		m.Saturations++
	}
	return p
}

func (m *Machine) add(a, b int64) int64 {
	s, ok := satAdd(a, b)
	if !ok {
		m.Saturations++
	}
	return s
}

func (m *Machine) sub(a, b int64) int64 {
	s, ok := satSub(a, b)
	if !ok {
		m.Saturations++
	}
	return s
}

func (m *Machine) scale(v int64, k int) int64 {
	if k <= 0 {
		return roundShift(v, -k)
	}
	p, ok := satShl(v, k)
	if !ok {
		m.Saturations++
	}
	return p
}

func (m *Machine) clampWord(v int64, f Format) int64 {
	switch {
	case v > f.RawMax():
		m.Saturations++
		return f.RawMax()
	case v < f.RawMin():
		m.Saturations++
		return f.RawMin()
	}
	return v
}

// roundShift divides by 2^n, rounding to nearest with ties away from zero.
func roundShift(v int64, n int) int64 {
	if n <= 0 {
		return v
	}
	if n > 63 {
		return 0
	}
	u := uint64(v)
	if v < 0 {
		u = -u // |v|, also for the most negative value (2^63)
	}
	q := (u + 1<<(n-1)) >> n // u ≤ 2^63, so no wrap
	if v < 0 {
		return -int64(q)
	}
	return int64(q)
}

func satMul(a, b int64) (int64, bool) {
	if a == 0 || b == 0 {
		return 0, true
	}
	neg := (a < 0) != (b < 0)
	ua, ub := mag(a), mag(b)
	lim := uint64(math.MaxInt64)
	if neg {
		lim++
	}
	if ua > lim/ub {
		if neg {
			return math.MinInt64, false
		}
		return math.MaxInt64, false
	}
	p := ua * ub
	if neg {
		return int64(-p), true // -p wraps to the two's complement, exact for p ≤ 2^63
	}
	return int64(p), true
}

func mag(a int64) uint64 {
	if a < 0 {
		return -uint64(a)
	}
	return uint64(a)
}

func satAdd(a, b int64) (int64, bool) {
	switch {
	case b > 0 && a > math.MaxInt64-b:
		return math.MaxInt64, false
	case b < 0 && a < math.MinInt64-b:
		return math.MinInt64, false
	}
	return a + b, true
}

func satSub(a, b int64) (int64, bool) {
	switch {
	case b < 0 && a > math.MaxInt64+b:
		return math.MaxInt64, false
	case b > 0 && a < math.MinInt64+b:
		return math.MinInt64, false
	}
	return a - b, true
}

func satShl(v int64, k int) (int64, bool) {
	if k >= 63 {
		if v == 0 {
			return 0, true
		}
		if v > 0 {
			return math.MaxInt64, false
		}
		return math.MinInt64, false
	}
	lim := int64(math.MaxInt64) >> k
	switch {
	case v > lim:
		return math.MaxInt64, false
	case v < -lim-1:
		return math.MinInt64, false
	}
	return v << k, true
}

// floatMachine runs the floating-point arithmetic in T.
type floatMachine[T float32 | float64] struct {
	b, a   [][]T
	states [][]T
	delta  T
	isD    bool
}

func newFloat[T float32 | float64](r *Realization) *floatMachine[T] {
	m := &floatMachine[T]{delta: T(r.Delta()), isD: r.Structure == Delta}
	for _, s := range r.Sections {
		m.b = append(m.b, conv[T](s.B))
		m.a = append(m.a, conv[T](s.A))
		m.states = append(m.states, make([]T, s.Order()))
	}
	return m
}

func conv[T float32 | float64](v []float64) []T {
	out := make([]T, len(v))
	for i, x := range v {
		out[i] = T(x)
	}
	return out
}

// step: each product is converted to T explicitly, which forbids the
// compiler from fusing it with the following sum (Go spec, "Arithmetic
// operators"), as C99 compiled without contraction does.
func (m *floatMachine[T]) step(x T) T {
	for si, b := range m.b {
		a, st := m.a[si], m.states[si]
		n := len(a) - 1
		y := T(b[0] * x)
		if n > 0 {
			y += st[0]
		}
		for i := 1; i <= n; i++ {
			v := T(b[i]*x) - T(a[i]*y)
			if i < n {
				v += st[i]
			}
			if m.isD {
				v = st[i-1] + T(m.delta*v)
			}
			st[i-1] = v
		}
		x = y
	}
	return x
}

// TestInput is the constant input of the exported test vector, and
// TestLength its number of samples (loop-format.md, "Export").
const (
	TestInput  = 0.25
	TestLength = 64
)

// TestVector is what the realized block returns for TestLength samples of
// TestInput from reset: raw words for fixed point (as float64, exact up to
// 2^53; Raw gives them as integers), values for floats.
func (r *Realization) TestVector() (values []float64, raw []int64) {
	switch r.Format.Kind {
	case Fixed:
		m := NewMachine(r)
		x, _, _ := r.Format.Round("input", TestInput)
		xr := int64(math.Round(math.Ldexp(x, r.Format.N)))
		for range TestLength {
			y := m.Step(xr)
			raw = append(raw, y)
			values = append(values, float64(y))
		}
	case Float32:
		m := newFloat[float32](r)
		for range TestLength {
			values = append(values, float64(m.step(TestInput)))
		}
	default:
		m := newFloat[float64](r)
		for range TestLength {
			values = append(values, m.step(TestInput))
		}
	}
	return values, raw
}
