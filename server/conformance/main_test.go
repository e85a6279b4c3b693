// Package conformance holds black-box tests of `ringside serve`: they start
// the real binary and speak raw Content-Length framed JSON-RPC to it over its
// stdin and stdout, importing nothing of the server package.
package conformance

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// binary is the ringside executable under test; moduleRoot is the folder of
// go.mod (the demo files are read from there).
var binary, moduleRoot string

// TestMain builds the binary from the module root, unless RINGSIDE_BIN names
// one to use instead.
func TestMain(m *testing.M) {
	os.Exit(run(m))
}

func run(m *testing.M) int {
	out, err := exec.Command("go", "env", "GOMOD").Output()
	gomod := strings.TrimSpace(string(out))
	if err != nil || gomod == "" || gomod == os.DevNull {
		fmt.Fprintln(os.Stderr, "conformance: cannot find the module root (go env GOMOD):", err)
		return 1
	}
	moduleRoot = filepath.Dir(gomod)
	if b := os.Getenv("RINGSIDE_BIN"); b != "" {
		binary = b
		return m.Run()
	}
	dir, err := os.MkdirTemp("", "ringside-conformance-")
	if err != nil {
		fmt.Fprintln(os.Stderr, "conformance:", err)
		return 1
	}
	defer os.RemoveAll(dir)
	binary = filepath.Join(dir, "ringside")
	build := exec.Command("go", "build", "-o", binary, "ringside")
	build.Dir = moduleRoot
	if out, err := build.CombinedOutput(); err != nil {
		fmt.Fprintf(os.Stderr, "conformance: go build failed (set RINGSIDE_BIN to test a binary built elsewhere): %v\n%s", err, out)
		return 1
	}
	return m.Run()
}
