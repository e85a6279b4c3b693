package syntax

import (
	"fmt"
	"strings"
	"testing"
)

// BenchmarkParse measures parsing a file of 200 loops with their gains
// and blocks (what the editor parses on every change).
func BenchmarkParse(b *testing.B) {
	var f strings.Builder
	f.WriteString("sample 1 ms\nblock delay = z^-1\n")
	for i := 0; i < 200; i++ {
		fmt.Fprintf(&f, "gain kp%d = %g\ngain ki%d = %g\nblock c%d = kp%d + ki%d * 0.001 * z / (z - 1)\n", i, 0.3+float64(i%7)*0.1, i, 2+float64(i%3), i, i, i)
		fmt.Fprintf(&f, "block p%d = (0.01z + 0.009) / ((z - %g)(z - 0.5))\n", i, 0.9+0.01*float64(i%5))
		fmt.Fprintf(&f, "loop l%d {\n  forward c%d p%d\n  feedback delay   # measured one sample late\n}\n", i, i, i)
	}
	src := []byte(f.String())
	b.SetBytes(int64(len(src)))
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, errs := Parse("bench.loop", src); len(errs) > 0 {
			b.Fatal(errs)
		}
	}
}
