package analysis

import (
	"context"
	"os"
	"path/filepath"
	"testing"
)

// slowGainSrc is a fuzz-generated file (FuzzCheck seed 69edee9e3a94549c)
// whose gain appears squared and cubed in 26th-order loops: its stable
// interval once took a march of several hundred eigenvalue problems.
const slowGainSrc = `sample 1e-9 s
gain k0 = -375 max -0.005
gain k1 = 0.64375 max 0.31875000000000003
block b0 = k0 * (0.5375 * (s - -1)^2) / (1 * (s - -0.01875)^3 * (s - 0.5)^3 * (s - 0.5)^2 * (s - 0)^1 * (s - 0)^3 * (s - -1)^1) via matched
loop l0 {
  forward b0
  feedback b0
}
loop l1 {
  forward b0 b0 k0
}
`

// twoBlockSrc has its gain in two blocks (L = k²·G), the case of
// TestIsolatedUnstableGain.
const twoBlockSrc = "sample 1 ms\ngain k = 0.5\nblock c = k * (z - 0.5) / (z - 1)\nblock p = k * 0.1 / (z - 0.9)\nloop l {\n  forward c p\n}\n"

// BenchmarkGainPolynomial measures a full check of files whose gain is not
// affine in the characteristic polynomial (the D-decomposition path), and
// of the demo files.
func BenchmarkGainPolynomial(b *testing.B) {
	run := func(name string, src []byte) {
		b.Run(name, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				Check(context.Background(), "/bench/f.loop", src, Env{Roots: []string{"/bench"}})
			}
		})
	}
	run("fuzz_k_cubed", []byte(slowGainSrc))
	run("two_blocks", []byte(twoBlockSrc))
	demos, _ := filepath.Glob(filepath.Join("..", "testdata", "demo", "*.loop"))
	b.Run("demo", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			for _, p := range demos {
				src, err := os.ReadFile(p)
				if err != nil {
					b.Fatal(err)
				}
				abs, _ := filepath.Abs(p)
				Check(context.Background(), abs, src, Env{Roots: []string{filepath.Dir(abs)}})
			}
		}
	})
}
