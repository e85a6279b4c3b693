package server

import (
	"bytes"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"
)

// editorOrSkip finds an editor on PATH, or skips the test (fails it when
// the environment variable require is 1, as in CI); -short skips it too.
func editorOrSkip(t *testing.T, name, require string) string {
	if testing.Short() {
		t.Skip("builds the command and starts an editor")
	}
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
