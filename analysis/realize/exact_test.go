package realize

import "math/big"

// exactMachine runs the rounded structure in 512-bit floating point: for
// the few hundred samples of a test, exact for every practical purpose,
// so that it can serve as the reference of the fixed-point rounding bound
// even where float64 itself would round (values of 1e10 and more).
type exactMachine struct {
	r      *Realization
	states [][]*big.Float
}

const exactPrec = 512

func newExact(r *Realization) *exactMachine {
	m := &exactMachine{r: r}
	for _, s := range r.Sections {
		st := make([]*big.Float, s.Order())
		for i := range st {
			st[i] = new(big.Float).SetPrec(exactPrec)
		}
		m.states = append(m.states, st)
	}
	return m
}

func bf(v float64) *big.Float { return new(big.Float).SetPrec(exactPrec).SetFloat64(v) }

func (m *exactMachine) step(x *big.Float) *big.Float {
	d := bf(m.r.Delta())
	for si, s := range m.r.Sections {
		st := m.states[si]
		n := s.Order()
		y := new(big.Float).SetPrec(exactPrec).Mul(bf(s.B[0]), x)
		if n > 0 {
			y.Add(y, st[0])
		}
		for i := 1; i <= n; i++ {
			v := new(big.Float).SetPrec(exactPrec).Mul(bf(s.B[i]), x)
			v.Sub(v, new(big.Float).SetPrec(exactPrec).Mul(bf(s.A[i]), y))
			if i < n {
				v.Add(v, st[i])
			}
			if m.r.Structure == Delta {
				v.Mul(v, d)
				v.Add(v, st[i-1])
			}
			st[i-1] = v
		}
		x = y
	}
	return x
}
