package plot

import (
	"testing"
)

// In q0.3 (steps of 1/8) the pole 0.9 rounds to 7/8 = 0.875 and the gain
// 0.1 to 1/8, so the loop z − 0.875 + 0.125 closes at z = 0.75 (ideal:
// z − 0.9 + 0.1, z = 0.8); the z-plane shows both realized sets.
func TestRealizedPolesMarked(t *testing.T) {
	res := checkFile(t, "testdata/realized.loop")
	l := loopNamed(t, res, "coarse")
	rounded, closed := realizedPoles(l)
	if len(rounded) != 1 || rounded[0] != 0.875 || len(closed) != 1 || closed[0] != 0.75 {
		t.Fatalf("rounded %v, realized closed loop %v; want [0.875] and [0.75]", rounded, closed)
	}
	_, doc, _ := drawn(t, res, l)
	for _, s := range []string{"rounded block pole (realize)", "closed-loop pole, realized blocks"} {
		if !hasText(doc, s) {
			t.Errorf("legend %q missing", s)
		}
	}
	res = checkFile(t, "testdata/three.loop")
	_, doc, _ = drawn(t, res, loopNamed(t, res, "arm_wobble"))
	if hasText(doc, "rounded block pole (realize)") {
		t.Error("a loop without realized blocks shows rounded poles")
	}
}
