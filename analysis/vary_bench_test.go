package analysis

import (
	"context"
	"fmt"
	"strings"
	"testing"
)

// varyBenchSrc is one pump loop whose plant gain k, leakage c and pole a may
// vary (affinely, jointly: the edge theorem applies); the first n of them
// vary, the others are fixed at their nominal values.
func varyBenchSrc(n int) string {
	ranges := []string{" vary 30 to 50", " vary 0 to 2", " vary 0.93 to 0.97"}
	var b strings.Builder
	b.WriteString("sample 1 ms\n")
	for i, g := range []string{"k = 40", "c = 1", "a = 0.95"} {
		b.WriteString("gain " + g)
		if i < n {
			b.WriteString(ranges[i])
		}
		b.WriteString("\n")
	}
	b.WriteString("gain kc = 0.5\nblock plant = (k * 0.001z + c * 0.0001) / (z * (z - a))\nblock ctrl = kc * z / (z - 1)\n" +
		"loop pump {\n  forward ctrl plant\n}\n")
	return b.String()
}

// BenchmarkVary times the full check of one loop with 0 to 3 varying gains
// (the difference to gains=0 is the cost of the robust analysis), and with
// one gain inside a discretized s block (the grid method).
func BenchmarkVary(b *testing.B) {
	for n := 0; n <= 3; n++ {
		src := []byte(varyBenchSrc(n))
		b.Run(fmt.Sprintf("gains=%d", n), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				r := Check(context.Background(), "/bench/vary.loop", src, Env{Roots: []string{"/bench"}})
				if l := r.Loops[0]; n > 0 && (l.Robust == nil || l.Robust.Stable == nil) {
					b.Fatalf("no verdict: %+v", l.Robust)
				}
			}
		})
	}
	grid := []byte("sample 10 ms\ngain tau = 0.5 vary 0.4 to 0.6\ngain kc = 2\nblock plant = 1 / (tau * s + 1) via zoh\nblock ctrl = kc * 0.01 / (z - 1)\nloop oven {\n  forward ctrl plant\n}\n")
	b.Run("grid", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			Check(context.Background(), "/bench/grid.loop", grid, Env{Roots: []string{"/bench"}})
		}
	})
}

// TestVaryBenchLoops: the benchmark's loops are what it claims (an exact
// method, stable over the box), so the timing measures the real path.
func TestVaryBenchLoops(t *testing.T) {
	for n := 1; n <= 3; n++ {
		r := checkSrc(t, varyBenchSrc(n), nil)
		rb := loopNamed(t, r, "pump").Robust
		if rb == nil || !rb.Exact || rb.Stable == nil || !*rb.Stable || len(rb.Names) != n {
			t.Errorf("%d varying gains: %+v", n, rb)
		}
	}
}
