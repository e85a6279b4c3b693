package server

import (
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
	emacs := editorOrSkip(t, "emacs", "RINGSIDE_REQUIRE_EMACS")
	dir := t.TempDir()
	bin := serverBinary(t, dir)
	lisp, _ := filepath.Abs("../editors/emacs")
	cmd := exec.Command(emacs, "--batch", "-Q", "-L", lisp, "-l", filepath.Join(lisp, "test", "ringside-test.el"), "-f", "ert-run-tests-batch-and-exit")
	cmd.Env = append(os.Environ(), "RINGSIDE_BIN="+bin, "RINGSIDE_REAL=1", "HOME="+dir)
	out, err := runEditor(t, cmd, 120*time.Second)
	if err != nil {
		t.Fatalf("ERT failed (%v):\n%s", err, out)
	}
	for _, name := range []string{"ringside-real-server", "ringside-readme-snippet-from-clean-emacs"} {
		if !strings.Contains(out, "passed") || !strings.Contains(out, name) || strings.Contains(out, "SKIPPED  "+name) {
			t.Errorf("%s did not run and pass:\n%s", name, out)
		}
	}
}
