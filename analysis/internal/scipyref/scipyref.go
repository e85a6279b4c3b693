// Package scipyref finds the Python interpreter that runs the project's
// numpy/scipy reference scripts (testdata/crosscheck), for the cross-check
// tests of the numeric packages.
package scipyref

import (
	"os"
	"os/exec"
	"testing"
)

// Python returns an interpreter with numpy and scipy: $RINGSIDE_PYTHON,
// else python3 on PATH, else Debian's /usr/bin/python3 (a python3 on PATH
// may be another installation without scipy). It skips the test when none
// has them, unless RINGSIDE_REQUIRE_SCIPY=1, which CI sets: then it fails.
func Python(t testing.TB) string {
	t.Helper()
	cands := []string{"python3", "/usr/bin/python3"}
	if p := os.Getenv("RINGSIDE_PYTHON"); p != "" {
		cands = []string{p}
	}
	for _, c := range cands {
		if exec.Command(c, "-c", "import numpy, scipy.signal, scipy.optimize").Run() == nil {
			return c
		}
	}
	if os.Getenv("RINGSIDE_REQUIRE_SCIPY") == "1" {
		t.Fatalf("no python3 with numpy and scipy among %v (RINGSIDE_REQUIRE_SCIPY=1)", cands)
	}
	t.Skipf("no python3 with numpy and scipy among %v; set RINGSIDE_PYTHON", cands)
	return ""
}
