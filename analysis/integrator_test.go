package analysis

import (
	"context"
	"os"
	"strings"
	"testing"
)

// An integrator inside a loop shown stable is one info line naming the
// loop, in the full and in the quick analysis; the warnings for a block
// outside any loop and in an unstable loop are covered by
// testdata/diag/integrators.loop.
func TestIntegratorInStableLoopIsInfo(t *testing.T) {
	src, err := os.ReadFile("testdata/diag/integrators.loop")
	if err != nil {
		t.Fatal(err)
	}
	for _, quick := range []bool{false, true} {
		env := Env{Options: DefaultOptions()}
		env.Options.Quick = quick
		r := Check(context.Background(), "testdata/diag/integrators.loop", src, env)
		got := map[string]Severity{}
		for _, d := range r.Diagnostics {
			if d.Code == CodeBlockOnCircle {
				name := strings.Fields(d.Message)[1]
				got[name] = d.Severity
				if d.Severity == Info && !strings.Contains(d.Message, "loop held") && !strings.Contains(d.Message, "loop runaway") {
					t.Errorf("quick=%v: info does not name the loop: %s", quick, d.Message)
				}
			}
		}
		want := map[string]Severity{"idle": Warning, "pi": Info, "wrapped": Info, "hot": Warning}
		if quick {
			want["hot"] = Info // no verdict yet: the loop's own check reports it
		}
		for name, sev := range want {
			if got[name] != sev {
				t.Errorf("quick=%v: block %s: severity %v, want %v", quick, name, got[name], sev)
			}
		}
	}
}
