package realize

import (
	"errors"
	"math"
	"math/big"
	"math/cmplx"
	"math/rand"
	"testing"

	"ringside/analysis/poly"
)

func TestParseFormat(t *testing.T) {
	for in, want := range map[string]Format{
		"float64": {Kind: Float64}, "float32": {Kind: Float32},
		"q15": {Kind: Fixed, M: 0, N: 15}, "q31": {Kind: Fixed, M: 0, N: 31},
		"q1.14": {Kind: Fixed, M: 1, N: 14}, "q3.12": {Kind: Fixed, M: 3, N: 12}, "q31.32": {Kind: Fixed, M: 31, N: 32},
	} {
		if got, err := ParseFormat(in); err != nil || got != want {
			t.Errorf("ParseFormat(%q) = %v, %v; want %v", in, got, err, want)
		}
	}
	for _, bad := range []string{"", "q", "q1.", "q.5", "q-1.2", "q1.2.3", "float16", "q32.32", "q1.14e3", "Q15"} {
		if _, err := ParseFormat(bad); err == nil {
			t.Errorf("ParseFormat(%q) accepted", bad)
		}
	}
}

// Rounding is to the nearest multiple of 2^-N with ties away from zero
// (the contract), not to even: 0.375 = 1.5 quanta gives 2, 0.625 = 2.5 gives 3.
func TestRoundTiesAwayFromZero(t *testing.T) {
	f := Format{Kind: Fixed, M: 1, N: 2} // quantum 0.25
	for v, want := range map[float64]int64{0.125: 1, -0.125: -1, 0.375: 2, -0.375: -2, 0.625: 3, 0.1: 0, 1.74: 7, -2: -8} {
		if _, raw, err := f.Round("c", v); err != nil || raw != want {
			t.Errorf("Round(%v) = %d, %v; want %d", v, raw, err, want)
		}
	}
	// 2 − 2^-3 rounds up to 2, outside q1.2 [−2, 1.75]: two integer bits.
	_, _, err := f.Round("a1", 1.9)
	var re *RangeError
	if !errors.As(err, &re) || re.NeedM != 2 || re.Name != "a1" {
		t.Fatalf("Round(1.9) error %v, want a RangeError needing 2 integer bits", err)
	}
	if _, _, err := f.Round("a1", -2.2); err == nil {
		t.Error("−2.2 (raw −9) fits q1.2?")
	}
}

func TestDeltaExponent(t *testing.T) {
	// 2^-13 = 122 µs is nearer 100 µs than 2^-14 = 61 µs on a log scale.
	for T, want := range map[float64]int{1e-4: -13, 1e-3: -10, 1: 0, 0.75: 0, 0.7: -1, 5e-5: -14} {
		if got := DeltaExponent(T); got != want {
			t.Errorf("DeltaExponent(%g) = %d, want %d", T, got, want)
		}
	}
}

// The sections' product is the block (before rounding), each complex pole
// pair sits in one section, and the cascade runs by increasing pole radius.
func TestSectionsRule(t *testing.T) {
	rng := rand.New(rand.NewSource(3))
	for i := 0; i < 200; i++ {
		tf := randomTF(rng, 1+rng.Intn(7))
		r, err := Realize(tf, Sections, Format{Kind: Float64}, 1e-3, 1e-6)
		if err != nil {
			t.Fatal(err)
		}
		prod := r.TF
		scale := tf.Den.Lead()
		for k := range tf.Den {
			if math.Abs(prod.Den[k]*scale-tf.Den[k]) > 1e-10 {
				t.Fatalf("case %d: den %v, product %v", i, tf.Den, prod.Den)
			}
		}
		for k := range tf.Num {
			if math.Abs(prod.Num[k]*scale-tf.Num[k]) > 1e-9*math.Max(1, math.Abs(tf.Num[k])) {
				t.Fatalf("case %d: num %v, product %v", i, tf.Num, prod.Num)
			}
		}
		last := 0.0
		for _, s := range r.Sections {
			if s.Order() > 2 || len(s.B) != len(s.A) {
				t.Fatalf("case %d: section %v", i, s)
			}
			rad := 0.0
			if s.Order() == 2 {
				rad = math.Sqrt(math.Abs(s.A[2]))
				if disc := s.A[1]*s.A[1] - 4*s.A[2]; disc >= 0 {
					rad = math.Max(math.Abs(-s.A[1]+math.Sqrt(disc)), math.Abs(-s.A[1]-math.Sqrt(disc))) / 2
				}
			} else if s.Order() == 1 {
				rad = math.Abs(s.A[1])
			}
			if rad < last-1e-12 {
				t.Fatalf("case %d: sections not by increasing radius: %v", i, r.Sections)
			}
			last = rad
		}
	}
}

// The fixed-point arithmetic stays within the headroom's rounding-noise
// bound of the exact arithmetic on the same rounded coefficients, and
// never saturates for inputs up to MaxInput.
func TestFixedWithinNoiseBound(t *testing.T) {
	rng := rand.New(rand.NewSource(5))
	for i := 0; i < 60; i++ {
		tf := randomTF(rng, 1+rng.Intn(4))
		f := Format{Kind: Fixed, M: 3 + rng.Intn(3), N: 12 + rng.Intn(12)}
		r, err := Realize(tf, Structure(rng.Intn(2)), f, 1e-3, 1e-6)
		if err != nil || !r.Headroom.Bounded {
			continue
		}
		checkAgainstExact(t, r, rng, 2000)
	}
}

func checkAgainstExact(t *testing.T, r *Realization, rng *rand.Rand, n int) {
	t.Helper()
	h := r.Headroom
	m := NewMachine(r)
	exact := newExact(r)
	q := r.Format.Quantum()
	out := h.Nodes[len(h.Nodes)-1-r.Sections[len(r.Sections)-1].Order()]
	for k := 0; k < n; k++ {
		x := (2*rng.Float64() - 1) * h.MaxInput
		raw := int64(math.Round(x / q))
		if math.Abs(float64(raw)*q) > h.MaxInput {
			raw = 0
		}
		yRaw := m.Step(raw)
		y := new(big.Float).SetPrec(exactPrec).SetInt64(yRaw)
		y.Mul(y, bf(q))
		xe := new(big.Float).SetPrec(exactPrec).SetInt64(raw)
		ye := exact.step(xe.Mul(xe, bf(q)))
		if m.Saturations > 0 {
			t.Fatalf("%v %v: saturated at sample %d with |x| ≤ %g", r.Structure, r.Format, k, h.MaxInput)
		}
		d, _ := new(big.Float).Sub(y, ye).Float64()
		if math.Abs(d) > out.Noise*(1+1e-9)+1e-12 {
			t.Fatalf("%v %v: sample %d: fixed %v, exact %v, bound %g", r.Structure, r.Format, k, y, ye, out.Noise)
		}
	}
}

func TestRoundShift(t *testing.T) {
	for _, c := range []struct {
		v    int64
		n    int
		want int64
	}{{5, 1, 3}, {-5, 1, -3}, {4, 1, 2}, {6, 2, 2}, {-6, 2, -2}, {5, 2, 1}, {math.MinInt64, 63, -1}, {math.MaxInt64, 63, 1}, {math.MinInt64, 1, -1 << 62}} {
		if got := roundShift(c.v, c.n); got != c.want {
			t.Errorf("roundShift(%d, %d) = %d, want %d", c.v, c.n, got, c.want)
		}
	}
	if p, ok := satMul(math.MinInt64, -1); ok || p != math.MaxInt64 {
		t.Errorf("satMul(min, −1) = %d, %v", p, ok)
	}
	if p, ok := satMul(-1<<31, 1<<32); !ok || p != math.MinInt64 {
		t.Errorf("satMul(−2^31, 2^32) = %d, %v; want −2^63 exactly", p, ok)
	}
}

func TestUnstableHasNoHeadroom(t *testing.T) {
	tf := poly.R(poly.Const(1), poly.FromRoots([]complex128{1}))
	r, err := Realize(tf, Direct, Format{Kind: Fixed, M: 1, N: 14}, 1e-3, 1e-6)
	if err != nil || r.Stable || r.Headroom.Bounded || r.Headroom.MaxInput != 0 {
		t.Fatalf("integrator: %v %+v", err, r)
	}
	_ = cmplx.Abs
}

// A complex pair whose mean coincides with a triple root, (z + 1)³(z² + 2z
// + 2): the rounded structure's poles are still −1 ± j and the triple −1
// (by construction), not a double root at the pair's mean, and the factored
// form's error bound covers any difference from the cluster means.
func TestPairBesideTripleRoot(t *testing.T) {
	den := poly.New(2, 8, 13, 11, 5, 1) // (z+1)^3 (z^2+2z+2), expanded by hand
	r, err := Try(poly.R(poly.Const(1), den), Direct, Format{Kind: Float64}, 1e-3, 1e-6)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []complex128{complex(-1, 1), complex(-1, -1)} {
		if d := nearestDist(r.Poles, want); d > 1e-6 {
			t.Errorf("pole %v missing (nearest at %g): %v", want, d, r.Poles)
		}
	}
	f := r.Factored()
	for _, want := range []complex128{complex(-1, 1), complex(-1, -1), -1} {
		if d := nearestDist(f.Poles, want); d > 1e-6+f.Err {
			t.Errorf("factored pole %v missing beyond the error bound %g: %v", want, f.Err, f.Poles)
		}
	}
}
