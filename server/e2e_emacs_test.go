package server

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestEmacsEndToEnd runs the Emacs set-up's ERT suite against the real
// server: the README snippet from a clean `emacs -q`, the keys of
// loop-mode, and through eglot the hover (plain-text columns), each
// quick-fix once, and ringside-plot writing and opening the page.
func TestEmacsEndToEnd(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command and starts an editor")
	}
	emacs, err := exec.LookPath("emacs")
	if err != nil {
		if os.Getenv("RINGSIDE_REQUIRE_EMACS") == "1" {
			t.Fatal("emacs not found and RINGSIDE_REQUIRE_EMACS=1")
		}
		t.Skip("emacs not installed")
	}
	dir := t.TempDir()
	bin := serverBinary(t, dir)
	lisp, _ := filepath.Abs("../editors/emacs")
	cmd := exec.Command(emacs, "--batch", "-Q", "-L", lisp, "-l", filepath.Join(lisp, "test", "ringside-test.el"), "-f", "ert-run-tests-batch-and-exit")
	cmd.Env = append(os.Environ(), "RINGSIDE_BIN="+bin, "RINGSIDE_REAL=1", "HOME="+dir)
	var out bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &out
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	select {
	case err = <-done:
	case <-time.After(120 * time.Second):
		cmd.Process.Kill()
		t.Fatalf("emacs did not finish; output:\n%s", out.String())
	}
	if err != nil {
		t.Fatalf("ERT failed (%v):\n%s", err, out.String())
	}
	for _, name := range []string{"ringside-real-server", "ringside-readme-snippet-from-clean-emacs"} {
		if !strings.Contains(out.String(), "passed") || !strings.Contains(out.String(), name) || strings.Contains(out.String(), "SKIPPED  "+name) {
			t.Errorf("%s did not run and pass:\n%s", name, out.String())
		}
	}
}
