// Package scipyref finds the Python interpreter that runs the project's
// numpy/scipy reference scripts (testdata/crosscheck), for the cross-check
// tests of the numeric packages.
package scipyref

import (
	"bytes"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
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

// RunJSON runs a reference script with interpreter py (arguments args),
// hands it in as JSON on standard input and decodes its standard output
// into out; any failure ends the test with the script's stderr.
func RunJSON(t testing.TB, py string, args []string, in, out any) {
	t.Helper()
	data, err := json.Marshal(in)
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(py, args...)
	cmd.Stdin = bytes.NewReader(data)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	b, err := cmd.Output()
	if err != nil {
		t.Fatalf("%s %v: %v\n%s", py, args[0], err, stderr.String())
	}
	if err := json.Unmarshal(b, out); err != nil {
		t.Fatalf("%s %v: output: %v", py, args[0], err)
	}
}

// RunJSONFiles runs script with interpreter py as `py script IN OUT`: in is
// written as JSON to the file IN, and the JSON the script writes to OUT is
// decoded into out. On failure onFail (when not nil) sees the script's
// combined output first, so that a test can skip for a missing module;
// then the test ends with that output.
func RunJSONFiles(t testing.TB, py, script string, in, out any, onFail func(output []byte)) {
	t.Helper()
	dir := t.TempDir()
	inPath, outPath := filepath.Join(dir, "in.json"), filepath.Join(dir, "out.json")
	data, err := json.Marshal(in)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(inPath, data, 0o644); err != nil {
		t.Fatal(err)
	}
	if b, err := exec.Command(py, script, inPath, outPath).CombinedOutput(); err != nil {
		if onFail != nil {
			onFail(b)
		}
		t.Fatalf("%s %s: %v\n%s", py, script, err, b)
	}
	b, err := os.ReadFile(outPath)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, out); err != nil {
		t.Fatalf("%s %s: output: %v", py, script, err)
	}
}
