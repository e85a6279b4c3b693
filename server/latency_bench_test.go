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

// loopsDoc generates a document of n independent loops, each a gain in
// series with a first-order lag, closed through a one-sample delay.
func loopsDoc(n int) string {
	var b strings.Builder
	b.WriteString("# generated latency fixture\nsample 1 ms\nblock delay = z^-1\n")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "gain k%d = %g\nblock lag%d = 0.1 / (z - 0.9)\nloop l%d {\n  forward k%d lag%d\n  feedback delay\n}\n", i, 0.5+float64(i%7)*0.1, i, i, i, i)
	}
	return b.String()
}

// BenchmarkLatency measures round trips through a real connection, with no
// debounce: didChange→publishDiagnostics (quick check), didSave→
// publishDiagnostics (full check), hover on a loop (cached result, and
// right after a change, which costs a full check) and codeAction, for 20
// and 200 loops. It reports p50 and p99 in ms. Not a timed unit test: run
// with `go test -run ^$ -bench Latency ./server/`.
func BenchmarkLatency(b *testing.B) {
	for _, n := range []int{20, 200} {
		doc := loopsDoc(n)
		for _, op := range []string{"didChange", "didSave", "hover", "hoverAfterChange", "codeAction"} {
			b.Run(fmt.Sprintf("loops=%d/%s", n, op), func(b *testing.B) {
				c := newClient(b, clientOptions{debounce: -1})
				uri := c.open("bench.loop", doc)
				c.waitDiags(uri, anyDiags)
				mid := n / 2
				hoverAt := c.posOf(uri, fmt.Sprintf("loop l%d ", mid), 0, 6)
				var diag protocol.Diagnostic
				if op == "codeAction" {
					// make loop mid unstable so that it has a fix
					text := strings.Replace(doc, fmt.Sprintf("gain k%d = ", mid), fmt.Sprintf("gain k%d = 50 # ", mid), 1)
					c.replace(uri, text)
					c.save(uri)
					ds := c.waitDiags(uri, hasCode(analysis.CodePoleOutside))
					diag = *findCode(ds, analysis.CodePoleOutside)
				}
				times := make([]time.Duration, 0, b.N)
				b.ResetTimer()
				for i := 0; i < b.N; i++ {
					start := time.Now()
					switch op {
					case "didChange", "didSave":
						v := c.replace(uri, c.text(uri)+"#\n")
						if op == "didSave" {
							// measure the save only: let the change's check land first
							c.waitVersion(uri, v)
							start = time.Now()
							c.save(uri)
						}
						c.waitVersion(uri, v)
					case "hover", "hoverAfterChange":
						if op == "hoverAfterChange" {
							// a new text: the loop hover needs a fresh full check
							c.replace(uri, c.text(uri)+"#\n")
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
			})
		}
	}
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
