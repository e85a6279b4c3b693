package pole

import (
	"math"
	"math/cmplx"
	"testing"
)

const tol = 1e-12

func near(a, b float64) bool {
	if math.IsInf(a, 0) || math.IsInf(b, 0) {
		return a == b
	}
	return math.Abs(a-b) <= tol*max(1, math.Abs(b))
}

// TestContinuousEquivalent builds z = e^{sT} from a known continuous pole
// s = −ζω ± iω√(1−ζ²) (standard second-order form, common practice) and
// reads ζ, ω, frequency and time constant back.
func TestContinuousEquivalent(t *testing.T) {
	const T, zeta, w = 0.01, 0.3, 2 * math.Pi * 12.5
	s := complex(-zeta*w, w*math.Sqrt(1-zeta*zeta))
	z := cmplx.Exp(s * T)
	in := Describe(z, T, 1e-9)
	wd := w * math.Sqrt(1-zeta*zeta)
	checks := []struct {
		name      string
		got, want float64
	}{
		{"Radius", in.Radius, math.Exp(-zeta * w * T)},
		{"AngleRad", in.AngleRad, wd * T},
		{"FreqHz", in.FreqHz, wd / (2 * math.Pi)},
		{"Damping", in.Damping, zeta},
		{"NaturalRadS", in.NaturalRadS, w},
		{"TimeConstantS", in.TimeConstantS, 1 / (zeta * w)},
	}
	for _, c := range checks {
		if !near(c.got, c.want) {
			t.Errorf("%s = %g, want %g", c.name, c.got, c.want)
		}
	}
	if in.Shape != Decaying || !in.Oscillating || in.Alternating {
		t.Errorf("flags %+v", in)
	}
	if got := in.ShapeText(); got != "decaying oscillation at 11.92 Hz" {
		t.Errorf("ShapeText %q", got)
	}
}

func TestSpecialPoles(t *testing.T) {
	const T = 0.1
	cases := []struct {
		z     complex128
		shape Shape
		text  string
		check func(Info) bool
	}{
		{0, Impulse, "single impulse (pure delay)", func(i Info) bool {
			return i.Damping == 1 && math.IsInf(i.NaturalRadS, 1) && i.TimeConstantS == 0
		}},
		{0.5, Decaying, "decaying exponentially", func(i Info) bool {
			// z = 0.5: s = ln(0.5)/T, ζ = 1, τ = −T/ln 0.5.
			return i.Damping == 1 && near(i.TimeConstantS, -T/math.Log(0.5)) && i.FreqHz == 0
		}},
		{-0.5, Decaying, "decaying, alternating sign each sample", func(i Info) bool {
			// Negative real pole: angle π, frequency the Nyquist 1/(2T).
			return i.Alternating && i.AngleRad == math.Pi && near(i.FreqHz, 1/(2*T))
		}},
		{complex(-0.5, math.Copysign(0, -1)), Decaying, "decaying, alternating sign each sample", func(i Info) bool {
			return i.AngleRad == math.Pi // −0 imaginary part still gives +π
		}},
		{1, Constant, "constant (on the unit circle)", func(i Info) bool {
			return math.IsInf(i.TimeConstantS, 1) && i.Damping == 0
		}},
		{-1, Constant, "constant amplitude, alternating sign each sample (on the unit circle)", nil},
		{cmplx.Rect(1, 2*math.Pi*3*T), Constant, "sustained oscillation at 3 Hz (on the unit circle)", nil},
		{cmplx.Rect(1.2, 2*math.Pi*3*T), Growing, "growing oscillation at 3 Hz", func(i Info) bool {
			// Growth: negative time constant −T/ln 1.2, negative damping.
			return near(i.TimeConstantS, -T/math.Log(1.2)) && i.Damping < 0
		}},
		{1.5, Growing, "growing exponentially", func(i Info) bool { return i.Damping == -1 }},
		{-2, Growing, "growing, alternating sign each sample", nil},
		{1 + 1e-12, Constant, "constant (on the unit circle)", nil},
	}
	for _, c := range cases {
		in := Describe(c.z, T, 1e-9)
		if in.Shape != c.shape || in.ShapeText() != c.text || (c.check != nil && !c.check(in)) {
			t.Errorf("z = %v: %+v, text %q", c.z, in, in.ShapeText())
		}
	}
}

func TestBadPeriod(t *testing.T) {
	for _, T := range []float64{0, -1, math.NaN(), math.Inf(1)} {
		in := Describe(complex(0.5, 0.5), T, 1e-9)
		if !math.IsNaN(in.FreqHz) || !math.IsNaN(in.TimeConstantS) || !math.IsNaN(in.NaturalRadS) {
			t.Errorf("T = %g: %+v", T, in)
		}
		if in.ShapeText() != "decaying oscillation" {
			t.Errorf("T = %g: text %q", T, in.ShapeText())
		}
	}
	in := Describe(cmplx.NaN(), 0.1, 1e-9)
	if !math.IsNaN(in.Radius) {
		t.Errorf("NaN pole: %+v", in)
	}
}

func TestShapeString(t *testing.T) {
	for s, w := range map[Shape]string{Impulse: "impulse", Decaying: "decaying", Constant: "constant", Growing: "growing", 9: "Shape(9)"} {
		if s.String() != w {
			t.Errorf("%d: %q", int(s), s.String())
		}
	}
	for f, w := range map[float64]string{12.5: "12.5", 3: "3", 1234.6: "1235", 0.25: "0.25", 2e7: "2e+07"} {
		if got := formatHz(f); got != w {
			t.Errorf("formatHz(%g) = %q, want %q", f, got, w)
		}
	}
}
