package syntax

import (
	"fmt"
	"math/rand"
	"os"
	"path/filepath"
	"testing"
	"time"
)

func TestHangHunt(t *testing.T) {
	if os.Getenv("HANG") == "" {
		t.Skip()
	}
	var seeds [][]byte
	for _, pat := range []string{"testdata/*.loop", "testdata/errors/*.loop", "testdata/format/*.input"} {
		files, _ := filepath.Glob(pat)
		for _, n := range files {
			b, _ := os.ReadFile(n)
			seeds = append(seeds, b)
		}
	}
	frags := []string{"(", ")", "{", "}", "\n", "#", "z", "s", "^", "-", "2", "e", "via", "loop a {", "block", "gain", " ", "\r\n", "\"", "µs", ".", "1e5", "min", "max", "forward", "prewarp"}
	r := rand.New(rand.NewSource(1))
	for iter := 0; iter < 200000; iter++ {
		src := append([]byte(nil), seeds[r.Intn(len(seeds))]...)
		for k := r.Intn(6) + 1; k > 0; k-- {
			if len(src) == 0 {
				src = []byte(frags[r.Intn(len(frags))])
				continue
			}
			i := r.Intn(len(src))
			switch r.Intn(3) {
			case 0:
				src = append(src[:i], append([]byte(frags[r.Intn(len(frags))]), src[i:]...)...)
			case 1:
				j := min(len(src), i+r.Intn(20))
				src = append(src[:i], src[j:]...)
			case 2:
				src[i] = byte(r.Intn(256))
			}
		}
		done := make(chan bool)
		go func() {
			f, _ := Parse("x", src)
			Walk(f, func(Node) bool { return true })
			Format(src)
			close(done)
		}()
		select {
		case <-done:
		case <-time.After(2 * time.Second):
			os.WriteFile("/tmp/hang/input", src, 0o644)
			panic(fmt.Sprintf("hang on %q", src))
		}
	}
}
