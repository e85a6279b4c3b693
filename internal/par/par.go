// Package par runs independent pieces of work on every processor.
package par

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// Each runs f(0) … f(n−1) on as many goroutines as there are processors,
// each taking the next index as it finishes one (pieces of uneven cost
// balance themselves). Each f must touch only its own index's data.
func Each(n int, f func(i int)) {
	workers := min(runtime.GOMAXPROCS(0), n)
	if workers <= 1 {
		for i := 0; i < n; i++ {
			f(i)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := int(next.Add(1) - 1); i < n; i = int(next.Add(1) - 1) {
				f(i)
			}
		}()
	}
	wg.Wait()
}
