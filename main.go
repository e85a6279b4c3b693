// Command ringside checks .loop files of discrete-time control loops, from
// the command line or as a language server.
//
//	ringside check [--format text|json|sarif|markdown] [--indent] [--root DIR] [--gain-margin DB] [--phase-margin DEG] [--tolerance X] [--budget DURATION] [--baseline FILE.json] PATH...
//	ringside fmt [-w] FILE...
//	ringside plot FILE [--loop NAME] [-o OUT]
//	ringside serve [--stdio] [--log-file PATH] [--log-level LEVEL]
//	ringside export [--lang c|json] [-o PATH] FILE
package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"runtime/debug"
	"sort"
	"strings"

	"ringside/analysis"
	"ringside/analysis/export"
	"ringside/analysis/plot"
	"ringside/analysis/report"
	"ringside/cliflag"
	"ringside/internal/fileio"
	"ringside/server"
	"ringside/syntax"
)

// version is the tool version printed in SARIF and by the server.
const version = "0.1.0"

const usage = `ringside: stability, margins and gain limits of discrete-time control loops in .loop files

usage:
  ringside check [--format text|json|sarif|markdown] [--indent] [--root DIR] [--gain-margin DB] [--phase-margin DEG]
                 [--tolerance X] [--budget DURATION] [--baseline FILE.json] PATH...
  ringside fmt [-w] FILE...
  ringside plot FILE [--loop NAME] [-o OUT.svg|OUT.png|OUT.html]
  ringside serve [--stdio] [--log-file PATH] [--log-level debug|info|warn|error]
  ringside export [--lang c|json] [-o PATH] FILE

check exits 0 when no file has errors, 1 when any has (or a loop regressed against --baseline),
2 on usage errors or unreadable input. "ringside COMMAND --help" lists the flags of each command.
export exits 0 when written, 1 when the file has errors (nothing is written), 2 on usage
errors, unreadable input or a file without a realize line.
`

// checkMemoryLimit is the soft heap limit of `check` (GOMEMLIMIT
// overrides it): about three times what a 2,000-loop file's result keeps.
const checkMemoryLimit = 96 << 20

// checkGCPercent is `check`'s GOGC (the GOGC variable overrides it).
const checkGCPercent = 200

// exitUsage is the exit status for bad usage or unreadable input.
const exitUsage = 2

func main() {
	os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return exitUsage
	}
	switch args[0] {
	case "check":
		return runCheck(args[1:], stdout, stderr)
	case "fmt":
		return runFmt(args[1:], stdout, stderr)
	case "plot":
		return runPlot(args[1:], stdout, stderr)
	case "serve":
		return runServe(args[1:], stdin, stdout, stderr)
	case "export":
		return runExport(args[1:], stdout, stderr)
	case "help", "-h", "--help":
		fmt.Fprint(stdout, usage)
		return 0
	case "version", "--version":
		fmt.Fprintln(stdout, "ringside", version)
		return 0
	}
	fmt.Fprintf(stderr, "ringside: unknown command %q\n\n%s", args[0], usage)
	return exitUsage
}

// parseFlags parses a command's flags (before or after the positional
// arguments); status is -1 to go on, else the exit status (help printed,
// or a usage error explained on stderr).
func parseFlags(fs *cliflag.Set, args []string, stdout, stderr io.Writer) ([]string, int) {
	pos, err := fs.Parse(args, stdout)
	if errors.Is(err, cliflag.ErrHelp) {
		return nil, 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "%s: %v\n", fs.Name(), err)
		return nil, exitUsage
	}
	return pos, -1
}

func runCheck(args []string, stdout, stderr io.Writer) int {
	cf, status := parseCheckFlags(args, stdout, stderr)
	if status >= 0 {
		return status
	}
	cwd, _ := os.Getwd()
	rootDir := cwd
	if cf.root != "" {
		rootDir, _ = filepath.Abs(cf.root)
	}
	files, err := collect(cf.paths, stderr)
	if err != nil {
		fmt.Fprintf(stderr, "ringside check: %v\n", err)
		return exitUsage
	}
	display := func(p string) string {
		if rel, err := filepath.Rel(cwd, p); err == nil && !strings.HasPrefix(rel, "..") {
			return filepath.ToSlash(rel)
		}
		return p
	}
	base, err := openBaseline(cf)
	if err != nil {
		fmt.Fprintf(stderr, "ringside check: --baseline %s: %v\n", cf.baseline, err)
		return exitUsage
	}
	// One file at a time, written as soon as it is checked: memory is
	// bounded by the largest file. A check allocates far more than it
	// keeps (a 2,000-loop file keeps about 30 MB); the soft limit makes the
	// collector reclaim that garbage before the footprint grows past it.
	if os.Getenv("GOMEMLIMIT") == "" {
		debug.SetMemoryLimit(checkMemoryLimit)
	}
	// Below that limit, collect at twice the live heap rather than at its
	// size: a 2,000-loop file then takes a third fewer collections (about
	// 14 % of its CPU time at the default), and the limit still caps it.
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(checkGCPercent)
	}
	cf.opts.NoStepSamples = true // no report prints the samples
	env := analysis.Env{Roots: []string{rootDir}, Options: cf.opts}
	out := report.NewStreamAgainst(cf.format, stdout, display, version, cf.indent, base.sarifStates())
	status = 0
	for _, f := range files {
		abs, _ := filepath.Abs(f)
		src, err := readInput(abs)
		if err != nil {
			fmt.Fprintf(stderr, "ringside check: cannot read %s: %v\n", f, err)
			_ = out.Close() // what was written stays a whole document
			return exitUsage
		}
		r := analysis.Check(context.Background(), abs, src, env)
		out.Add(r)
		base.add(r, display)
		if r.HasErrors() {
			status = 1
		}
	}
	if err := out.Close(); err != nil {
		fmt.Fprintf(stderr, "ringside check: writing the report: %v\n", err)
		return exitUsage
	}
	return base.finish(stdout, cf.format, status)
}

// readInput reads a .loop file named on the command line: a regular file
// of at most analysis.MaxFileSize bytes, never blocking on a FIFO.
func readInput(path string) ([]byte, error) {
	src, err := fileio.ReadRegular(path, analysis.MaxFileSize)
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return nil, pe.Err
	}
	return src, err
}

// collect expands folders into the .loop files inside them, sorted. A
// .loop entry that is not a regular file (a FIFO, a device, a link to
// neither) is skipped with a note on stderr: it would block or never end.
func collect(paths []string, stderr io.Writer) ([]string, error) {
	var out []string
	for _, p := range paths {
		info, err := os.Stat(p)
		if err != nil {
			return nil, fmt.Errorf("cannot read %s: %v", p, errors.Unwrap(err))
		}
		if !info.IsDir() {
			out = append(out, p)
			continue
		}
		var found []string
		err = filepath.WalkDir(p, func(path string, d fs.DirEntry, err error) error {
			if err != nil {
				return err
			}
			if d.IsDir() && path != p && strings.HasPrefix(d.Name(), ".") {
				return filepath.SkipDir
			}
			if d.IsDir() || !strings.HasSuffix(path, ".loop") {
				return nil
			}
			if info, err := os.Stat(path); err != nil || !info.Mode().IsRegular() {
				why := "cannot be read"
				if err == nil {
					why = fileio.NotRegularError(info.Mode()).Error()
				}
				fmt.Fprintf(stderr, "ringside check: skipped %s: %s\n", path, why)
				return nil
			}
			found = append(found, path)
			return nil
		})
		if err != nil {
			return nil, fmt.Errorf("cannot read folder %s: %v", p, err)
		}
		if len(found) == 0 {
			return nil, fmt.Errorf("no .loop files in %s", p)
		}
		sort.Strings(found)
		out = append(out, found...)
	}
	return out, nil
}

func runFmt(args []string, stdout, stderr io.Writer) int {
	fset := cliflag.New("ringside fmt", "FILE...", "Prints each .loop file in the canonical layout, or rewrites it with -w.")
	write := new(bool)
	fset.Bool(write, "w", "write the result back to each file instead of printing it")
	files, st := parseFlags(fset, args, stdout, stderr)
	if st >= 0 {
		return st
	}
	if len(files) == 0 {
		fmt.Fprint(stderr, "ringside fmt: name at least one .loop file\n")
		return exitUsage
	}
	status := 0
	for _, f := range files {
		src, err := readInput(f)
		if err != nil {
			fmt.Fprintf(stderr, "ringside fmt: cannot read %s: %v\n", f, err)
			return exitUsage
		}
		out, err := syntax.Format(src)
		if errors.Is(err, syntax.ErrSyntax) {
			fmt.Fprintf(stderr, "ringside fmt: %s: not formatted, fix its syntax first: %v\n", f, err)
			status = 1
			continue
		}
		if err != nil {
			fmt.Fprintf(stderr, "ringside fmt: %s: %v\n", f, err)
			status = 1
			continue
		}
		if !*write {
			if _, err := stdout.Write(out); err != nil {
				fmt.Fprintf(stderr, "ringside fmt: cannot write the output: %v\n", err)
				return exitUsage
			}
			continue
		}
		if bytes.Equal(out, src) {
			continue
		}
		if err := fileio.WriteAtomic(f, out, 0o644); err != nil {
			fmt.Fprintf(stderr, "ringside fmt: cannot write %s (left as it was): %v\n", f, err)
			return exitUsage
		}
	}
	return status
}

func runPlot(args []string, stdout, stderr io.Writer) int {
	fset := cliflag.New("ringside plot", "FILE", "Draws each loop's z-plane, Bode and step response: SVG, PNG, or one HTML page.")
	loopName, out, root := new(string), new(string), new(string)
	fset.String(loopName, "loop", "plot only the loop `NAME` (default: every loop of the file)")
	fset.String(out, "o", "output `FILE`: .svg (default: SVG on stdout), .png, or .html for one page with every loop")
	fset.String(root, "root", "workspace folder `DIR` that use lines may not leave (default: the current folder)")
	files, status := parseFlags(fset, args, stdout, stderr)
	if status >= 0 {
		return status
	}
	if len(files) != 1 {
		fmt.Fprint(stderr, "ringside plot: name exactly one .loop file\n")
		return exitUsage
	}
	abs, _ := filepath.Abs(files[0])
	src, err := readInput(abs)
	if err != nil {
		fmt.Fprintf(stderr, "ringside plot: cannot read %s: %v\n", files[0], err)
		return exitUsage
	}
	rootDir, _ := os.Getwd()
	if *root != "" {
		rootDir, _ = filepath.Abs(*root)
	}
	res := analysis.Check(context.Background(), abs, src, analysis.Env{Roots: []string{rootDir}, Options: analysis.DefaultOptions()})
	ext := strings.ToLower(filepath.Ext(*out))
	if *out == "" {
		ext = ".svg"
	}
	var loops []*analysis.Loop
	for _, l := range res.Loops {
		if *loopName == "" || l.Name == *loopName {
			loops = append(loops, l)
		}
	}
	if len(loops) == 0 {
		if *loopName != "" {
			fmt.Fprintf(stderr, "ringside plot: %s has no loop named %q\n", files[0], *loopName)
		} else {
			fmt.Fprintf(stderr, "ringside plot: %s has no loops\n", files[0])
		}
		return exitUsage
	}
	var data []byte
	switch ext {
	case ".html", ".htm":
		if *loopName != "" {
			res.Loops = loops
		}
		data, err = plot.Page(res)
	case ".svg", ".png":
		if len(loops) > 1 {
			fmt.Fprintf(stderr, "ringside plot: %s has %d loops; name one with --loop, or write them all with -o OUT.html\n", files[0], len(loops))
			return exitUsage
		}
		if ext == ".png" {
			data, err = plot.LoopPNG(res, loops[0])
		} else {
			data, err = plot.LoopSVG(res, loops[0])
		}
	default:
		fmt.Fprintf(stderr, "ringside plot: unknown output type %q (want .svg, .png or .html)\n", ext)
		return exitUsage
	}
	if err != nil {
		fmt.Fprintf(stderr, "ringside plot: %v\n", err)
		return 1
	}
	if *out == "" {
		if _, err := stdout.Write(data); err != nil {
			fmt.Fprintf(stderr, "ringside plot: cannot write the output: %v\n", err)
			return exitUsage
		}
		return 0
	}
	if err := fileio.WriteAtomic(*out, data, 0o644); err != nil {
		fmt.Fprintf(stderr, "ringside plot: cannot write %s: %v\n", *out, err)
		return exitUsage
	}
	return 0
}

// runExport writes the realized blocks of one file as a C99 header or JSON.
func runExport(args []string, stdout, stderr io.Writer) int {
	fset := cliflag.New("ringside export", "FILE", "Writes every realized block of FILE as a C99 header or as JSON.")
	lang, out := new(string), new(string)
	fset.Choice(lang, "lang", "c", []string{"c", "json"}, "output `LANG`: c (a C99 header) or json")
	fset.String(out, "o", "output `PATH` inside the current folder (default: standard output)")
	files, status := parseFlags(fset, args, stdout, stderr)
	if status >= 0 {
		return status
	}
	if len(files) != 1 {
		fmt.Fprint(stderr, "ringside export: usage: ringside export [--lang c|json] [-o PATH] FILE\n")
		return exitUsage
	}
	abs, _ := filepath.Abs(files[0])
	src, err := readInput(abs)
	if err != nil {
		fmt.Fprintf(stderr, "ringside export: cannot read %s: %v\n", files[0], err)
		return exitUsage
	}
	cwd, _ := os.Getwd()
	res := analysis.Check(context.Background(), abs, src, analysis.Env{Roots: []string{cwd}, Options: analysis.DefaultOptions()})
	blocks, err := export.Blocks(res)
	if err != nil {
		var ee *export.Error
		errors.As(err, &ee)
		fmt.Fprintf(stderr, "ringside export: %s: %v\n", files[0], err)
		return ee.Status
	}
	for _, n := range export.Unrealized(res) {
		fmt.Fprintf(stderr, "ringside export: note: block %s is on a loop path but has no realize line; it is not exported\n", n)
	}
	var data []byte
	if *lang == "json" {
		data, err = export.JSON(res, blocks)
	} else {
		data = []byte(export.C(res, blocks, export.Source{Path: files[0], Content: src, Version: version}))
	}
	if err != nil {
		fmt.Fprintf(stderr, "ringside export: %v\n", err)
		return 1
	}
	if *out == "" {
		if _, err := stdout.Write(data); err != nil {
			fmt.Fprintf(stderr, "ringside export: cannot write the output: %v\n", err)
			return exitUsage
		}
		return 0
	}
	if err := export.WriteFile(cwd, *out, data); err != nil {
		fmt.Fprintf(stderr, "ringside export: cannot write %s: %v\n", *out, err)
		return exitUsage
	}
	return 0
}

func runServe(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	server.Version = version
	return server.Main(args, stdin, stdout, stderr)
}
