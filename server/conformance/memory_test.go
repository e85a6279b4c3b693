package conformance

import (
	"fmt"
	"math/rand"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

// memoryTarget is the peak resident set the server may reach with the
// memory test's workspace open: 40 documents of 200 loops each.
const memoryTarget = 60 << 20

// loopCorpus generates a file of n PI loops around second-order ZOH plants
// with a one-sample measurement delay, at varied invented gains (demo data).
func loopCorpus(n int, seed int64) string {
	rng := rand.New(rand.NewSource(seed))
	var b strings.Builder
	b.WriteString("# generated corpus\nsample 1 ms\nblock d = z^-1\n")
	for i := 0; i < n; i++ {
		wn := 5 + 40*rng.Float64()
		zeta := 0.2 + 0.8*rng.Float64()
		fmt.Fprintf(&b, "gain kp%d = %.3f\ngain ki%d = %.3f\n", i, 0.2+3*rng.Float64(), i, 1+30*rng.Float64())
		fmt.Fprintf(&b, "block c%d = kp%d + ki%d * 0.001 * z / (z - 1)\n", i, i, i)
		fmt.Fprintf(&b, "block p%d = %.4f / (s^2 + %.4fs + %.4f) via zoh\n", i, wn*wn, 2*zeta*wn, wn*wn)
		fmt.Fprintf(&b, "loop l%d {\n  forward c%d p%d\n  feedback d\n}\n", i, i, i)
	}
	return b.String()
}

// peakRSS reads VmHWM (the peak resident set) of a process, in bytes.
func peakRSS(pid int) (int64, error) {
	data, err := os.ReadFile(fmt.Sprintf("/proc/%d/status", pid))
	if err != nil {
		return 0, err
	}
	for _, line := range strings.Split(string(data), "\n") {
		if rest, ok := strings.CutPrefix(line, "VmHWM:"); ok {
			kb, err := strconv.ParseInt(strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(rest), "kB")), 10, 64)
			return kb << 10, err
		}
	}
	return 0, fmt.Errorf("no VmHWM in /proc/%d/status", pid)
}

// TestMemory opens 40 documents of 200 loops each (each gets the full
// analysis on open), waits for every document's diagnostics and checks the
// server's peak RSS against memoryTarget. What the server keeps does not
// grow with the number of documents (a few results and the memo of the
// files last checked), so 40 prove it as well as more would.
func TestMemory(t *testing.T) {
	if testing.Short() {
		t.Skip("memory test skipped with -short")
	}
	if _, err := os.Stat("/proc/self/status"); err != nil {
		t.Skip("no /proc on this system")
	}
	const docs, loops = 40, 200
	dir := t.TempDir()
	p := start(t, dir)
	p.initialize(dir, nil)
	from := p.mark()
	started := time.Now()
	uris := make([]string, docs)
	for i := range uris {
		uris[i] = fileURI(filepath.Join(dir, fmt.Sprintf("corpus%03d.loop", i)))
		p.notify("textDocument/didOpen", map[string]any{"textDocument": map[string]any{"uri": uris[i], "languageId": "loop", "version": 1, "text": loopCorpus(loops, int64(i))}})
	}
	for _, u := range uris {
		pp, ok := p.diagnosticsFor(from, u, 1, 60*time.Second)
		if !ok {
			t.Fatalf("no diagnostics for %s (%s)", u, p.state())
		}
		if pp.Diagnostics == nil {
			t.Fatalf("%s: diagnostics is not an array", u)
		}
	}
	// A request after all the opens proves the session still works.
	p.mustCall("textDocument/documentSymbol", map[string]any{"textDocument": map[string]any{"uri": uris[docs-1]}})
	rss, err := peakRSS(p.cmd.Process.Pid)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("peak RSS (VmHWM) %.1f MB with %d documents of %d loops, all diagnostics in %v", float64(rss)/(1<<20), docs, loops, time.Since(started))
	p.shutdownExit()
	if rss > memoryTarget {
		t.Errorf("peak RSS %.1f MB, over the %d MB target", float64(rss)/(1<<20), memoryTarget>>20)
	}
}
