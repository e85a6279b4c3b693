package analysis

import (
	"math"
	"math/cmplx"
	"testing"
)

// TestDiskMarginCatchesCombinedChange: a loop (found by a random search over
// fourth-order loops, kept as test data) whose gain margin (6.6 dB) and
// phase margin (51°) both meet common rules of thumb, while a change of
// gain AND phase together, each well inside its margin, puts a closed-loop
// pole on the circle. At the peak of |S − 1/2| the change f = −1/L makes
// 1 + f·L = 0 there: the test checks that this f is smaller in gain than
// the gain margin and in phase than the phase margin, that it lies outside
// the disk {(1 + δ/2)/(1 − δ/2): |δ| < alpha} (as the disk margin's
// guarantee requires), and that the written disk requirement catches the
// loop while the classical ones pass.
func TestDiskMarginCatchesCombinedChange(t *testing.T) {
	src := "sample 1 ms\nblock p = 0.06461 * (z - 0.658) * (z + 0.249) / ((z - 1) * (z - 0.119) * (z^2 - 1.44343 z + 0.58522))\n" +
		"loop l {\n  forward p\n  require gain_margin >= 6 dB\n  require phase_margin >= 45 deg\n  require disk_margin >= 0.6\n}\n"
	r := checkSrc(t, src, nil)
	l := loopNamed(t, r, "l")
	if !l.Stable || l.Disk == nil || l.Margins.GainMarginDB == nil || l.Margins.PhaseMarginDeg == nil {
		t.Fatalf("loop not analysed as expected: stable %v, disk %+v", l.Stable, l.Disk)
	}
	gm, pm, alpha := *l.Margins.GainMarginDB, *l.Margins.PhaseMarginDeg, l.Disk.Alpha
	// numpy on 400,001 angles: alpha 0.549748 at θ = 0.403366 rad/sample.
	if math.Abs(alpha-0.549748) > 1e-6 {
		t.Errorf("alpha %.7g, numpy 0.549748", alpha)
	}
	L := l.Model.At(cmplx.Rect(1, l.Disk.PeakTheta))
	f := -1 / L
	gain, phase := 20*math.Log10(cmplx.Abs(f)), cmplx.Phase(f)*180/math.Pi
	if !(math.Abs(gain) < gm && math.Abs(phase) < pm) {
		t.Errorf("the destabilising change %.3g dB, %.3g° is not within GM %.3g dB and PM %.3g°", gain, phase, gm, pm)
	}
	// |δ| at the peak is 1/max|S − ½| = alpha, computed here through another
	// path (L = N/D, then δ): equal to rounding, so 1e-12 is allowed.
	if delta := 2 * (f - 1) / (f + 1); cmplx.Abs(delta) < alpha*(1-1e-12) {
		t.Errorf("f = %v lies inside the disk (|δ| = %g < alpha %g): the disk margin would be wrong", f, cmplx.Abs(delta), alpha)
	}
	var sawDisk bool
	for _, d := range r.Diagnostics {
		switch d.Code {
		case CodeGainMarginLow, CodePhaseMarginLow:
			t.Errorf("classical margin missed: %s", d.Message)
		case CodeDiskMarginLow:
			sawDisk = true
		}
	}
	if !sawDisk {
		t.Error("disk_margin >= 0.6 not reported as missed")
	}
	t.Logf("GM %.3g dB, PM %.3g°, alpha %.4g; gain %.3g dB with phase %.3g° together destabilise", gm, pm, alpha, gain, phase)
}
