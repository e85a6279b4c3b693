package server

import (
	"context"
	"encoding/json"
	"sort"
	"strings"

	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/analysis/realize"
	"ringside/syntax"
)

var (
	topKeywords  = []string{"sample", "use", "gain", "block", "loop", "realize"}
	itemKeywords = []string{"forward", "feedback", "sign", "require"}
	methods      = []string{"zoh", "foh", "tustin", "matched"}
	signs        = []string{"negative", "positive"}
	// unitsFor lists the units that fit after a number, by what it measures.
	unitsTime   = []string{"s", "ms", "us", "µs"}
	unitsFreq   = []string{"Hz", "kHz", "rad/s"}
	unitsMetric = map[string][]string{"gain_margin": {"dB"}, "phase_margin": {"deg"}, "delay_margin": {"s", "ms", "us", "samples"}, "peak_sensitivity": {"dB"}, "overshoot": {"%"}, "settling": {"s", "ms", "us"}}
)

// completion offers what may come next at the cursor: keywords by context,
// names in scope, methods after via, units after numbers, metrics after
// require, signs after sign.
func (s *Server) completion(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.TextDocumentPositionParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	sn, path, _, src, pos, err := s.docPosition(ctx, p)
	if err != nil {
		return nil, err
	}
	async(ctx)
	lineStart := syntax.NewLines(src).LineStart(int(p.Position.Line))
	toks, lastIsNumber, inComment := lineTokens(src[lineStart:pos])
	if inComment {
		return protocol.CompletionList{Items: []protocol.CompletionItem{}}, nil
	}
	items := completionItems(toks, lastIsNumber, insideLoop(src, pos), func() *analysis.Result {
		res, err := sn.check(ctx, path, false)
		if err != nil {
			return nil
		}
		return res
	})
	if items == nil {
		items = []protocol.CompletionItem{}
	}
	return protocol.CompletionList{Items: items}, nil
}

// completionItems lists what fits after the line's tokens before the
// cursor; scope gives the analysis for names in scope (nil: none).
func completionItems(toks []string, lastIsNumber, inLoop bool, scope func() *analysis.Result) []protocol.CompletionItem {
	var items []protocol.CompletionItem
	add := func(kind protocol.CompletionItemKind, detail string, words ...string) {
		for _, w := range words {
			items = append(items, protocol.CompletionItem{Label: w, Kind: kind, Detail: detail})
		}
	}
	names := func() { items = append(items, scopeItems(scope())...) }
	last := ""
	if len(toks) > 0 {
		last = toks[len(toks)-1]
	}
	first := ""
	if len(toks) > 0 {
		first = toks[0]
	}
	switch {
	case len(toks) == 0 && inLoop:
		add(protocol.CompletionItemKindKeyword, "loop item", itemKeywords...)
	case len(toks) == 0:
		add(protocol.CompletionItemKindKeyword, "statement", topKeywords...)
	case first == "realize" && len(toks) == 1:
		names()
	case first == "realize" && len(toks) == 2:
		add(protocol.CompletionItemKindKeyword, "realize BLOCK as STRUCTURE", "as")
	case first == "realize" && last == "as":
		add(protocol.CompletionItemKindEnum, "structure", realize.Structures...)
	case first == "realize" && len(toks) == 4:
		add(protocol.CompletionItemKindKeyword, "realize … in FORMAT", "in")
	case first == "realize" && last == "in":
		add(protocol.CompletionItemKindEnum, "number format", "float64", "float32", "q15", "q31", "q1.14", "q3.12", "q1.30")
	case last == "via":
		add(protocol.CompletionItemKindEnum, "discretization method", methods...)
	case last == "sign":
		add(protocol.CompletionItemKindEnum, "feedback sign", signs...)
	case last == "require":
		add(protocol.CompletionItemKindEnum, "metric", analysis.MetricNames()...)
	case lastIsNumber:
		afterNumber(toks, add)
	case first == "forward" || first == "feedback":
		names()
	case first == "block" && contains(toks, "="):
		if last == "tustin" {
			add(protocol.CompletionItemKindKeyword, "prewarp frequency", "prewarp")
			break
		}
		names()
		add(protocol.CompletionItemKindKeyword, "transform variable", "s", "z")
		if !strings.ContainsAny(last, "+-*/^(=") {
			add(protocol.CompletionItemKindKeyword, "discretization", "via")
		}
	}
	return items
}

// scopeItems lists the gains and blocks in scope, by name.
func scopeItems(res *analysis.Result) []protocol.CompletionItem {
	if res == nil {
		return nil
	}
	var list []string
	for n := range res.Scope {
		list = append(list, n)
	}
	sort.Strings(list)
	var items []protocol.CompletionItem
	for _, n := range list {
		if d := res.Scope[n]; d.Gain != nil {
			items = append(items, protocol.CompletionItem{Label: n, Kind: protocol.CompletionItemKindVariable, Detail: "gain = " + analysis.FormatNumber(d.Gain.Value)})
		} else {
			items = append(items, protocol.CompletionItem{Label: n, Kind: protocol.CompletionItemKindFunction, Detail: "block"})
		}
	}
	return items
}

// afterNumber offers what may follow a number: a unit, a range keyword or
// via, by the statement.
func afterNumber(toks []string, add func(protocol.CompletionItemKind, string, ...string)) {
	first := toks[0]
	switch {
	case first == "sample":
		add(protocol.CompletionItemKindUnit, "unit", append(append([]string{}, unitsTime...), unitsFreq...)...)
	case first == "require" && len(toks) >= 2:
		add(protocol.CompletionItemKindUnit, "unit", unitsMetric[toks[1]]...)
	case len(toks) >= 2 && toks[len(toks)-2] == "prewarp":
		add(protocol.CompletionItemKindUnit, "unit", unitsFreq...)
	case first == "gain" && len(toks) >= 2 && toks[len(toks)-2] == "vary":
		add(protocol.CompletionItemKindKeyword, "end of the range", "to")
	case first == "gain" && (contains(toks, "min") || contains(toks, "max")):
		add(protocol.CompletionItemKindKeyword, "range", "min", "max")
	case first == "gain" && !contains(toks, "vary"):
		add(protocol.CompletionItemKindKeyword, "range", "min", "max", "vary")
	case first == "block":
		add(protocol.CompletionItemKindKeyword, "discretization", "via")
	}
}

// lineTokens splits the line before the cursor with the syntax lexer: the
// tokens' texts without the name being typed at the cursor, whether the
// last one is a number, and whether the cursor is in a comment.
func lineTokens(before []byte) (toks []string, lastIsNumber, inComment bool) {
	all := syntax.Tokens(before)
	if n := len(all); n > 0 && all[n-1].Kind == syntax.TokenName && int(all[n-1].To) == len(before) {
		all = all[:n-1] // the partial name being completed
	}
	for _, t := range all {
		if t.Kind == syntax.TokenComment {
			return nil, false, true
		}
		toks = append(toks, string(before[t.From:t.To]))
		lastIsNumber = t.Kind == syntax.TokenNumber
	}
	return toks, lastIsNumber, false
}

// insideLoop reports whether pos lies inside a loop's braces.
func insideLoop(src []byte, pos syntax.Pos) bool {
	f, _ := syntax.Parse("", src)
	for _, st := range f.Stmts {
		l, ok := st.(*syntax.LoopStmt)
		if !ok {
			continue
		}
		end := l.RBrace
		if end == syntax.NoPos {
			end = l.End()
			if end < syntax.Pos(len(src)) && pos > end {
				// An unclosed loop runs to the next statement.
				end = syntax.Pos(len(src))
			}
		}
		if l.LBrace != syntax.NoPos && l.LBrace < pos && pos <= end {
			return true
		}
	}
	return false
}
