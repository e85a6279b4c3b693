package syntax

import (
	"math/rand"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// chunkSources are the files of the repository (goldens, error cases,
// demos) and their text.
func chunkSources(t *testing.T) map[string]string {
	t.Helper()
	out := map[string]string{}
	for _, pattern := range []string{"testdata/*.loop", "testdata/*/*.loop", "testdata/format/*.input", "../testdata/demo/*.loop", "../analysis/testdata/*/*.loop"} {
		paths, _ := filepath.Glob(pattern)
		for _, p := range paths {
			b, err := os.ReadFile(p)
			if err != nil {
				t.Fatal(err)
			}
			out[p] = string(b)
		}
	}
	if len(out) < 10 {
		t.Fatalf("only %d source files found", len(out))
	}
	return out
}

// mutate damages src at random: bytes deleted, doubled or replaced by
// characters that open or close what the parser nests.
func mutate(rng *rand.Rand, src string) string {
	b := []byte(src)
	for n := 1 + rng.Intn(3); n > 0 && len(b) > 0; n-- {
		i := rng.Intn(len(b))
		switch rng.Intn(4) {
		case 0:
			b = append(b[:i], b[i+1:]...)
		case 1:
			b = append(b[:i+1], b[i:]...)
		default:
			const damage = "({})\n\"#=+ x9"
			b[i] = damage[rng.Intn(len(damage))]
		}
	}
	return string(b)
}

// allCuts lists every offset where chunkCuts may cut src.
func allCuts(src []byte) []int {
	var out []int
	for at := stmtLineAfter(src, 0); at >= 0; at = stmtLineAfter(src, at) {
		out = append(out, at)
	}
	return out
}

// Parsed in pieces, cut at any statement line, a file either parses to
// exactly the tree, comments and (no) errors of the parse in one piece,
// or a piece has an error (and Parse falls back to one piece). Checked on
// every file of the repository and on thousands of damaged copies.
func TestChunksParseAsOnePiece(t *testing.T) {
	rng := rand.New(rand.NewSource(1))
	checked, joined := 0, 0
	for name, text := range chunkSources(t) {
		variants := []string{text}
		for i := 0; i < 150; i++ {
			variants = append(variants, mutate(rng, text))
		}
		for _, v := range variants {
			src := []byte(v)
			lines := NewLines(src)
			whole, errs, dropped := parseRange(src, lines, BOMLen(src), len(src))
			whole.Name = name
			cuts := allCuts(src)
			sets := [][]int{cuts}
			for _, c := range cuts {
				sets = append(sets, []int{c})
			}
			for _, set := range sets {
				if len(set) == 0 {
					continue
				}
				bounds := append(append([]int{BOMLen(src)}, set...), len(src))
				if bounds[1] <= bounds[0] {
					continue
				}
				checked++
				f, ok := parseChunks(name, src, lines, bounds)
				if !ok {
					continue
				}
				joined++
				if len(errs) > 0 || dropped > 0 {
					t.Fatalf("%s cut at %v: pieces without errors, the whole with %v:\n%s", name, set, errs, v)
				}
				if !reflect.DeepEqual(f, whole) {
					t.Fatalf("%s cut at %v: the pieces' tree differs from the whole's:\n%s", name, set, v)
				}
			}
		}
	}
	t.Logf("%d of %d cut files parsed without errors in every piece", joined, checked)
	if joined < checked/10 {
		t.Errorf("only %d of %d cut files parsed without errors: the check hardly ran", joined, checked)
	}
}

// Parse cuts a large file into pieces (and the result is what the pieces
// check above compares); a small one stays whole.
func TestChunkCuts(t *testing.T) {
	var b strings.Builder
	b.WriteString("sample 1 ms\n")
	for b.Len() < 8*minChunk {
		b.WriteString("gain k = 1\nblock p = k / (z - 0.5)  # a plant\nloop l {\n  forward p\n}\n")
	}
	src := []byte(b.String())
	cuts := chunkCuts(src, 4)
	if len(cuts) != 5 || cuts[0] != 0 || cuts[4] != len(src) {
		t.Fatalf("cuts %v", cuts)
	}
	for _, c := range cuts[1:4] {
		if src[c-1] != '\n' || !strings.HasPrefix(string(src[c:]), "gain ") && !strings.HasPrefix(string(src[c:]), "block ") && !strings.HasPrefix(string(src[c:]), "loop ") {
			t.Errorf("cut at %d: %q", c, src[c:c+10])
		}
	}
	if cuts := chunkCuts(src[:minChunk], 4); cuts != nil {
		t.Errorf("a small file cut at %v", cuts)
	}
	f, errs := Parse("big.loop", src)
	whole, _, _ := parseRange(src, NewLines(src), 0, len(src))
	whole.Name = "big.loop"
	if len(errs) > 0 || !reflect.DeepEqual(f, whole) {
		t.Errorf("Parse in pieces differs from one piece (%v)", errs)
	}
}
