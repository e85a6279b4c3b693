package par

import (
	"sync/atomic"
	"testing"
)

// Every index runs exactly once, for counts below, at and above the
// number of processors.
func TestEachRunsEveryIndexOnce(t *testing.T) {
	for _, n := range []int{0, 1, 2, 3, 17, 1000} {
		seen := make([]atomic.Int32, n)
		Each(n, func(i int) { seen[i].Add(1) })
		for i := range seen {
			if c := seen[i].Load(); c != 1 {
				t.Fatalf("n = %d: index %d ran %d times", n, i, c)
			}
		}
	}
}
