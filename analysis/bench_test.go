package analysis

import (
	"context"
	"fmt"
	"math/rand"
	"strings"
	"testing"
)

// corpus generates a file of n PI loops around second-order plants with a
// measurement delay, at varied (invented) gains, stable and unstable.
func corpus(n int, seed int64) string {
	rng := rand.New(rand.NewSource(seed))
	var b strings.Builder
	b.WriteString("# generated benchmark corpus\nsample 1 ms\n")
	for i := 0; i < n; i++ {
		wn := 5 + 40*rng.Float64()
		zeta := 0.2 + 0.8*rng.Float64()
		fmt.Fprintf(&b, "gain kp%d = %.3f\ngain ki%d = %.3f\n", i, 0.2+3*rng.Float64(), i, 1+30*rng.Float64())
		fmt.Fprintf(&b, "block c%d = kp%d + ki%d * 0.001 * z / (z - 1)\n", i, i, i)
		fmt.Fprintf(&b, "block p%d = %.4f / (s^2 + %.4fs + %.4f) via zoh\n", i, wn*wn, 2*zeta*wn, wn*wn)
		fmt.Fprintf(&b, "loop l%d {\n  forward c%d p%d\n  feedback z^-1\n}\n", i, i, i)
	}
	return strings.ReplaceAll(b.String(), "feedback z^-1", "feedback d")
}

func withDelay(src string) string {
	return strings.Replace(src, "sample 1 ms\n", "sample 1 ms\nblock d = z^-1\n", 1)
}

// BenchmarkCheck measures a full check (poles, margins, step, gain limits)
// by number of loops in one file.
func BenchmarkCheck(b *testing.B) {
	for _, n := range []int{10, 100, 1000} {
		src := []byte(withDelay(corpus(n, 1)))
		b.Run(fmt.Sprintf("loops=%d", n), func(b *testing.B) {
			b.SetBytes(int64(len(src)))
			for i := 0; i < b.N; i++ {
				r := Check(context.Background(), "/bench/corpus.loop", src, Env{Roots: []string{"/bench"}})
				if len(r.Loops) != n {
					b.Fatalf("%d loops", len(r.Loops))
				}
			}
		})
	}
}

// BenchmarkCheckQuick measures the editor's per-keystroke path.
func BenchmarkCheckQuick(b *testing.B) {
	for _, n := range []int{20, 200} {
		src := []byte(withDelay(corpus(n, 1)))
		b.Run(fmt.Sprintf("loops=%d", n), func(b *testing.B) {
			opt := DefaultOptions()
			opt.Quick = true
			for i := 0; i < b.N; i++ {
				Check(context.Background(), "/bench/corpus.loop", src, Env{Roots: []string{"/bench"}, Options: opt})
			}
		})
	}
}

// BenchmarkLoopOrder measures one loop by the order of its plant: a chain
// of first-order lags in z.
func BenchmarkLoopOrder(b *testing.B) {
	for _, order := range []int{2, 4, 8, 16, 32} {
		var f strings.Builder
		f.WriteString("sample 1 ms\ngain k = 0.01\nblock p = 1")
		for i := 0; i < order; i++ {
			fmt.Fprintf(&f, " / (z - %.3f)", 0.5+0.45*float64(i)/float64(order))
		}
		f.WriteString("\nloop l {\n  forward k p\n}\n")
		src := []byte(f.String())
		b.Run(fmt.Sprintf("order=%d", order), func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				r := Check(context.Background(), "/bench/order.loop", src, Env{Roots: []string{"/bench"}})
				if !r.Loops[0].OK {
					b.Fatal(r.Diagnostics)
				}
			}
		})
	}
}

func TestCorpusIsValid(t *testing.T) {
	src := withDelay(corpus(20, 1))
	r := Check(context.Background(), "/bench/corpus.loop", []byte(src), Env{Roots: []string{"/bench"}})
	stable := 0
	for _, l := range r.Loops {
		if !l.OK {
			t.Fatalf("loop %s not analysed: %v", l.Name, r.Diagnostics)
		}
		if l.Stable {
			stable++
		}
	}
	if stable == 0 || stable == len(r.Loops) {
		t.Errorf("corpus has %d of %d stable loops; want a mix", stable, len(r.Loops))
	}
}

// BenchmarkCheckEdit measures what an editor pays after one gain of a
// 200-loop file changes: a check through the memo, where every loop but
// the edited one (and every gain but the edited one) is reused.
func BenchmarkCheckEdit(b *testing.B) {
	src := withDelay(corpus(200, 1))
	i := strings.Index(src, "gain kp100 = ")
	j := i + strings.IndexByte(src[i:], '\n')
	texts := [][]byte{[]byte(src[:i] + "gain kp100 = 0.45" + src[j:]), []byte(src[:i] + "gain kp100 = 0.4" + src[j:])}
	memo := NewMemo()
	env := Env{Roots: []string{"/bench"}, Memo: memo}
	Check(context.Background(), "/bench/corpus.loop", texts[1], env)
	b.ResetTimer()
	for n := 0; n < b.N; n++ {
		Check(context.Background(), "/bench/corpus.loop", texts[n%2], env)
	}
}
