package server

import (
	"bytes"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
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

// editorOrSkip finds an editor on PATH, or skips the test (fails it when
// the environment variable require is 1, as in CI).
func editorOrSkip(t *testing.T, name, require string) string {
	path, err := exec.LookPath(name)
	if err != nil {
		if os.Getenv(require) == "1" {
			t.Fatalf("%s not found and %s=1", name, require)
		}
		t.Skipf("%s not installed", name)
	}
	return path
}

// runEditor runs an editor to its end, or kills it after limit; it returns
// the combined output and the exit error.
func runEditor(t *testing.T, cmd *exec.Cmd, limit time.Duration) (string, error) {
	var out bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &out
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	select {
	case err := <-done:
		return out.String(), err
	case <-time.After(limit):
		cmd.Process.Kill()
		<-done
		t.Fatalf("%s did not finish within %v; output:\n%s", filepath.Base(cmd.Path), limit, out.String())
	}
	return "", nil
}

func TestNeovimEndToEnd(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command and starts an editor")
	}
	nvim := editorOrSkip(t, "nvim", "RINGSIDE_REQUIRE_NVIM")
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
	resultPath := filepath.Join(dir, "result.json")
	script, _ := filepath.Abs("testdata/nvim/e2e.lua")
	initAbs, _ := filepath.Abs(init)
	cmd := exec.Command(nvim, "--headless", "--clean", "-u", initAbs, "-c", "luafile "+script)
	cmd.Dir = ws
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
	cmd.Env = append(os.Environ(), "RINGSIDE_BIN="+bin, "RINGSIDE_FILE="+file, "RINGSIDE_RESULT="+resultPath, "RINGSIDE_OPENED="+opened,
		"PATH="+binDir+string(os.PathListSeparator)+os.Getenv("PATH"), "HOME="+dir, "XDG_STATE_HOME="+dir, "XDG_DATA_HOME="+dir)
	out, _ := runEditor(t, cmd, 90*time.Second)
	b, err := os.ReadFile(resultPath)
	if err != nil {
		t.Fatalf("no result file (%v); nvim output:\n%s", err, out)
	}
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
