package server

import (
	"context"
	"encoding/json"
	"fmt"
	"sort"

	"go.lsp.dev/protocol"

	"ringside/analysis"
	"ringside/server/lspext"
	"ringside/syntax"
)

// keywords are the words of the format that cannot be names.
var keywords = map[string]bool{
	"sample": true, "use": true, "gain": true, "block": true, "loop": true,
	"forward": true, "feedback": true, "sign": true, "require": true,
	"via": true, "prewarp": true, "min": true, "max": true, "vary": true, "to": true,
	"realize": true,
}

// targetAt resolves the request position to a target in the quick result.
func (s *Server) targetAt(ctx context.Context, p protocol.TextDocumentPositionParams) (*snapshot, *analysis.Result, *target, error) {
	sn, path, _, _, pos, err := s.docPosition(ctx, p)
	if err != nil {
		return nil, nil, nil, err
	}
	async(ctx)
	res, err := sn.check(ctx, path, false)
	if err != nil {
		return nil, nil, nil, err
	}
	return sn, res, resolveAt(res, pos), nil
}

func (s *Server) definition(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.TextDocumentPositionParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	sn, res, t, err := s.targetAt(ctx, p)
	if err != nil || t == nil {
		return nil, err
	}
	if t.decl == nil {
		loc, ok := sn.spanLocation(res, res.Path, t.lstmt.Name.Span)
		if !ok {
			return nil, nil
		}
		return []protocol.Location{loc}, nil
	}
	loc, ok := sn.spanLocation(res, t.decl.Path, t.decl.Ident.Span)
	if !ok {
		return nil, nil
	}
	return []protocol.Location{loc}, nil
}

// occurrence is one span naming a declaration, in some file.
type occurrence struct {
	path string
	span syntax.Span
	res  *analysis.Result // the result whose file holds it
}

// occurrences finds every span naming decl in the workspace: the files the
// session knows (scanned and open) and the files the current result read.
func (sn *snapshot) occurrences(ctx context.Context, res *analysis.Result, decl *analysis.Decl, includeDecl bool) ([]occurrence, []*analysis.Result, error) {
	files := map[string]bool{}
	for p := range res.Files {
		files[p] = true
	}
	sn.s.mu.Lock()
	for p := range sn.s.ses.known {
		files[p] = true
	}
	sn.s.mu.Unlock()
	for p := range sn.docs {
		files[p] = true
	}
	paths := make([]string, 0, len(files))
	for p := range files {
		paths = append(paths, p)
	}
	sort.Strings(paths)
	var out []occurrence
	var touched []*analysis.Result
	for _, p := range paths {
		r := res
		if p != res.Path {
			var err error
			if r, err = sn.check(ctx, p, false); err != nil {
				if err == errCancelled {
					return nil, nil, err
				}
				continue
			}
		}
		d := r.Scope[decl.Name]
		if d == nil || d.Path != decl.Path || d.Ident.From != decl.Ident.From {
			continue
		}
		touched = append(touched, r)
		for _, sp := range refsTo(r.File, r.Scope, decl, includeDecl) {
			out = append(out, occurrence{path: p, span: sp, res: r})
		}
	}
	return out, touched, nil
}

func (s *Server) references(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.ReferenceParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	sn, res, t, err := s.targetAt(ctx, p.TextDocumentPositionParams)
	if err != nil || t == nil {
		return nil, err
	}
	locs := []protocol.Location{}
	if t.decl == nil {
		if p.Context.IncludeDeclaration {
			if loc, ok := sn.spanLocation(res, res.Path, t.lstmt.Name.Span); ok {
				locs = append(locs, loc)
			}
		}
		return locs, nil
	}
	occ, _, err := sn.occurrences(ctx, res, t.decl, p.Context.IncludeDeclaration)
	if err != nil {
		return nil, err
	}
	for _, o := range occ {
		if loc, ok := sn.spanLocation(o.res, o.path, o.span); ok {
			locs = append(locs, loc)
		}
	}
	return locs, nil
}

func (s *Server) prepareRename(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.TextDocumentPositionParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	sn, res, t, err := s.targetAt(ctx, p)
	if err != nil {
		return nil, err
	}
	if t == nil || t.decl == nil {
		return nil, nil
	}
	loc, ok := sn.spanLocation(res, res.Path, t.span)
	if !ok {
		return nil, nil
	}
	return loc.Range, nil
}

// rename renames a gain or block in every file of the workspace that sees
// it, after checking that the new name is a free, legal name everywhere.
func (s *Server) rename(ctx context.Context, params json.RawMessage) (any, error) {
	var p protocol.RenameParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	sn, res, t, err := s.targetAt(ctx, p.TextDocumentPositionParams)
	if err != nil {
		return nil, err
	}
	if t == nil || t.decl == nil {
		return nil, errorf(lspext.CodeRequestFailed, "there is no gain or block name here to rename")
	}
	newName := p.NewName
	if err := syntax.CheckName(newName); err != nil {
		return nil, errorf(lspext.CodeRequestFailed, "%v", err)
	}
	if newName == t.name {
		return nil, errorf(lspext.CodeRequestFailed, "%s already has that name", t.name)
	}
	occ, touched, err := sn.occurrences(ctx, res, t.decl, true)
	if err != nil {
		return nil, err
	}
	for _, r := range touched {
		if d, ok := r.Scope[newName]; ok {
			line, _ := r.Files[d.Path].Lines.LineCol(d.Ident.From)
			return nil, errorf(lspext.CodeRequestFailed, "%s is already declared (%s line %d); choose another name", newName, baseName(d.Path), line)
		}
		for _, st := range r.File.Stmts {
			if l, ok := st.(*syntax.LoopStmt); ok && l.Name != nil && l.Name.Name == newName {
				return nil, errorf(lspext.CodeRequestFailed, "%s is already the name of a loop in %s; choose another name", newName, baseName(r.Path))
			}
		}
	}
	return sn.renameEdit(occ, t.name, newName)
}

// renameEdit turns the occurrences into one workspace edit, each file's
// edits checked by syntax.Rename to read back as the same tree with the
// new name (or refused, saying which file would change).
func (sn *snapshot) renameEdit(occ []occurrence, old, newName string) (protocol.WorkspaceEdit, error) {
	we := protocol.WorkspaceEdit{Changes: map[protocol.DocumentURI][]protocol.TextEdit{}}
	var order []string
	byPath := map[string][]occurrence{}
	for _, o := range occ {
		if byPath[o.path] == nil {
			order = append(order, o.path)
		}
		byPath[o.path] = append(byPath[o.path], o)
	}
	for _, path := range order {
		list := byPath[path]
		m := sn.mapperFor(list[0].res, path)
		if m == nil {
			return we, errorf(lspext.CodeRequestFailed, "cannot read %s to rename in it", baseName(path))
		}
		spans := make([]syntax.Span, len(list))
		for i, o := range list {
			spans[i] = o.span
		}
		edits, err := syntax.Rename(m.src, spans, old, newName)
		if err != nil {
			return we, errorf(lspext.CodeRequestFailed, "%s: %v", baseName(path), err)
		}
		uri := sn.uriOf(path)
		for _, e := range edits {
			r, err := m.SpanRange(e.Span)
			if err != nil {
				return we, errorf(lspext.CodeRequestFailed, "cannot map an occurrence in %s", baseName(path))
			}
			we.Changes[uri] = append(we.Changes[uri], protocol.TextEdit{Range: r, NewText: e.New})
		}
	}
	if len(we.Changes) == 0 {
		return we, errorf(lspext.CodeRequestFailed, "found no occurrence of %s", old)
	}
	return we, nil
}

func baseName(p string) string {
	for i := len(p) - 1; i >= 0; i-- {
		if p[i] == '/' || p[i] == '\\' {
			return p[i+1:]
		}
	}
	return p
}

var _ = fmt.Sprintf
