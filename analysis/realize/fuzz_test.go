package realize

import (
	"math"
	"math/rand"
	"testing"

	"ringside/analysis/internal/fuzzin"
)

// FuzzRealize feeds random blocks, structures and formats through Realize
// and the fixed-point machine: no panic; every output word inside the
// format; and, for a realization with finite headroom, no saturation for
// inputs up to MaxInput and outputs within the rounding-noise bound of the
// exact arithmetic (the documented saturation is the only nonlinearity).
func FuzzRealize(f *testing.F) {
	f.Add([]byte{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12})
	f.Add([]byte{200, 14, 3, 90, 91, 92, 93, 1, 1, 1, 1, 1, 1, 1, 1})
	f.Add([]byte{0, 0, 0, 0})
	f.Fuzz(fuzzOne)
}

func fuzzOne(t *testing.T, data []byte) {
	{
		in := fuzzin.New(data)
		st := Structure(in.Byte() % 3)
		kind := in.Byte()
		var fm Format
		switch kind % 4 {
		case 0:
			fm = Format{Kind: Float32}
		case 1:
			fm = Format{Kind: Float64}
		default:
			m := int(in.Byte() % 40)
			n := int(in.Byte() % 64)
			if 1+m+n > MaxWord {
				n = MaxWord - 1 - m
			}
			fm = Format{Kind: Fixed, M: m, N: n}
		}
		T := fuzzin.SamplePeriod(in.Byte())
		tf := in.Rational(6)
		r, err := Realize(tf, st, fm, T, 1e-6)
		if err != nil {
			return
		}
		r.TestVector()
		if fac := r.Factored(); len(fac.Poles) != len(r.Poles) || len(fac.Zeros) > len(fac.Poles) {
			t.Fatalf("factored form has %d poles and %d zeros, the structure %d poles", len(fac.Poles), len(fac.Zeros), len(r.Poles))
		}
		if fm.Kind != Fixed {
			return
		}
		m := NewMachine(r)
		rng := rand.New(rand.NewSource(int64(in.Byte())))
		for k := 0; k < 200; k++ {
			x := rng.Int63n(1<<62) - 1<<61
			if y := m.Step(x >> (64 - fm.Word())); y < fm.RawMin() || y > fm.RawMax() {
				t.Fatalf("output %d outside the word of %v", y, fm)
			}
		}
		h := r.Headroom
		if h.Bounded && !h.Truncated && h.MaxInput > fm.Quantum() && allFinite(h) && fm.N <= 40 {
			checkAgainstExact(t, r, rng, 300)
		}
	}
}

func allFinite(h *Headroom) bool {
	for _, n := range h.Nodes {
		if math.IsInf(n.L1, 0) || math.IsNaN(n.L1) || n.L1 > 1e12 || n.Noise > 1e6 {
			return false
		}
	}
	return true
}
