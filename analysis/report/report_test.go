package report

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math/rand"
	"net/url"
	"os"
	"os/exec"
	"path"
	"path/filepath"
	"strings"
	"testing"

	"ringside/analysis"
)

// randomFile writes a random .loop file: random plants (s with a method,
// or z), controllers, gains, requirements; stable and unstable loops, and
// now and then a mistake.
func randomFile(rng *rand.Rand) string {
	var b strings.Builder
	fmt.Fprintf(&b, "sample %d ms\n", 1+rng.Intn(20))
	n := 1 + rng.Intn(4)
	methods := []string{"zoh", "foh", "tustin", "matched"}
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "gain k%d = %.3g\n", i, 0.05+5*rng.Float64())
		switch rng.Intn(3) {
		case 0:
			fmt.Fprintf(&b, "block p%d = %.3g / (s + %.3g) via %s\n", i, 1+10*rng.Float64(), 0.5+20*rng.Float64(), methods[rng.Intn(4)])
		case 1:
			fmt.Fprintf(&b, "block p%d = %.3g / ((z - %.3g)(z - %.3g))\n", i, 0.01+rng.Float64(), 0.2+0.9*rng.Float64(), -0.5+rng.Float64())
		default:
			fmt.Fprintf(&b, "block p%d = %.3g / (s^2 + %.3gs + %.3g) via zoh\n", i, 1+50*rng.Float64(), rng.Float64()*8, 1+50*rng.Float64())
		}
		fmt.Fprintf(&b, "loop l%d {\n  forward k%d p%d\n", i, i, i)
		if rng.Intn(2) == 0 {
			b.WriteString("  feedback z^-1\n")
		}
		if rng.Intn(2) == 0 {
			fmt.Fprintf(&b, "  require gain_margin >= %d dB\n  require settling <= %d ms\n", 3+rng.Intn(6), 50+rng.Intn(500))
		}
		if rng.Intn(8) == 0 {
			b.WriteString("  forward nowhere\n")
		}
		b.WriteString("}\n")
	}
	return strings.ReplaceAll(b.String(), "feedback z^-1", "feedback d")
}

func buildRandom(t *testing.T, seed int64, count int) ([]*analysis.Result, string) {
	dir := t.TempDir()
	rng := rand.New(rand.NewSource(seed))
	var results []*analysis.Result
	for i := 0; i < count; i++ {
		src := "block d = z^-1\n" + randomFile(rng)
		path := filepath.Join(dir, fmt.Sprintf("f%03d.loop", i))
		results = append(results, analysis.Check(context.Background(), path, []byte(src), analysis.Env{Roots: []string{dir}}))
	}
	return results, dir
}

// The JSON of files no other test has seen passes the shared contract
// checker (../shared/tools/check-contract, beside the repository).
func TestJSONContractOnRandomFiles(t *testing.T) {
	checker, _ := filepath.Abs("../../../shared/tools/check-contract")
	if _, err := os.Stat(checker); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("contract checker missing: %v", err)
		}
		t.Skip("../shared/tools/check-contract not beside the repository")
	}
	results, dir := buildRandom(t, 7, 60)
	doc := Build(results, func(p string) string { r, _ := filepath.Rel(dir, p); return r })
	data, err := json.Marshal(doc)
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(checker)
	cmd.Stdin = bytes.NewReader(data)
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("contract checker: %v\n%s", err, out)
	}
	loops, unstable := 0, 0
	for _, f := range doc.Files {
		for _, l := range f.Loops {
			loops++
			stable := l.Stable != nil && *l.Stable
			if !stable {
				unstable++
			}
			if stable && l.Analysed && l.OvershootPct == nil {
				t.Errorf("%s/%s: stable but no step figures", f.Path, l.Name)
			}
			if !stable && l.SettlingS != nil {
				t.Errorf("%s/%s: unstable with a settling time", f.Path, l.Name)
			}
		}
	}
	if unstable == 0 || unstable == loops {
		t.Errorf("%d of %d loops unstable: the random set should mix both", unstable, loops)
	}
}

// SARIF carries every diagnostic with its rule, level and region.
func TestSARIFShape(t *testing.T) {
	results, _ := buildRandom(t, 3, 10)
	data, _ := json.Marshal(SARIF(results, filepath.Base, "test"))
	var log struct {
		Version string `json:"version"`
		Runs    []struct {
			ColumnKind string `json:"columnKind"`
			Tool       struct {
				Driver struct {
					Name  string `json:"name"`
					Rules []struct {
						ID string `json:"id"`
					} `json:"rules"`
				} `json:"driver"`
			} `json:"tool"`
			Results []struct {
				RuleID    string `json:"ruleId"`
				Level     string `json:"level"`
				Locations []struct {
					PhysicalLocation struct {
						ArtifactLocation struct{ URI string } `json:"artifactLocation"`
						Region           struct{ StartLine, StartColumn int }
					} `json:"physicalLocation"`
				} `json:"locations"`
			} `json:"results"`
		} `json:"runs"`
	}
	if err := json.Unmarshal(data, &log); err != nil {
		t.Fatal(err)
	}
	if log.Version != "2.1.0" || len(log.Runs) != 1 || log.Runs[0].ColumnKind != "unicodeCodePoints" {
		t.Fatalf("header %+v", log)
	}
	want := 0
	for _, r := range results {
		want += len(r.Diagnostics)
	}
	run := log.Runs[0]
	if len(run.Results) != want {
		t.Fatalf("%d results, want %d", len(run.Results), want)
	}
	rules := map[string]bool{}
	for _, r := range run.Tool.Driver.Rules {
		rules[r.ID] = true
	}
	for _, r := range run.Results {
		if !rules[r.RuleID] || len(r.Locations) != 1 || r.Locations[0].PhysicalLocation.Region.StartLine < 1 {
			t.Errorf("result %+v", r)
		}
		if r.Level != "error" && r.Level != "warning" && r.Level != "note" {
			t.Errorf("level %q", r.Level)
		}
	}
}

// Text lines read file:line:col: severity: message [code], with columns
// in code points (a µ before the name does not shift it by bytes).
func TestTextColumns(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "t.loop")
	src := "sample 1 ms # 5 µs jitter °\nblock p = 2 / (z - 0.5)  # µµ\nloop l { # µ\n  forward p\n}\n"
	r := analysis.Check(context.Background(), path, []byte(src), analysis.Env{Roots: []string{dir}})
	var b bytes.Buffer
	Text(&b, []*analysis.Result{r}, filepath.Base)
	if !strings.Contains(b.String(), "t.loop:3:6: error: loop l is UNSTABLE") {
		t.Errorf("text report:\n%s", b.String())
	}
}

// SARIF artifact URIs are URI references (RFC 3986) that a URI parser reads
// back to the path: spaces, '#', '%', '?' and non-ASCII percent-encoded.
func TestSARIFURIsParse(t *testing.T) {
	for _, p := range []string{"dir with space/my loop #1%.loop", "a?b/c[d].loop", "motör/x.loop", "a:b.loop", "/abs/dir #2/f.loop", "plain/f.loop"} {
		u := artifactURI(p)
		parsed, err := url.Parse(u)
		if err != nil {
			t.Errorf("%q -> %q: %v", p, u, err)
			continue
		}
		if parsed.Fragment != "" || parsed.RawQuery != "" || path.Clean(parsed.Path) != p {
			t.Errorf("%q -> %q reads back as path %q, query %q, fragment %q", p, u, parsed.Path, parsed.RawQuery, parsed.Fragment)
		}
		if strings.HasPrefix(p, "/") != (parsed.Scheme == "file") {
			t.Errorf("%q -> %q: scheme %q", p, u, parsed.Scheme)
		}
	}
}
