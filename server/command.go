package server

import (
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/analysis/plot"
	"ringside/server/lspext"
)

// plotArgs is the one argument of ringside.plot.
type plotArgs struct {
	URI   protocol.DocumentURI `json:"uri"`
	Loop  string               `json:"loop"`
	Write bool                 `json:"write"`
}

// plotResult is the answer of ringside.plot.
type plotResult struct {
	Loops   []plotLoop `json:"loops"`
	HTML    string     `json:"html"`
	Written []string   `json:"written"`
}

type plotLoop struct {
	Name string `json:"name"`
	SVG  string `json:"svg"`
}

// executeCommand runs ringside.plot: the SVG figure of each loop (or of the
// one named), the html page of the file, and, only when the user asked with
// write = true, that page written beside the file as NAME.html.
func (s *Server) executeCommand(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.ExecuteCommandParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	if p.Command != plotCommand {
		return nil, errorf(jsonrpc2.InvalidParams, "unknown command %q (the server has %s)", p.Command, plotCommand)
	}
	if len(p.Arguments) != 1 {
		return nil, errorf(jsonrpc2.InvalidParams, `%s takes one argument {"uri": ..., "loop": ..., "write": false}`, plotCommand)
	}
	var a plotArgs
	if err := remarshal(p.Arguments[0], &a); err != nil || a.URI == "" {
		return nil, errorf(jsonrpc2.InvalidParams, `%s: argument must be {"uri": ..., "loop": ..., "write": false}`, plotCommand)
	}
	sn, path, _, _, err := s.docRequest(a.URI)
	if err != nil {
		return nil, err
	}
	async(ctx)
	res, err := sn.check(ctx, path, true)
	if err != nil {
		return nil, err
	}
	out := plotResult{Loops: []plotLoop{}, Written: []string{}}
	var loops []*analysis.Loop
	for _, l := range res.Loops {
		if a.Loop == "" || l.Name == a.Loop {
			loops = append(loops, l)
		}
	}
	if a.Loop != "" && len(loops) == 0 {
		return nil, errorf(lspext.CodeRequestFailed, "no loop %q in %s", a.Loop, filepath.Base(path))
	}
	for _, l := range loops {
		if ctx.Err() != nil {
			return nil, errCancelled
		}
		svg, err := plot.LoopSVG(res, l)
		if err != nil {
			return nil, errorf(lspext.CodeRequestFailed, "loop %s: %v", l.Name, err)
		}
		out.Loops = append(out.Loops, plotLoop{Name: l.Name, SVG: string(svg)})
	}
	page, err := plot.Page(res)
	if err != nil {
		return nil, errorf(lspext.CodeRequestFailed, "plot page: %v", err)
	}
	out.HTML = string(page)
	if a.Write {
		dst := strings.TrimSuffix(path, filepath.Ext(path)) + ".html"
		if err := os.WriteFile(dst, page, 0o644); err != nil {
			return nil, errorf(lspext.CodeRequestFailed, "cannot write %s: %v", dst, err)
		}
		out.Written = append(out.Written, dst)
	}
	return out, nil
}
