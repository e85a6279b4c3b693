package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// Usage names the value each flag takes, and a bad value says what is
// expected, with exit status 2.
func TestCheckFlagMessages(t *testing.T) {
	var out, errb bytes.Buffer
	if code := run([]string{"check", "--help"}, nil, &out, &errb); code != 0 {
		t.Fatalf("--help: exit %d", code)
	}
	for _, want := range []string{"--root DIR", "--gain-margin DB", "--phase-margin DEG", "--format FORMAT", "--baseline FILE.json", "--budget DURATION"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("usage lacks %q:\n%s", want, out.String())
		}
	}
	if strings.Contains(out.String(), "-root use") {
		t.Errorf("usage names a value by a word of the description:\n%s", out.String())
	}
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"--gain-margin", "6dB"}, "--gain-margin takes a number of dB, such as 6"},
		{[]string{"--gain-margin", "NaN"}, "--gain-margin takes a number of dB"},
		{[]string{"--phase-margin", "+Inf"}, "--phase-margin takes a number of degrees, such as 30"},
		{[]string{"--phase-margin", "500"}, "--phase-margin must be between 0 and 180"},
		{[]string{"--gain-margin", "-3"}, "--gain-margin must be between 0 and 100"},
		{[]string{"--tolerance", "0"}, "--tolerance must be between"},
		{[]string{"--budget", "soon"}, "--budget takes a positive duration, such as 30s"},
		{[]string{"--format", "xml"}, "--format takes one of text, json, sarif, markdown"},
		{[]string{"--regress-db", "x"}, "--regress-db takes a number of dB, such as 1"},
		{[]string{"--root"}, "--root needs a value: --root DIR"},
		{[]string{"--frob"}, "unknown flag --frob"},
	}
	for _, c := range cases {
		var out, errb bytes.Buffer
		args := append([]string{"check", "testdata/demo"}, c.args...)
		if code := run(args, nil, &out, &errb); code != 2 {
			t.Errorf("%v: exit %d, want 2", c.args, code)
		}
		if !strings.Contains(errb.String(), c.want) {
			t.Errorf("%v: stderr %q, want it to contain %q", c.args, errb.String(), c.want)
		}
	}
}

// The text report ends with a table of every loop and names the failing
// ones.
func TestCheckOverview(t *testing.T) {
	var out, errb bytes.Buffer
	run([]string{"check", "testdata/demo"}, nil, &out, &errb)
	text := out.String()
	for _, want := range []string{
		`(?m)^file\s+loop\s+verdict\s+radius\s+GM\s+PM\s+worst requirement$`,
		`testdata/demo/pump.loop\s+line_pressure\s+UNSTABLE\s+1\.0002252\s`,
		`Failing loops: .*tilt \(testdata/demo/gimbal.loop, unstable\)`,
		`line_pressure \(testdata/demo/pump.loop, unstable\)`,
		`zone_a_temp \(testdata/demo/heater_pair.loop, misses overshoot\)`,
	} {
		if !regexp.MustCompile(want).MatchString(text) {
			t.Errorf("report lacks %q", want)
		}
	}
	if strings.Contains(text, "belt_speed (") {
		t.Errorf("a passing loop is named as failing")
	}
}

// --baseline on the demo against a copy with one gain raised (conveyor's
// kp 0.8 → 3: margins fall), one loop removed and one added.
func TestBaselineOnModifiedDemo(t *testing.T) {
	dir := t.TempDir()
	copyDemo(t, "testdata/demo", dir)
	var base, errb bytes.Buffer
	if code := run([]string{"check", "--root", dir, "--format", "json", dir}, nil, &base, &errb); code != 1 {
		t.Fatalf("baseline run: exit %d: %s", code, errb.String())
	}
	basePath := filepath.Join(t.TempDir(), "base.json")
	os.WriteFile(basePath, base.Bytes(), 0o644)

	// Unchanged: no regression; the exit status is that of the errors.
	var same bytes.Buffer
	run([]string{"check", "--root", dir, "--baseline", basePath, dir}, nil, &same, &errb)
	if !regexp.MustCompile(`Against the baseline: \d+ loop\(s\) compared, 0 changed, no regression\.`).MatchString(same.String()) {
		t.Errorf("unchanged run:\n%s", tail(same.String()))
	}

	conv := filepath.Join(dir, "conveyor.loop")
	src, _ := os.ReadFile(conv)
	src = bytes.Replace(src, []byte("gain kp = 0.8"), []byte("gain kp = 3"), 1)
	src = append(src, []byte("\nloop spare {\n  forward pi_ctrl belt\n  feedback enc\n}\n")...)
	os.WriteFile(conv, src, 0o644)
	kiln := filepath.Join(dir, "kiln.loop")
	ks, _ := os.ReadFile(kiln)
	ks = bytes.Replace(ks, []byte("loop chamber_temp"), []byte("loop chamber_renamed"), 1)
	os.WriteFile(kiln, ks, 0o644)

	for _, format := range []string{"text", "markdown"} {
		var out bytes.Buffer
		code := run([]string{"check", "--root", dir, "--format", format, "--baseline", basePath, dir}, nil, &out, &errb)
		if code != 1 {
			t.Errorf("%s: exit %d, want 1", format, code)
		}
		s := out.String()
		for _, want := range []string{"belt_speed", "GM 35.4 → ", "chamber_temp", "loop removed", "chamber_renamed", "new loop", "REGRESSED: belt_speed"} {
			if !strings.Contains(s, want) {
				t.Errorf("%s: comparison lacks %q:\n%s", format, want, tail(s))
			}
		}
	}
	var md bytes.Buffer
	run([]string{"check", "--root", dir, "--format", "markdown", "--baseline", basePath, dir}, nil, &md, &errb)
	if !strings.Contains(md.String(), "| file | loop | before | now | change | regression |") {
		t.Errorf("markdown has no comparison table:\n%s", md.String())
	}

	// A larger threshold lets the same change pass.
	var lax bytes.Buffer
	run([]string{"check", "--root", dir, "--regress-db", "40", "--regress-deg", "90", "--regress-radius", "1", "--regress-pct", "1000", "--baseline", basePath, filepath.Join(dir, "conveyor.loop")}, nil, &lax, &errb)
	if s := lax.String(); strings.Contains(s, "GM 35.4") || !strings.Contains(s, "stable  now misses phase_margin") || strings.Contains(s, "loop removed") {
		t.Errorf("with wide thresholds, only the newly missed requirement counts, and files not checked are not removed loops:\n%s", tail(s))
	}

	// SARIF: every result has a baselineState; the removed loop's are absent.
	var sarif bytes.Buffer
	run([]string{"check", "--root", dir, "--format", "sarif", "--baseline", basePath, dir}, nil, &sarif, &errb)
	var log struct {
		Runs []struct {
			Results []struct {
				Message       struct{ Text string }
				BaselineState string
			}
		}
	}
	if err := json.Unmarshal(sarif.Bytes(), &log); err != nil {
		t.Fatal(err)
	}
	states := map[string]int{}
	for _, r := range log.Runs[0].Results {
		states[r.BaselineState]++
		if strings.HasPrefix(r.Message.Text, "loop chamber_temp") && r.BaselineState != "absent" {
			t.Errorf("result of the removed loop is %q: %s", r.BaselineState, r.Message.Text)
		}
		if strings.HasPrefix(r.Message.Text, "loop chamber_renamed") && r.BaselineState != "new" {
			t.Errorf("result of the new loop is %q: %s", r.BaselineState, r.Message.Text)
		}
	}
	for _, st := range []string{"new", "unchanged", "updated", "absent"} {
		if states[st] == 0 {
			t.Errorf("no result with baselineState %q: %v", st, states)
		}
	}
	if states[""] > 0 {
		t.Errorf("%d results without baselineState", states[""])
	}

	// A baseline that is not a check document is a usage error.
	var bad bytes.Buffer
	if code := run([]string{"check", "--root", dir, "--baseline", conv, dir}, nil, &bad, &bad); code != 2 || !strings.Contains(bad.String(), "not a check --format json document") {
		t.Errorf("bad baseline: exit %d: %s", code, bad.String())
	}
}

func copyDemo(t *testing.T, from, to string) {
	t.Helper()
	filepath.Walk(from, func(p string, info os.FileInfo, err error) error {
		if err != nil || info.IsDir() || !strings.HasSuffix(p, ".loop") {
			return err
		}
		rel, _ := filepath.Rel(from, p)
		dst := filepath.Join(to, rel)
		os.MkdirAll(filepath.Dir(dst), 0o755)
		b, _ := os.ReadFile(p)
		return os.WriteFile(dst, b, 0o644)
	})
}

func tail(s string) string {
	if i := strings.LastIndex(s, "\nfile "); i >= 0 {
		return s[i:]
	}
	return s
}
