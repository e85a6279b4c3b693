package server

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"net/url"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"slices"
	"strings"
	"time"

	"go.lsp.dev/jsonrpc2"
	"go.lsp.dev/protocol"
	"go.uber.org/zap"

	"ringside/analysis"
	"ringside/internal/fileio"
	"ringside/server/lspext"
	"ringside/syntax"
)

// session is the mutable state of a server, guarded by Server.mu.
type session struct {
	docs     map[string]*document // open documents by cleaned absolute path
	roots    []string             // workspace folders, absolute
	settings Settings
	encoding string
	progress bool // the client accepts window/workDoneProgress/create
	// gen counts every change that can alter an analysis (text, settings,
	// folders, files on disk); cached results of an older gen are stale.
	gen   uint64
	cache map[cacheKey]*cached
	order []cacheKey // insertion order of cache, oldest first
	// memo keeps loop results and gain limits between full analyses, so
	// that an edit re-analyses only the loops whose inputs changed.
	memo *analysis.Memo
	// known are the .loop files of the workspace (scanned or opened).
	known map[string]bool
	diag  map[string]*diagState
}

type document struct {
	uri     protocol.DocumentURI
	path    string
	version int32
	text    []byte // never modified in place: a change makes a new slice
}

type cacheKey struct {
	path string
	full bool
	gen  uint64
}

// diagState tracks the pending check of one open document.
type diagState struct {
	seq    uint64
	timer  *time.Timer
	cancel context.CancelFunc
	uses   map[string]bool // files the last check read
}

func newSession() *session {
	return &session{
		docs:     map[string]*document{},
		settings: defaultSettings(),
		encoding: lspext.EncodingUTF16,
		cache:    map[cacheKey]*cached{},
		memo:     analysis.NewMemo(),
		known:    map[string]bool{},
		diag:     map[string]*diagState{},
	}
}

// Settings are the user's options, from initializationOptions or
// workspace/didChangeConfiguration, either at the top level or under
// "ringside".
type Settings struct {
	GainMarginDB   float64 `json:"gainMarginDb"`
	PhaseMarginDeg float64 `json:"phaseMarginDeg"`
	// Trigger is "change" (the full analysis after each change, the
	// default) or "save" (after a change only the quick one, names,
	// units and block poles, until the file is saved). Opening a file
	// always shows the full analysis.
	Trigger   string  `json:"trigger"`
	Tolerance float64 `json:"tolerance"`
	// DelayMs is how long after the last change the analysis runs, in
	// milliseconds (0: at once); negative means unset (Config.Debounce).
	DelayMs float64 `json:"delayMs"`
}

func defaultSettings() Settings {
	o := analysis.DefaultOptions()
	return Settings{GainMarginDB: o.GainMarginDB, PhaseMarginDeg: o.PhaseMarginDeg, Trigger: "change", Tolerance: o.Tolerance, DelayMs: -1}
}

// maxDelayMs bounds the delayMs setting (a minute: beyond it the editor
// would look broken).
const maxDelayMs = 60000

// parseSettings overlays raw settings on cur; a bad value is an error
// naming it and leaves cur as it was.
func parseSettings(cur Settings, raw json.RawMessage) (Settings, error) {
	raw = bytes.TrimSpace(raw)
	if len(raw) == 0 || string(raw) == "null" {
		return cur, nil
	}
	var top map[string]json.RawMessage
	if err := json.Unmarshal(raw, &top); err != nil {
		return cur, fmt.Errorf("settings must be an object: %v", err)
	}
	if inner, ok := top["ringside"]; ok {
		if err := json.Unmarshal(inner, &top); err != nil {
			return cur, fmt.Errorf("settings.ringside must be an object: %v", err)
		}
	}
	next := cur
	num := func(key string, dst *float64, ok func(float64) bool, want string) error {
		v, present := top[key]
		if !present || string(v) == "null" {
			return nil
		}
		var f float64
		if err := json.Unmarshal(v, &f); err != nil || !ok(f) {
			return fmt.Errorf("setting %s = %s: want %s", key, v, want)
		}
		*dst = f
		return nil
	}
	finite := func(f float64) bool { return !math.IsNaN(f) && !math.IsInf(f, 0) }
	if err := num("gainMarginDb", &next.GainMarginDB, func(f float64) bool { return finite(f) && f >= 0 && f <= 100 }, "a number of dB from 0 to 100"); err != nil {
		return cur, err
	}
	if err := num("phaseMarginDeg", &next.PhaseMarginDeg, func(f float64) bool { return finite(f) && f >= 0 && f < 180 }, "a number of degrees from 0 to 180"); err != nil {
		return cur, err
	}
	if err := num("tolerance", &next.Tolerance, func(f float64) bool { return f > 0 && f < 0.1 }, "a number between 0 and 0.1"); err != nil {
		return cur, err
	}
	if err := num("delayMs", &next.DelayMs, func(f float64) bool { return f >= 0 && f <= maxDelayMs }, "milliseconds from 0 to 60000"); err != nil {
		return cur, err
	}
	if v, present := top["trigger"]; present && string(v) != "null" {
		var t string
		if json.Unmarshal(v, &t) != nil || (t != "save" && t != "change") {
			return cur, fmt.Errorf("setting trigger = %s: want \"save\" or \"change\"", v)
		}
		next.Trigger = t
	}
	return next, nil
}

func (st Settings) options(quick bool) analysis.Options {
	return analysis.Options{GainMarginDB: st.GainMarginDB, PhaseMarginDeg: st.PhaseMarginDeg, Tolerance: st.Tolerance, Quick: quick}
}

// ---- URIs ----

// uriPath converts a file URI to a cleaned absolute path.
func uriPath(u protocol.DocumentURI) (string, error) {
	pu, err := url.Parse(string(u))
	if err != nil {
		return "", fmt.Errorf("invalid URI %q: %v", u, err)
	}
	if pu.Scheme != "file" {
		return "", fmt.Errorf("unsupported URI %q: only file URIs are served", u)
	}
	p := pu.Path
	if runtime.GOOS == "windows" {
		p = strings.TrimPrefix(p, "/")
	}
	p = filepath.FromSlash(p)
	if !filepath.IsAbs(p) {
		return "", fmt.Errorf("URI %q has no absolute path", u)
	}
	return filepath.Clean(p), nil
}

// pathURI converts an absolute path to a file URI.
func pathURI(p string) protocol.DocumentURI {
	p = filepath.ToSlash(p)
	if !strings.HasPrefix(p, "/") {
		p = "/" + p
	}
	return protocol.DocumentURI((&url.URL{Scheme: "file", Path: p}).String())
}

// ---- snapshots ----

// snapshot is an immutable view of the session for one request or check.
type snapshot struct {
	s        *Server
	docs     map[string]*document
	roots    []string
	settings Settings
	encoding string
	gen      uint64
}

// snapshot copies the current state (call with s.mu unlocked).
func (s *Server) snapshot() *snapshot {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.snapshotLocked()
}

func (s *Server) snapshotLocked() *snapshot {
	docs := make(map[string]*document, len(s.ses.docs))
	for k, v := range s.ses.docs {
		docs[k] = v
	}
	return &snapshot{s: s, docs: docs, roots: append([]string(nil), s.ses.roots...), settings: s.ses.settings, encoding: s.ses.encoding, gen: s.ses.gen}
}

// read returns a file's text: the open buffer, else the disk (regular
// files only, never blocking, at most analysis.MaxFileSize bytes).
func (sn *snapshot) read(path string) ([]byte, error) {
	if d, ok := sn.docs[path]; ok {
		return d.text, nil
	}
	return fileio.ReadRegular(path, analysis.MaxFileSize)
}

// mapper returns a mapper for a file's current text, or an error.
func (sn *snapshot) mapper(path string) (*Mapper, []byte, error) {
	src, err := sn.read(path)
	if err != nil {
		return nil, nil, err
	}
	return NewMapper(src, sn.encoding), src, nil
}

// cached is an analysis of one generation, finished (done closed, res
// set, or nil when it was cancelled) or still running.
type cached struct {
	done chan struct{}
	res  *analysis.Result
}

// check analyses path (quick or full) from the snapshot. One analysis per
// generation: a finished or running full analysis also answers a request
// for the quick one, and a request that finds its analysis running waits
// for it instead of computing it again.
func (sn *snapshot) check(ctx context.Context, path string, full bool) (*analysis.Result, error) {
	s := sn.s
	if sn.settings.Trigger != "save" {
		// The live analysis is the full one: a quick one beside it would
		// be work done twice.
		full = true
	}
	key := cacheKey{path: path, full: full, gen: sn.gen}
	keys := []cacheKey{key}
	if !full {
		keys = []cacheKey{{path: path, full: true, gen: sn.gen}, key}
	}
	for {
		s.mu.Lock()
		var found *cached
		for _, k := range keys {
			if c := s.ses.cache[k]; c != nil {
				found = c
				break
			}
		}
		var mine *cached
		if found == nil && s.ses.gen == sn.gen {
			mine = &cached{done: make(chan struct{})}
			s.ses.remember(key, mine)
		}
		s.mu.Unlock()
		if found == nil {
			return sn.analyse(ctx, path, full, mine)
		}
		select {
		case <-found.done:
		case <-ctx.Done():
			return nil, errCancelled
		}
		if found.res != nil {
			return found.res, nil
		}
		// The analysis it waited for was cancelled: drop it and try again.
		s.mu.Lock()
		for _, k := range keys {
			if s.ses.cache[k] == found {
				delete(s.ses.cache, k)
			}
		}
		s.mu.Unlock()
	}
}

// analyse runs one analysis and, when mine is set, publishes it there.
func (sn *snapshot) analyse(ctx context.Context, path string, full bool, mine *cached) (res *analysis.Result, err error) {
	if mine != nil {
		defer func() {
			mine.res = res
			close(mine.done)
		}()
	}
	src, err := sn.read(path)
	if err != nil {
		return nil, err
	}
	env := analysis.Env{Roots: sn.roots, Read: sn.read, Options: sn.settings.options(!full)}
	if full {
		// Results held for diagnostics and views keep no step samples
		// (half their size); the plot command computes what it draws.
		env.Memo, env.Options.NoStepSamples = sn.s.ses.memo, true
	}
	res = analysis.Check(ctx, path, src, env)
	if ctx.Err() != nil {
		return nil, errCancelled
	}
	return res, nil
}

// plotCheck analyses path with the step samples a plot draws (the results
// the session keeps have none): on a user's request only, never cached.
func (sn *snapshot) plotCheck(ctx context.Context, path string) (*analysis.Result, error) {
	src, err := sn.read(path)
	if err != nil {
		return nil, err
	}
	res := analysis.Check(ctx, path, src, analysis.Env{Roots: sn.roots, Read: sn.read, Options: sn.settings.options(false)})
	if ctx.Err() != nil {
		return nil, errCancelled
	}
	return res, nil
}

// cacheLimit bounds the analysis results kept for reuse. A result of a
// 200-loop file holds about 1.7 MB (trees, transfer functions, poles; no
// step samples), so results are kept for the files in use at the moment,
// not for every open one; published diagnostics do not need them, and the
// memo keeps what edits reuse.
const cacheLimit = 2

// remember caches c under key, dropping stale generations and then the
// oldest entries beyond cacheLimit.
func (ses *session) remember(key cacheKey, c *cached) {
	kept := ses.order[:0]
	for _, k := range ses.order {
		if k.gen == key.gen && k != key {
			kept = append(kept, k)
		} else {
			delete(ses.cache, k)
		}
	}
	for len(kept) >= cacheLimit {
		delete(ses.cache, kept[0])
		kept = kept[1:]
	}
	ses.order = append(kept, key)
	ses.cache[key] = c
}

// docParams resolves the document of a request whose params name only
// {"textDocument": {"uri": ...}}.
func (s *Server) docParams(ctx context.Context, params json.RawMessage) (*snapshot, string, *Mapper, []byte, error) {
	var p struct {
		TextDocument protocol.TextDocumentIdentifier `json:"textDocument"`
	}
	if err := decode(params, &p); err != nil {
		return nil, "", nil, nil, err
	}
	return s.docRequest(ctx, p.TextDocument.URI)
}

// docPosition resolves a request's document and the byte offset of its
// position.
func (s *Server) docPosition(ctx context.Context, p protocol.TextDocumentPositionParams) (*snapshot, string, *Mapper, []byte, syntax.Pos, error) {
	sn, path, m, src, err := s.docRequest(ctx, p.TextDocument.URI)
	if err != nil {
		return nil, "", nil, nil, syntax.NoPos, err
	}
	pos, err := m.PositionOffset(p.Position)
	if err != nil {
		return nil, "", nil, nil, syntax.NoPos, errorf(jsonrpc2.InvalidParams, "%v", err)
	}
	return sn, path, m, src, pos, nil
}

// docRequest resolves a request's document: its snapshot, path and mapper.
// Once the snapshot is taken the read loop is released (the request sees
// every message before it and none after), and an edit of the document
// from then on cancels the request (supersede).
func (s *Server) docRequest(ctx context.Context, uri protocol.DocumentURI) (*snapshot, string, *Mapper, []byte, error) {
	path, err := uriPath(uri)
	if err != nil {
		return nil, "", nil, nil, errorf(jsonrpc2.InvalidParams, "%v", err)
	}
	sn := s.snapshot()
	s.reads(ctx, path)
	async(ctx)
	if s.afterSnapshot != nil {
		s.afterSnapshot()
	}
	m, src, err := sn.mapper(path)
	if err != nil {
		return nil, "", nil, nil, errorf(lspext.CodeRequestFailed, "cannot read %s: %v", path, err)
	}
	if len(src) > analysis.MaxFileSize {
		// An open buffer may be larger than any file the server reads;
		// answering for it would cost memory without bound.
		return nil, "", nil, nil, errorf(lspext.CodeRequestFailed, "%s is over the %d-byte limit for a .loop file; not served", baseName(path), analysis.MaxFileSize)
	}
	return sn, path, m, src, nil
}

// ---- lifecycle ----

func (s *Server) initialize(params json.RawMessage) (any, error) {
	var p lspext.InitializeParams
	if err := decode(params, &p); err != nil {
		return nil, err
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	ses := s.ses
	for _, f := range p.WorkspaceFolders {
		if path, err := uriPath(protocol.DocumentURI(f.URI)); err == nil {
			ses.roots = append(ses.roots, path)
		}
	}
	// Older clients name the workspace only by rootUri or rootPath.
	//lint:ignore SA1019 the deprecated field is the fallback on purpose
	if rootURI := p.RootURI; len(ses.roots) == 0 && rootURI != "" {
		if path, err := uriPath(rootURI); err == nil {
			ses.roots = append(ses.roots, path)
		}
	}
	//lint:ignore SA1019 the deprecated field is the fallback on purpose
	if rootPath := p.RootPath; len(ses.roots) == 0 && rootPath != "" && filepath.IsAbs(rootPath) {
		ses.roots = append(ses.roots, filepath.Clean(rootPath))
	}
	if g := p.Capabilities.General; g != nil {
		// The client lists encodings in order of preference; take the
		// first one the server knows.
	pick:
		for _, e := range g.PositionEncodings {
			switch e {
			case lspext.EncodingUTF8, lspext.EncodingUTF16, lspext.EncodingUTF32:
				ses.encoding = e
				break pick
			}
		}
	}
	if w := p.Capabilities.Window; w != nil {
		ses.progress = w.WorkDoneProgress
	}
	opts, err := json.Marshal(p.InitializationOptions)
	if err == nil {
		ses.settings, err = parseSettings(ses.settings, opts)
	}
	if err != nil {
		s.log.Warn("initializationOptions ignored", zap.Error(err))
		s.settingsRefused(err)
	}
	s.initialized = true
	version := s.cfg.Version
	if version == "" {
		version = "dev"
	}
	return lspext.InitializeResult{
		ServerInfo: &protocol.ServerInfo{Name: "ringside", Version: version},
		Capabilities: lspext.ServerCapabilities{
			PositionEncoding:  ses.encoding,
			InlayHintProvider: true,
			ServerCapabilities: protocol.ServerCapabilities{
				TextDocumentSync:                &protocol.TextDocumentSyncOptions{OpenClose: true, Change: protocol.TextDocumentSyncKindIncremental, Save: &protocol.SaveOptions{IncludeText: false}},
				HoverProvider:                   true,
				CompletionProvider:              &protocol.CompletionOptions{TriggerCharacters: []string{" "}},
				DefinitionProvider:              true,
				ReferencesProvider:              true,
				DocumentSymbolProvider:          true,
				WorkspaceSymbolProvider:         true,
				CodeActionProvider:              &protocol.CodeActionOptions{CodeActionKinds: []protocol.CodeActionKind{protocol.QuickFix}},
				CodeLensProvider:                &protocol.CodeLensOptions{},
				DocumentFormattingProvider:      true,
				DocumentRangeFormattingProvider: true,
				RenameProvider:                  &protocol.RenameOptions{PrepareProvider: true},
				FoldingRangeProvider:            true,
				ExecuteCommandProvider:          &protocol.ExecuteCommandOptions{Commands: []string{plotCommand}},
				SemanticTokensProvider:          &lspext.SemanticTokensOptions{Legend: protocol.SemanticTokensLegend{TokenTypes: legendTypes(), TokenModifiers: []protocol.SemanticTokenModifiers{}}, Full: true},
			}},
	}, nil
}

// legendTypes is tokenTypes as the legend's type.
func legendTypes() []protocol.SemanticTokenTypes {
	out := make([]protocol.SemanticTokenTypes, len(tokenTypes))
	for i, t := range tokenTypes {
		out[i] = protocol.SemanticTokenTypes(t)
	}
	return out
}

// stopAll cancels pending checks (shutdown, exit).
func (s *Server) stopAll() {
	s.mu.Lock()
	defer s.mu.Unlock()
	for _, d := range s.ses.diag {
		if d.timer != nil {
			d.timer.Stop()
		}
		if d.cancel != nil {
			d.cancel()
		}
		d.seq++
	}
}

// ---- text synchronisation ----

func (s *Server) didOpen(params json.RawMessage) error {
	var p protocol.DidOpenTextDocumentParams
	if err := decode(params, &p); err != nil {
		return err
	}
	path, err := uriPath(p.TextDocument.URI)
	if err != nil {
		return err
	}
	s.mu.Lock()
	s.ses.docs[path] = &document{uri: p.TextDocument.URI, path: path, version: p.TextDocument.Version, text: []byte(p.TextDocument.Text)}
	s.ses.known[path] = true
	s.ses.gen++
	s.mu.Unlock()
	s.changed(path, opened)
	return nil
}

func (s *Server) didChange(params json.RawMessage) error {
	var p lspext.DidChangeTextDocumentParams
	if err := decode(params, &p); err != nil {
		return err
	}
	path, err := uriPath(p.TextDocument.URI)
	if err != nil {
		return err
	}
	s.mu.Lock()
	d, ok := s.ses.docs[path]
	if !ok {
		s.mu.Unlock()
		return fmt.Errorf("didChange for %s, which is not open", path)
	}
	text, err := applyChanges(d.text, p.ContentChanges, s.ses.encoding)
	if err != nil {
		s.mu.Unlock()
		// The client's view and ours differ now; say so loudly rather than
		// analyse text the user never wrote.
		s.notify(protocol.MethodWindowLogMessage, map[string]any{"type": 1, "message": "ringside: " + err.Error() + "; close and reopen the file to resynchronise"})
		return err
	}
	s.ses.docs[path] = &document{uri: d.uri, path: path, version: p.TextDocument.Version, text: text}
	s.ses.gen++
	s.mu.Unlock()
	s.supersede(path)
	s.changed(path, edited)
	return nil
}

// applyChanges applies LSP content changes in order to a copy of text.
func applyChanges(text []byte, changes []lspext.TextDocumentContentChangeEvent, encoding string) ([]byte, error) {
	// One private copy, edited in place, and its line index kept up to
	// date change by change: many changes in one notification cost the
	// lines they move, not a copy and a rescan of the whole text each.
	text = append([]byte(nil), text...)
	var m *Mapper
	for i, c := range changes {
		if c.Range == nil {
			text, m = []byte(c.Text), nil
			continue
		}
		if m == nil {
			m = NewMapper(text, encoding)
		}
		span, err := m.RangeSpan(*c.Range)
		if err != nil {
			return nil, fmt.Errorf("change %d: %v", i, err)
		}
		text = slices.Replace(text, int(span.From), int(span.To), []byte(c.Text)...)
		m.edit(text, span, len(c.Text))
	}
	return text, nil
}

func (s *Server) didSave(params json.RawMessage) error {
	var p lspext.DidSaveTextDocumentParams
	if err := decode(params, &p); err != nil {
		return err
	}
	path, err := uriPath(p.TextDocument.URI)
	if err != nil {
		return err
	}
	s.mu.Lock()
	replaced := false
	if d, ok := s.ses.docs[path]; ok && p.Text != nil && *p.Text != string(d.text) {
		s.ses.docs[path] = &document{uri: d.uri, path: path, version: d.version, text: []byte(*p.Text)}
		replaced = true
	}
	s.ses.gen++
	s.mu.Unlock()
	if replaced {
		s.supersede(path)
	}
	s.changed(path, saved)
	return nil
}

func (s *Server) didClose(params json.RawMessage) error {
	var p protocol.DidCloseTextDocumentParams
	if err := decode(params, &p); err != nil {
		return err
	}
	path, err := uriPath(p.TextDocument.URI)
	if err != nil {
		return err
	}
	s.mu.Lock()
	uri := protocol.DocumentURI("")
	if d, ok := s.ses.docs[path]; ok {
		uri = d.uri
	}
	delete(s.ses.docs, path)
	if d := s.ses.diag[path]; d != nil {
		if d.timer != nil {
			d.timer.Stop()
		}
		if d.cancel != nil {
			d.cancel()
		}
		delete(s.ses.diag, path)
	}
	s.ses.memo.Forget(path)
	s.ses.gen++
	s.mu.Unlock()
	if uri != "" {
		s.notify(protocol.MethodTextDocumentPublishDiagnostics, lspext.PublishDiagnosticsParams{URI: uri, Diagnostics: []protocol.Diagnostic{}})
	}
	// Files that used the closed buffer now read it from disk.
	s.changed(path, edited)
	return nil
}

func (s *Server) didChangeConfiguration(params json.RawMessage) error {
	var p protocol.DidChangeConfigurationParams
	if err := decode(params, &p); err != nil {
		return err
	}
	s.mu.Lock()
	raw, err := json.Marshal(p.Settings)
	var st Settings
	if err == nil {
		st, err = parseSettings(s.ses.settings, raw)
	}
	if err == nil {
		s.ses.settings = st
		s.ses.gen++
	}
	s.mu.Unlock()
	if err != nil {
		s.settingsRefused(err)
		return err
	}
	s.recheckAll()
	return nil
}

// settingsRefused tells the user (window/showMessage) that a setting was
// refused and which values stay in force.
func (s *Server) settingsRefused(err error) {
	s.notify(protocol.MethodWindowShowMessage, &protocol.ShowMessageParams{Type: protocol.MessageTypeError,
		Message: "ringside: " + err.Error() + "; the settings stay as they were"})
}

func (s *Server) didChangeWorkspaceFolders(params json.RawMessage) error {
	var p protocol.DidChangeWorkspaceFoldersParams
	if err := decode(params, &p); err != nil {
		return err
	}
	s.mu.Lock()
	for _, f := range p.Event.Removed {
		if path, err := uriPath(protocol.DocumentURI(f.URI)); err == nil {
			for i, r := range s.ses.roots {
				if r == path {
					s.ses.roots = append(s.ses.roots[:i], s.ses.roots[i+1:]...)
					break
				}
			}
		}
	}
	for _, f := range p.Event.Added {
		if path, err := uriPath(protocol.DocumentURI(f.URI)); err == nil {
			s.ses.roots = append(s.ses.roots, path)
		}
	}
	s.ses.gen++
	s.mu.Unlock()
	s.startScan()
	s.recheckAll()
	return nil
}

// filesChanged handles files changed on disk: every open file is re-checked.
func (s *Server) filesChanged() {
	s.mu.Lock()
	s.ses.gen++
	s.mu.Unlock()
	s.recheckAll()
}

// ---- diagnostics scheduling ----

// why a document is checked.
type why int

const (
	edited why = iota // its text, or a file it uses, or the settings changed
	saved
	opened
)

// changed schedules the check of path and of every open file whose last
// check read it.
func (s *Server) changed(path string, w why) {
	s.mu.Lock()
	var dependents []string
	for p, d := range s.ses.diag {
		if p != path && d.uses[path] {
			if _, open := s.ses.docs[p]; open {
				dependents = append(dependents, p)
			}
		}
	}
	_, open := s.ses.docs[path]
	s.mu.Unlock()
	if open {
		s.schedule(path, w)
	}
	for _, t := range dependents {
		s.schedule(t, edited)
	}
}

func (s *Server) recheckAll() {
	s.mu.Lock()
	var targets []string
	for p := range s.ses.docs {
		targets = append(targets, p)
	}
	s.mu.Unlock()
	for _, t := range targets {
		s.schedule(t, edited)
	}
}

// delay is how long after an edit the check starts: the delayMs setting,
// else the server's configured debounce.
func (s *Server) delay() time.Duration {
	if ms := s.ses.settings.DelayMs; ms >= 0 {
		return time.Duration(ms * float64(time.Millisecond))
	}
	return max(s.cfg.Debounce, 0)
}

// schedule (re)starts the check of an open document: the full analysis,
// at once on open and save, after the delay on an edit (only the quick one
// with the setting trigger "save"). A newer schedule supersedes an older
// one, whose result is dropped.
func (s *Server) schedule(path string, w why) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.shutdown {
		return
	}
	d := s.ses.diag[path]
	if d == nil {
		d = &diagState{}
		s.ses.diag[path] = d
	}
	if d.timer != nil {
		d.timer.Stop()
	}
	if d.cancel != nil {
		d.cancel()
	}
	d.seq++
	seq := d.seq
	full := w != edited || s.ses.settings.Trigger != "save"
	ctx, cancel := context.WithCancel(s.ctx)
	d.cancel = cancel
	delay := s.delay()
	if w != edited {
		delay = 0
	}
	run := func() { s.runCheck(ctx, path, seq, full) }
	if delay == 0 {
		d.timer = nil
		go run()
		return
	}
	d.timer = time.AfterFunc(delay, run)
}

// runCheck analyses one document and publishes its diagnostics, unless a
// newer check was scheduled meanwhile.
func (s *Server) runCheck(ctx context.Context, path string, seq uint64, full bool) {
	defer func() {
		if r := recover(); r != nil {
			s.bug("panic checking %s: %v\n%s", path, r, debugStack())
		}
	}()
	// One document check at a time: a check already analyses its loops on
	// every processor, so a second one adds no throughput, only memory in
	// flight (a check allocates several times what it keeps).
	select {
	case checkSlots <- struct{}{}:
		defer func() { <-checkSlots }()
	case <-ctx.Done():
		return
	}
	if ctx.Err() != nil {
		return // superseded while waiting
	}
	sn := s.snapshot()
	doc, ok := sn.docs[path]
	if !ok {
		return
	}
	res, err := sn.check(ctx, path, full)
	if err != nil {
		return
	}
	// The result's line index is that of the text it analysed.
	var m *Mapper
	if res.File != nil && res.File.Lines != nil && bytes.Equal(res.File.Src, doc.text) {
		m = fileMapper(res.File, sn.encoding)
	} else {
		m = NewMapper(doc.text, sn.encoding)
	}
	diags := sn.protocolDiagnostics(res, m)
	uses := map[string]bool{}
	for p := range res.Files {
		uses[p] = true
	}
	// publishing is serialised so that an older check can never overwrite
	// the diagnostics of a newer one.
	s.publishMu.Lock()
	defer s.publishMu.Unlock()
	s.mu.Lock()
	d := s.ses.diag[path]
	current := d != nil && d.seq == seq && ctx.Err() == nil
	if current {
		d.uses = uses
	}
	s.mu.Unlock()
	if !current {
		return
	}
	v := doc.version
	s.notify(protocol.MethodTextDocumentPublishDiagnostics, lspext.PublishDiagnosticsParams{URI: doc.uri, Version: &v, Diagnostics: diags})
}

// checkSlots bounds the document checks running at once (one; see runCheck).
var checkSlots = make(chan struct{}, 1)

func debugStack() string { return string(debug.Stack()) }
