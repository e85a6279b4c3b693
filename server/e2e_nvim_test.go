package server

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"sort"
	"strconv"
	"strings"
	"testing"
	"time"

	"ringside/analysis"
)

// TestMain lets the test binary act as `ringside serve` for the editor
// test when the module's command does not dispatch serve yet.
func TestMain(m *testing.M) {
	if os.Getenv("RINGSIDE_TEST_SERVE") == "1" {
		os.Exit(Main(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
	}
	os.Exit(m.Run())
}

// serverBinary builds the ringside command and checks that it serves; if it
// does not (main.go without the serve dispatch), it returns a wrapper script
// that runs this test binary as the server.
func serverBinary(t *testing.T, dir string) string {
	bin := filepath.Join(dir, "ringside")
	build := exec.Command("go", "build", "-o", bin, "ringside")
	build.Dir = ".."
	if out, err := build.CombinedOutput(); err != nil {
		t.Fatalf("go build ringside: %v\n%s", err, out)
	}
	probe := exec.Command(bin, "serve", "--stdio")
	probe.Stdin = strings.NewReader(frame(`{"jsonrpc":"2.0","id":1,"method":"initialize","params":{"capabilities":{}}}`) +
		frame(`{"jsonrpc":"2.0","id":2,"method":"shutdown"}`) + frame(`{"jsonrpc":"2.0","method":"exit"}`))
	var out bytes.Buffer
	probe.Stdout = &out
	if err := probe.Run(); err == nil && strings.Contains(out.String(), `"positionEncoding"`) {
		return bin
	}
	t.Logf("the ringside command does not serve yet (main.go: dispatch serve to server.Main); using the test binary")
	self, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	wrapper := filepath.Join(dir, "ringside-test-serve")
	script := "#!/bin/sh\n# ignore the 'serve' argument\nshift\nRINGSIDE_TEST_SERVE=1 exec '" + self + "' \"$@\"\n"
	if err := os.WriteFile(wrapper, []byte(script), 0o755); err != nil {
		t.Fatal(err)
	}
	return wrapper
}

func TestNeovimEndToEnd(t *testing.T) {
	nvim := findNeovim(t)
	init := "../editors/nvim/minimal_init.lua"
	if _, err := os.Stat(init); err != nil {
		t.Fatalf("missing %s: %v", init, err)
	}
	dir := t.TempDir()
	bin := serverBinary(t, dir)
	ws := filepath.Join(dir, "ws")
	copyDir(t, "testdata/ws", ws)
	if err := os.WriteFile(filepath.Join(ws, ".git"), nil, 0o644); err != nil { // the plugin's root marker
		t.Fatal(err)
	}
	file := filepath.Join(ws, "unstable.loop")
	initAbs, _ := filepath.Abs(init)
	// The system's opener, as the plugin finds it on PATH, is a stand-in
	// that keeps a copy of the page it was asked to open (Neovim removes
	// its temporary files when it quits).
	opened := filepath.Join(dir, "opened.txt")
	binDir := filepath.Join(dir, "bin")
	os.Mkdir(binDir, 0o755)
	opener := "#!/bin/sh\ncase \"$1\" in *.html) ;; *) exit 1 ;; esac\ncp \"$1\" \"$RINGSIDE_OPENED.tmp\" && mv \"$RINGSIDE_OPENED.tmp\" \"$RINGSIDE_OPENED\"\n"
	if err := os.WriteFile(filepath.Join(binDir, "xdg-open"), []byte(opener), 0o755); err != nil {
		t.Fatal(err)
	}
	b, out := runNeovim(t, nvim, initAbs, "testdata/nvim/e2e.lua", dir, ws, 90*time.Second, "RINGSIDE_BIN="+bin, "RINGSIDE_FILE="+file,
		"RINGSIDE_OPENED="+opened, "PATH="+binDir+string(os.PathListSeparator)+os.Getenv("PATH"))
	var res struct {
		OK         bool     `json:"ok"`
		Error      string   `json:"error"`
		Steps      []string `json:"steps"`
		Hover      string   `json:"hover"`
		Title      string   `json:"title"`
		Line       string   `json:"line"`
		LensBefore string   `json:"lens_before"`
		LensAfter  string   `json:"lens_after"`
	}
	if err := json.Unmarshal(b, &res); err != nil {
		t.Fatalf("result %s: %v", b, err)
	}
	if !res.OK {
		t.Fatalf("editor test failed after %v: %s\nnvim output:\n%s", res.Steps, res.Error, out)
	}
	if !strings.Contains(res.Hover, "UNSTABLE") || !strings.HasPrefix(res.Title, "Set ki to 11.4") || res.Line != "gain ki = 11.4" {
		t.Errorf("hover %q, fix %q, line %q", res.Hover, res.Title, res.Line)
	}
	// The hover reads as plain text: aligned columns, no Markdown table rows.
	if strings.Contains(res.Hover, "|---") || !strings.Contains(res.Hover, "closed-loop pole") {
		t.Errorf("hover as shown by K:\n%s", res.Hover)
	}
	if !strings.HasPrefix(res.LensBefore, "UNSTABLE") || !strings.HasPrefix(res.LensAfter, "stable") {
		t.Errorf("lenses before %q and after %q the fix", res.LensBefore, res.LensAfter)
	}
	if html, err := os.ReadFile(opened); err != nil || !strings.Contains(string(html), "<svg") {
		t.Errorf(":RingsidePlot opened no page with the plots (%v)", err)
	}
	disk, _ := os.ReadFile(file)
	if !strings.Contains(string(disk), "gain ki = 11.4\n") {
		t.Errorf("the written copy lacks the fix:\n%s", disk)
	}
}

// TestNeovimLiveAnalysis opens every demo file in Neovim with the plugin's
// default settings and checks that its error diagnostics (those of
// `ringside check`) are shown before any save; then it changes one gain of
// the gimbal file without saving: that loop's verdict changes, the other
// loop keeps its errors exactly.
func TestNeovimLiveAnalysis(t *testing.T) {
	nvim := findNeovim(t)
	dir := t.TempDir()
	bin := serverBinary(t, dir)
	ws := filepath.Join(dir, "demo")
	copyDir(t, "../testdata/demo", ws)
	if err := os.WriteFile(filepath.Join(ws, ".git"), nil, 0o644); err != nil {
		t.Fatal(err)
	}
	files, _ := filepath.Glob(filepath.Join(ws, "*.loop"))
	if len(files) < 3 {
		t.Fatalf("demo files: %v", files)
	}
	plugin, _ := filepath.Abs("../editors/nvim")
	init := filepath.Join(dir, "init.lua")
	// The plugin as a user sets it up: no settings, defaults everywhere.
	initText := "vim.opt.runtimepath:prepend(" + luaString(plugin) + ")\nvim.opt.swapfile = false\nvim.cmd('filetype plugin on')\n" +
		"require('ringside').setup({ cmd = { " + luaString(bin) + ", 'serve' } })\n"
	if err := os.WriteFile(init, []byte(initText), 0o644); err != nil {
		t.Fatal(err)
	}
	b, out := runNeovim(t, nvim, init, "testdata/nvim/live.lua", dir, ws, 150*time.Second,
		"RINGSIDE_FILES="+strings.Join(files, ":"), "RINGSIDE_EDIT="+filepath.Join(ws, "gimbal.loop"))
	type diag struct {
		Code    string `json:"code"`
		Line    int    `json:"line"`
		Message string `json:"message"`
	}
	var res struct {
		OK       bool              `json:"ok"`
		Error    string            `json:"error"`
		Steps    []string          `json:"steps"`
		Opened   map[string][]diag `json:"opened"`
		Before   []diag            `json:"before"`
		After    []diag            `json:"after"`
		Modified bool              `json:"modified"`
	}
	if err := json.Unmarshal(b, &res); err != nil {
		t.Fatalf("result %s: %v", b, err)
	}
	if !res.OK {
		t.Fatalf("editor test failed after %v: %s\nnvim output:\n%s", res.Steps, res.Error, out)
	}
	for _, f := range files {
		var got []string
		for _, d := range res.Opened[f] {
			got = append(got, fmt.Sprintf("%d %s", d.Line, d.Code))
		}
		want := checkErrors(t, ws, f)
		sort.Strings(got)
		if strings.Join(got, ", ") != strings.Join(want, ", ") {
			t.Errorf("%s on open, before any save: errors %v, want %v", filepath.Base(f), got, want)
		}
	}
	if !res.Modified {
		t.Error("the edited buffer was saved")
	}
	// The tilt loop (lines 12-15) keeps its errors word for word.
	tilt := func(ds []diag) (out []diag) {
		for _, d := range ds {
			if d.Line >= 12 && d.Line <= 15 {
				out = append(out, d)
			}
		}
		return out
	}
	if before, after := tilt(res.Before), tilt(res.After); len(before) == 0 || !reflect.DeepEqual(before, after) {
		t.Errorf("tilt's errors changed with an edit of krate:\nbefore %v\nafter  %v", before, after)
	}
}

// luaString quotes s for Lua.
func luaString(s string) string { return strconv.Quote(s) }

// checkErrors lists "line code" of the errors `ringside check` reports in
// file itself, sorted.
func checkErrors(t *testing.T, ws, file string) []string {
	var want []string
	r := checkFile(t, ws, filepath.Base(file), false)
	for _, d := range r.Diagnostics {
		if d.Severity == analysis.Error && d.Path == file {
			line, _ := r.File.Lines.LineCol(d.Span.From)
			want = append(want, fmt.Sprintf("%d %s", line, d.Code))
		}
	}
	sort.Strings(want)
	return want
}

// runNeovim runs a Lua script in headless Neovim with the init file, in
// folder cwd, with RINGSIDE_RESULT set, and returns the result file the
// script wrote and Neovim's output.
func runNeovim(t *testing.T, nvim, init, script, dir, cwd string, limit time.Duration, env ...string) ([]byte, string) {
	t.Helper()
	resultPath := filepath.Join(dir, "result.json")
	scriptAbs, _ := filepath.Abs(script)
	cmd := exec.Command(nvim, "--headless", "--clean", "-u", init, "-c", "luafile "+scriptAbs)
	cmd.Dir = cwd
	cmd.Env = append(append(os.Environ(), env...), "RINGSIDE_RESULT="+resultPath, "HOME="+dir, "XDG_STATE_HOME="+dir, "XDG_DATA_HOME="+dir)
	out, _ := runEditor(t, cmd, limit)
	b, err := os.ReadFile(resultPath)
	if err != nil {
		t.Fatalf("no result file (%v); nvim output:\n%s", err, out)
	}
	return b, out
}

// findNeovim returns the nvim binary, or skips the test (fails it when
// RINGSIDE_REQUIRE_NVIM=1); -short skips it too.
func findNeovim(t *testing.T) string {
	return editorOrSkip(t, "nvim", "RINGSIDE_REQUIRE_NVIM")
}
