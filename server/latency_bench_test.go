package server

import (
	"fmt"
	"sort"
	"strings"
	"testing"
	"time"

	"go.lsp.dev/protocol"

	"ringside/analysis"
)

// loopsDoc generates a document of n independent third-order loops: a PI
// controller (gains on gain lines) around a second-order discrete plant,
// closed through a one-sample delay.
func loopsDoc(n int) string {
	var b strings.Builder
	b.WriteString("# generated latency fixture\nsample 1 ms\nblock delay = z^-1\n")
	for i := 0; i < n; i++ {
		a := 0.9 + 0.05*float64(i%5)/5
		fmt.Fprintf(&b, "gain kp%d = %g\ngain ki%d = %g\nblock c%d = kp%d + ki%d * 0.001 * z / (z - 1)\n", i, 0.3+float64(i%7)*0.1, i, 2+float64(i%3), i, i, i)
		fmt.Fprintf(&b, "block p%d = (0.01z + 0.009) / ((z - %g)(z - 0.5))\n", i, a)
		fmt.Fprintf(&b, "loop l%d {\n  forward c%d p%d\n  feedback delay\n}\n", i, i, i)
	}
	return b.String()
}

// BenchmarkLatency measures round trips through a real connection with
// delayMs 0: open → the full diagnostics of a new file; editGain → the full
// diagnostics after one gain value changes; hover on a loop, and right
// after a gain edit; codeAction on an unstable loop's error. For 20 and
// 200 loops; it reports p50 and p99 in ms. Not a timed unit test: run with
// `go test -run ^$ -bench Latency ./server/`.
func BenchmarkLatency(b *testing.B) {
	for _, n := range []int{20, 200} {
		doc := loopsDoc(n)
		for _, op := range []string{"open", "editGain", "hover", "hoverAfterEdit", "codeAction"} {
			b.Run(fmt.Sprintf("loops=%d/%s", n, op), func(b *testing.B) {
				benchLatency(b, doc, n, op)
			})
		}
	}
}

func benchLatency(b *testing.B, doc string, n int, op string) {
	c := newClient(b, clientOptions{debounce: -1, init: map[string]any{"initializationOptions": map[string]any{"delayMs": 0}}})
	uri := c.open("bench.loop", doc)
	c.waitDiags(uri, anyDiags)
	mid := n / 2
	hoverAt := c.posOf(uri, fmt.Sprintf("loop l%d ", mid), 0, 6)
	gainLine := fmt.Sprintf("gain kp%d = ", mid)
	var diag protocol.Diagnostic
	if op == "codeAction" {
		text := strings.Replace(doc, gainLine, gainLine+"50 # ", 1)
		v := c.replace(uri, text)
		ds := c.waitDiagsFrom(uri, v, hasCode(analysis.CodePoleOutside))
		diag = *findCode(ds, analysis.CodePoleOutside)
	}
	// editGain alternates one gain between two values of different length.
	values := []string{"0.45 # ", "0.4 # "}
	times := make([]time.Duration, 0, b.N)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		start := time.Now()
		switch op {
		case "open":
			u := c.open(fmt.Sprintf("open%d.loop", i), doc)
			c.waitDiags(u, anyDiags)
		case "editGain":
			v := c.replace(uri, strings.Replace(doc, gainLine, gainLine+values[i%2], 1))
			c.waitVersion(uri, v)
		case "hover", "hoverAfterEdit":
			if op == "hoverAfterEdit" {
				c.replace(uri, strings.Replace(doc, gainLine, gainLine+values[i%2], 1))
				start = time.Now()
			}
			var h protocol.Hover
			if err := c.call(protocol.MethodTextDocumentHover, tdp(uri, hoverAt), &h); err != nil || h.Contents.Value == "" {
				b.Fatalf("hover: %v", err)
			}
		case "codeAction":
			var actions []protocol.CodeAction
			if err := c.call(protocol.MethodTextDocumentCodeAction, protocol.CodeActionParams{TextDocument: protocol.TextDocumentIdentifier{URI: uri}, Range: diag.Range,
				Context: protocol.CodeActionContext{Diagnostics: []protocol.Diagnostic{diag}}}, &actions); err != nil || len(actions) == 0 {
				b.Fatalf("codeAction: %v %v", actions, err)
			}
		}
		times = append(times, time.Since(start))
	}
	b.StopTimer()
	reportPercentiles(b, times)
}

// waitVersion waits for the diagnostics of version v.
func (c *testClient) waitVersion(uri protocol.DocumentURI, v int32) {
	deadline := time.After(waitTimeout)
	for {
		select {
		case p := <-c.diags:
			if p.URI == uri && p.Version != nil && *p.Version == v {
				return
			}
		case <-deadline:
			c.t.Fatalf("no diagnostics for version %d", v)
		}
	}
}

func reportPercentiles(b *testing.B, times []time.Duration) {
	if len(times) == 0 {
		return
	}
	sort.Slice(times, func(i, j int) bool { return times[i] < times[j] })
	q := func(p float64) float64 {
		i := int(p * float64(len(times)-1))
		return float64(times[i].Microseconds()) / 1000
	}
	b.ReportMetric(q(0.50), "p50-ms")
	b.ReportMetric(q(0.99), "p99-ms")
	b.ReportMetric(0, "ns/op")
}
