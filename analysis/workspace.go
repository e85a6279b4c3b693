package analysis

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"ringside/internal/fileio"
	"ringside/syntax"
)

// Env is where a check runs: the workspace folders a `use` may reach, how
// files are read (an editor passes its open buffers), and the options.
type Env struct {
	// Roots are the workspace folders, absolute. Empty means the folder of
	// the checked file.
	Roots []string
	// Read returns a file's contents; nil reads from disk.
	Read func(path string) ([]byte, error)
	// RealPath resolves symbolic links; nil uses filepath.EvalSymlinks. A
	// path it cannot resolve (a buffer never saved) is taken as it is.
	RealPath func(path string) (string, error)
	Options  Options
	// Memo, when set, keeps loop results and gain limits between checks
	// (an editor's); nil computes everything.
	Memo *Memo
}

func (e *Env) read(path string) ([]byte, error) {
	if e.Read != nil {
		return e.Read(path)
	}
	return fileio.ReadRegular(path, MaxFileSize)
}

func (e *Env) realPath(path string) string {
	f := e.RealPath
	if f == nil {
		f = filepath.EvalSymlinks
	}
	if r, err := f(path); err == nil {
		return r
	}
	return path
}

// MaxFileSize is the largest file the analysis reads (1 MiB): a .loop
// file is a few kilobytes; anything far larger is not one, and a clear
// error beats a stalled editor. Reads stop at the limit (fileio), so a
// larger file, or /dev/zero, costs no more than the limit.
const MaxFileSize = 1 << 20

// inside reports whether path lies within one of roots, comparing both as
// written and with symbolic links resolved, so that neither `..` nor a link
// can lead out of the workspace.
func (e *Env) inside(path string, roots []string) bool {
	real := e.realPath(path)
	for _, r := range roots {
		if within(r, path) && (within(r, real) || within(e.realPath(r), real)) {
			return true
		}
	}
	return false
}

func within(root, path string) bool {
	rel, err := filepath.Rel(root, path)
	return err == nil && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator)) && !filepath.IsAbs(rel)
}

// unit is one parsed file of the closure a check reads.
type unit struct {
	path  string
	file  *syntax.File
	errs  syntax.ErrorList
	uses  []*Use
	tOK   bool
	t     float64
	tSpan syntax.Span
	cycle bool // some use chain from here leads back into itself
}

// loader reads the closure of `use` lines from one file, each file once.
type loader struct {
	env   *Env
	roots []string
	units map[string]*unit
	order []*unit
	diags *diagList
}

func (l *loader) load(path string, src []byte, stack []string) *unit {
	if u, ok := l.units[path]; ok {
		return u
	}
	f, errs := syntax.Parse(path, src)
	u := &unit{path: path, file: f, errs: errs}
	l.units[path] = u
	l.order = append(l.order, u)
	stack = append(stack, path)
	for _, st := range f.Stmts {
		us, ok := st.(*syntax.UseStmt)
		if !ok {
			continue
		}
		use := &Use{Stmt: us}
		u.uses = append(u.uses, use)
		target, msg, code := l.resolve(path, us.Path)
		if msg != "" {
			l.diags.add(path, us.PathSpan, Error, code, msg)
			continue
		}
		for _, s := range stack {
			if s == target {
				l.diags.add(path, us.PathSpan, Error, CodeUseCycle,
					fmt.Sprintf("use %q leads back to %s: files may not use each other in a circle; move the shared gains and blocks into a third file", us.Path, filepath.Base(target)))
				target = ""
				u.cycle = true
				break
			}
		}
		if target == "" {
			continue
		}
		if _, done := l.units[target]; !done {
			data, err := l.env.read(target)
			if err != nil {
				l.diags.add(path, us.PathSpan, Error, CodeUseNotFound, fmt.Sprintf("cannot read %q: %v", us.Path, cleanErr(err)))
				continue
			}
			if len(data) > MaxFileSize {
				l.diags.add(path, us.PathSpan, Error, CodeUseNotFound, fmt.Sprintf("%q is %d bytes, over the %d-byte limit for a .loop file", us.Path, len(data), MaxFileSize))
				continue
			}
			sub := l.load(target, data, stack)
			if sub.cycle && !u.cycle {
				u.cycle = true
				l.diags.add(path, us.PathSpan, Error, CodeUseCycle,
					fmt.Sprintf("use %q: that file's own use lines lead back in a circle; files may not use each other in a circle", us.Path))
			}
			if len(sub.errs) > 0 {
				e := sub.errs[0]
				line, col := sub.file.Lines.LineCol(e.From)
				l.diags.add(path, us.PathSpan, Error, CodeUseErrors,
					fmt.Sprintf("%q has %d syntax error(s); the first, at %d:%d: %s", us.Path, len(sub.errs), line, col, e.Msg))
			}
		}
		use.Path = target
	}
	return u
}

// resolve turns a `use` path into an absolute path inside the workspace,
// or explains why it cannot.
func (l *loader) resolve(from, p string) (string, string, string) {
	if p == "" {
		return "", "use needs a file path, e.g. use \"plants/belt.loop\"", CodeUseNotFound
	}
	if filepath.IsAbs(p) || strings.HasPrefix(p, "/") || strings.HasPrefix(p, `\`) {
		return "", fmt.Sprintf("use %q: paths are relative to this file's folder, not absolute", p), CodeUseOutside
	}
	target := filepath.Clean(filepath.Join(filepath.Dir(from), filepath.FromSlash(p)))
	if !l.env.inside(target, l.roots) {
		return "", fmt.Sprintf("use %q reaches outside the workspace (%s); only files inside it may be used", p, strings.Join(l.roots, ", ")), CodeUseOutside
	}
	return target, "", ""
}

func cleanErr(err error) string {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err.Error()
	}
	return err.Error()
}
