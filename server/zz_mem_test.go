package server

import (
	"fmt"
	"os"
	"runtime"
	"testing"
	"time"
)

func TestZZMem(t *testing.T) {
	if os.Getenv("ZZMEM") == "" {
		t.Skip()
	}
	c := newClient(t, clientOptions{debounce: -1})
	start := time.Now()
	for i := 0; i < 20; i++ {
		u := c.open(fmt.Sprintf("m%d.loop", i), loopsDoc(200))
		c.waitDiags(u, anyDiags)
	}
	runtime.GC()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	t.Logf("20 docs in %v; heap %d MB, total alloc %d MB", time.Since(start), ms.HeapAlloc>>20, ms.TotalAlloc>>20)
}
