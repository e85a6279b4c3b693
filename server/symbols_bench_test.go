package server

import (
	"fmt"
	"testing"

	"go.lsp.dev/protocol"
)

// BenchmarkDocumentSymbols answers textDocument/documentSymbol on documents
// of n gain lines over a real connection; time per op grows linearly with
// n (it grew with n² when each symbol searched the statements again).
func BenchmarkDocumentSymbols(b *testing.B) {
	for _, n := range []int{5000, 50000} {
		b.Run(fmt.Sprintf("gains=%d", n), func(b *testing.B) {
			c := newClient(b, clientOptions{debounce: -1})
			uri := c.open("big.loop", bigFile(n))
			c.waitDiags(uri, anyDiags)
			b.ResetTimer()
			for range b.N {
				if err := c.call(protocol.MethodTextDocumentDocumentSymbol, docParams(uri), nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
