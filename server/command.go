package server

import (
	"context"
	"encoding/json"
	"fmt"
	"path/filepath"
	"strings"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/analysis/plot"
	"ringside/internal/fileio"
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
	sn, path, _, _, err := s.docRequest(ctx, a.URI)
	if err != nil {
		return nil, err
	}
	async(ctx)
	res, err := sn.plotCheck(ctx, path)
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
	for i, l := range loops {
		if ctx.Err() != nil {
			return nil, errCancelled
		}
		if i >= plot.MaxPageFigures {
			break // the page lists the rest; a loop is plotted by name
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
		if err := sn.writePage(dst, page); err != nil {
			return nil, errorf(lspext.CodeRequestFailed, "page not written: %v", err)
		}
		out.Written = append(out.Written, dst)
	}
	return out, nil
}

// writePage writes the plot page at dst: only inside a workspace folder
// (its folder compared with links resolved, so no link leads out), only
// over a regular file or nothing (a link at dst is refused, not followed),
// and atomically.
func (sn *snapshot) writePage(dst string, page []byte) error {
	dir, err := filepath.EvalSymlinks(filepath.Dir(dst))
	if err != nil {
		return err
	}
	inside := false
	for _, r := range sn.roots {
		if rr, err := filepath.EvalSymlinks(r); err == nil && within(rr, dir) {
			inside = true
		}
	}
	if !inside {
		return fmt.Errorf("%s is outside the workspace folders; the server writes only inside them", dst)
	}
	return fileio.WriteAtomic(filepath.Join(dir, filepath.Base(dst)), page, 0o644)
}

// within reports whether path is root or lies below it.
func within(root, path string) bool {
	rel, err := filepath.Rel(root, path)
	return err == nil && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator)) && !filepath.IsAbs(rel)
}
