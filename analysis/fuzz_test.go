package analysis

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand"
	"strconv"
	"strings"
	"testing"
	"time"

	"ringside/syntax"
)

// fuzzCheckLimit bounds one Check of a fuzzed file of at most a few loops;
// a full check of a 10-loop corpus takes ~0.1 s, so anything near this is a
// hang or a runaway search.
const fuzzCheckLimit = 20 * time.Second

// fuzzReader decodes fuzz bytes; zeros follow when they run out.
type fuzzReader struct {
	b []byte
	i int
}

func (f *fuzzReader) byte() byte {
	if f.i >= len(f.b) {
		return 0
	}
	c := f.b[f.i]
	f.i++
	return c
}

// number decodes a coefficient as .loop text: ordinary values, zero, and
// huge, tiny and out-of-range literals (the format has no NaN or Inf
// literals; 1e400 is how a user writes an overflow).
func (f *fuzzReader) number() string {
	sel := f.byte()
	sign := ""
	if sel&0x80 != 0 {
		sign = "-"
	}
	switch sel & 0x0f {
	case 0:
		return "0"
	case 1:
		return sign + "1e400"
	case 2:
		return sign + "1e-400"
	case 3:
		return sign + "1.5e300"
	case 4:
		return sign + "2.5e-300"
	case 5:
		return sign + "1"
	default:
		m := float64(int8(f.byte())) / 16
		e := int(f.byte()%7) - 3
		return sign + strconv.FormatFloat(math.Abs(m*math.Pow(10, float64(e))), 'g', -1, 64)
	}
}

// poly writes a polynomial in v: by coefficients, or as a product of
// factors (v - r) with repeats (roots on the unit circle are common: 1, -1).
func (f *fuzzReader) poly(v string) string {
	mode := f.byte()
	n := int(f.byte() % 7)
	var terms []string
	if mode%2 == 0 {
		for k := n; k >= 0; k-- {
			c := f.number()
			switch k {
			case 0:
				terms = append(terms, c)
			case 1:
				terms = append(terms, c+"*"+v)
			default:
				terms = append(terms, fmt.Sprintf("%s*%s^%d", c, v, k))
			}
		}
		return "(" + strings.Join(terms, " + ") + ")"
	}
	s := f.number()
	for k := 0; k < n; k++ {
		r := []string{"1", "-1", "0", "0.5", f.number()}[f.byte()%5]
		p := 1 + f.byte()%3
		s += fmt.Sprintf(" * (%s - %s)^%d", v, r, p)
	}
	return "(" + s + ")"
}

// fuzzLoopFile builds a .loop file from fuzz bytes: a sample line, gains,
// blocks in s (with a method) or z (possibly sharing a factor between
// numerator and denominator, and using gains), loops over them, and
// requirements, and realize lines; the rest of the bytes are appended as
// free text.
func fuzzLoopFile(data []byte) []byte {
	f := &fuzzReader{b: data}
	var b strings.Builder
	periods := []string{"1 ms", "10 kHz", "1 s", "0 ms", "1e-9 s", "1e300 s", "100 us", "1e400 s"}
	fmt.Fprintf(&b, "sample %s\n", periods[f.byte()%8])
	ng := int(f.byte() % 3)
	for i := 0; i < ng; i++ {
		fmt.Fprintf(&b, "gain k%d = %s", i, f.number())
		switch f.byte() % 4 {
		case 1:
			fmt.Fprintf(&b, " max %s", f.number())
		case 2:
			fmt.Fprintf(&b, " min %s max %s", f.number(), f.number())
		case 3:
			fmt.Fprintf(&b, " vary %s to %s", f.number(), f.number())
		}
		b.WriteString("\n")
	}
	methods := []string{"zoh", "foh", "tustin", "matched", "tustin prewarp 3 Hz", "zoh"}
	nb := 1 + int(f.byte()%3)
	for i := 0; i < nb; i++ {
		sel := f.byte()
		v := "z"
		if sel%3 == 0 {
			v = "s"
		}
		num, den := f.poly(v), f.poly(v)
		if sel&0x10 != 0 {
			common := f.poly(v)
			num, den = "("+num+" * "+common+")", "("+den+" * "+common+")"
		}
		if ng > 0 && sel&0x20 != 0 {
			g := fmt.Sprintf("k%d", f.byte()%byte(ng))
			if sel&0x40 != 0 {
				g = g + " * " + g // nonlinear in the gain
			}
			num = g + " * " + num
		}
		fmt.Fprintf(&b, "block b%d = %s / %s", i, num, den)
		if v == "s" || sel&0x80 != 0 {
			fmt.Fprintf(&b, " via %s", methods[f.byte()%6])
		}
		b.WriteString("\n")
	}
	metrics := []string{"gain_margin >= 6 dB", "phase_margin >= 45 deg", "radius <= 0.98", "damping >= 0.3",
		"overshoot <= 10 %", "settling <= 40 ms", "delay_margin >= 2 samples", "peak_sensitivity <= 6 dB"}
	nl := 1 + int(f.byte()%2)
	for i := 0; i < nl; i++ {
		fmt.Fprintf(&b, "loop l%d {\n  forward", i)
		for j, n := 0, 1+int(f.byte()%3); j < n; j++ {
			if ng > 0 && f.byte()%4 == 0 {
				fmt.Fprintf(&b, " k%d", f.byte()%byte(ng))
			} else {
				fmt.Fprintf(&b, " b%d", f.byte()%byte(nb))
			}
		}
		b.WriteString("\n")
		if sel := f.byte(); sel%3 == 1 {
			fmt.Fprintf(&b, "  feedback b%d\n", f.byte()%byte(nb))
		} else if sel%3 == 2 {
			b.WriteString("  sign positive\n")
		}
		for j, n := 0, int(f.byte()%3); j < n; j++ {
			fmt.Fprintf(&b, "  require %s\n", metrics[f.byte()%8])
		}
		b.WriteString("}\n")
	}
	structures := []string{"direct", "sections", "delta", "tiers"}
	formats := []string{"q15", "q1.14", "q3.12", "float32", "float64", "q31.32", "q0.3", "q40.30"}
	for i, n := 0, int(f.byte()%3); i < n; i++ {
		fmt.Fprintf(&b, "realize b%d as %s in %s\n", f.byte()%byte(nb), structures[f.byte()%4], formats[f.byte()%8])
	}
	b.Write(data[min(f.i, len(data)):])
	return []byte(b.String())
}

// FuzzCheck runs the whole analysis on generated .loop files and checks its
// contract: it returns within fuzzCheckLimit without panicking, every
// diagnostic's span lies inside the file, and no figure it reports (margins,
// crossovers, step figures, radii, gain limits, requirement values) is NaN
// or infinite (requirement values may be +Inf where documented).
func FuzzCheck(f *testing.F) {
	f.Add([]byte{})
	// sample 1 ms, k0 = 1, b0 = 0/(z+1)^2, loop of k0 alone: an algebraic loop.
	f.Add([]byte{0, 1, 5, 0, 1, 1, 5, 0, 0, 1, 1, 5, 1, 1, 1, 0, 0, 1, 0, 0})
	f.Add([]byte("\x00\x01\x83\x00\x01\x0f\x00\x00\x03\x00\x00\x00\x03\x00\x04\x00\x00\x00gain"))
	// Random bytes from a fixed seed reach the generator's other branches
	// (s blocks with methods, common factors, gains inside blocks, feedback).
	rng := rand.New(rand.NewSource(1))
	for range 8 {
		b := make([]byte, 80)
		rng.Read(b)
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		src := fuzzLoopFile(data)
		env := Env{
			Roots: []string{"/fuzz"},
			Read:  func(string) ([]byte, error) { return nil, errors.New("no other files in a fuzz run") },
		}
		var res *Result
		done := make(chan struct{})
		go func() {
			defer close(done)
			res = Check(context.Background(), "/fuzz/f.loop", src, env)
		}()
		select {
		case <-done:
		case <-time.After(fuzzCheckLimit):
			t.Fatalf("Check did not return within %v on\n%s", fuzzCheckLimit, src)
		}
		for _, d := range res.Diagnostics {
			if d.Span.From < 0 || d.Span.To < d.Span.From || int(d.Span.To) > len(src) {
				t.Fatalf("diagnostic %s %q has span %v outside the %d-byte file\n%s", d.Code, d.Message, d.Span, len(src), src)
			}
			if strings.Contains(d.Message, "NaN") || strings.Contains(d.Message, "Inf") {
				t.Fatalf("diagnostic %s says NaN: %q\n%s", d.Code, d.Message, src)
			}
		}
		bad := func(what string, v *float64) {
			if v != nil && (math.IsNaN(*v) || math.IsInf(*v, 0)) {
				t.Fatalf("%s = %v\n%s", what, *v, src)
			}
		}
		for _, l := range res.Loops {
			if !l.OK {
				continue
			}
			m := l.Margins
			for _, p := range []struct {
				n string
				v *float64
			}{{"gain margin", m.GainMarginDB}, {"phase crossover", m.PhaseCrossoverHz}, {"phase margin", m.PhaseMarginDeg},
				{"gain crossover", m.GainCrossoverHz}, {"delay margin", m.DelayMarginS}, {"delay margin samples", m.DelayMarginSamples},
				{"peak sensitivity", m.PeakSensitivityDB}, {"peak sensitivity Hz", m.PeakSensitivityHz}} {
				bad(l.Name+": "+p.n, p.v)
			}
			if d := l.Disk; d != nil {
				bad(l.Name+": disk margin", &d.Alpha)
				bad(l.Name+": disk margin phase", &d.PhaseDeg)
			}
			if rb := l.Robust; rb != nil && rb.Worst != nil {
				if math.IsNaN(rb.WorstRadius) {
					t.Fatalf("%s: worst radius NaN over the range\n%s", l.Name, src)
				}
				bad(l.Name+": smallest gain margin over the range", rb.GainMarginDB)
				bad(l.Name+": smallest phase margin over the range", rb.PhaseMarginDeg)
			}
			r, md := l.MaxRadius, l.MinDamping
			bad(l.Name+": max radius", &r)
			if math.IsNaN(md) {
				t.Fatalf("%s: min damping NaN\n%s", l.Name, src)
			}
			for _, p := range l.Poles {
				if math.IsNaN(p.Radius) || math.IsNaN(p.AngleRad) || math.IsNaN(p.Damping) {
					t.Fatalf("%s: pole %+v\n%s", l.Name, p, src)
				}
			}
			if s := l.Step; s != nil {
				for _, v := range []float64{s.Final, s.OvershootPct, s.RiseTimeS, s.SettlingS, s.SteadyStateError} {
					bad(l.Name+": step figure", &v)
				}
			}
			for _, q := range l.Requirements {
				// +Inf is the documented value of a margin with no crossing
				// (unlimited) and of the peak sensitivity with a closed-loop
				// pole on the circle; NaN and −Inf never are.
				if q.Got != nil && (math.IsNaN(*q.Got) || math.IsInf(*q.Got, -1)) {
					t.Fatalf("%s: requirement %s got %v\n%s", l.Name, q.Metric, *q.Got, src)
				}
			}
		}
		for _, g := range res.Gains {
			if lim := g.Limits; lim != nil {
				bad(g.Name+": stable min", lim.StableMin)
				bad(g.Name+": stable max", lim.StableMax)
				bad(g.Name+": safe max", lim.SafeMax)
			}
		}
		for _, blk := range res.Blocks {
			// By design (Block.DCGain): a block whose numerator and
			// denominator both vanish at z = 1 has no DC gain; it is NaN
			// inside, null in the JSON, "undefined" in text (seeds
			// c7c6bc8531f22328, e9dbb98b9d47a763).
			if blk.OK && blk.TF.Num.Eval(1) == 0 && blk.TF.Den.Eval(1) == 0 {
				continue
			}
			if blk.OK && math.IsNaN(blk.DCGain) {
				t.Fatalf("block %s: DC gain NaN\n%s", blk.Name, src)
			}
		}
	})
}

// FuzzFix applies every fix that Check offers on generated files (with a
// byte order mark, CR or CRLF line ends when the fuzzer asks) and checks
// the round trip on the whole re-parsed file, independently of the
// line-local syntax.CheckFix that admitted the fix: no new syntax error,
// and every statement the fix does not touch reads back the same.
func FuzzFix(f *testing.F) {
	f.Add(byte(1), []byte{})
	f.Add(byte(2), []byte("\x00\x01\x83\x00\x01\x0f\x00\x00\x03\x00\x00\x00\x03\x00\x04\x00\x00\x00gain"))
	rng := rand.New(rand.NewSource(2))
	for i := range 8 {
		b := make([]byte, 80)
		rng.Read(b)
		f.Add(byte(i), b)
	}
	f.Fuzz(func(t *testing.T, shape byte, data []byte) {
		src := string(fuzzLoopFile(data))
		if shape&1 != 0 {
			src = "\ufeff" + src
		}
		switch shape / 2 % 3 {
		case 1:
			src = strings.ReplaceAll(src, "\n", "\r")
		case 2:
			src = strings.ReplaceAll(src, "\n", "\r\n")
		}
		env := Env{Roots: []string{"/fuzz"}, Read: func(string) ([]byte, error) { return nil, errors.New("no other files") }}
		res := Check(context.Background(), "/fuzz/f.loop", []byte(src), env)
		before, errsBefore := syntax.Parse("", []byte(src))
		keysBefore := syntax.StmtKeys(before, nil)
		for _, d := range res.Diagnostics {
			for _, fx := range d.Fixes {
				out := applyEdits(src, fx.Edits)
				after, errsAfter := syntax.Parse("", []byte(out))
				if len(errsAfter) > len(errsBefore) {
					t.Fatalf("fix %q of %s adds a syntax error %v\n%q\n%q", fx.Title, d.Code, errsAfter[0], src, out)
				}
				keysAfter := syntax.StmtKeys(after, nil)
				pre, suf := 0, 0
				for pre < len(keysBefore) && pre < len(keysAfter) && keysBefore[pre] == keysAfter[pre] {
					pre++
				}
				for suf < len(keysBefore)-pre && suf < len(keysAfter)-pre && keysBefore[len(keysBefore)-1-suf] == keysAfter[len(keysAfter)-1-suf] {
					suf++
				}
				for i := pre; i < len(keysBefore)-suf; i++ {
					st := before.Stmts[i]
					hit := false
					for _, e := range fx.Edits {
						hit = hit || e.Span.From <= st.End() && st.Pos() <= e.Span.To
					}
					if !hit {
						t.Fatalf("fix %q of %s changes statement %d, which it does not edit\n%q\n%q", fx.Title, d.Code, i, src, out)
					}
				}
				Check(context.Background(), "/fuzz/f.loop", []byte(out), env)
			}
		}
	})
}
