package baseline

import (
	"strings"
	"testing"
)

func doc(t *testing.T, js string) *Doc {
	t.Helper()
	d, err := Read(strings.NewReader(js))
	if err != nil {
		t.Fatal(err)
	}
	return d
}

const before = `{"files":[{"path":"a.loop","diagnostics":[],"loops":[
 {"name":"x","stable":true,"analysed":true,"max_radius":0.9,"gain_margin_db":10,"phase_margin_deg":50,"overshoot_pct":10,"settling_s":1},
 {"name":"y","stable":true,"analysed":true,"max_radius":0.9,"gain_margin_db":10,"phase_margin_deg":50}]}]}`

func TestThresholdsDecide(t *testing.T) {
	cases := []struct {
		name, after string
		regression  bool
		change      string
	}{
		{"within thresholds", `{"name":"x","stable":true,"analysed":true,"max_radius":0.904,"gain_margin_db":9.1,"phase_margin_deg":45.5,"overshoot_pct":19,"settling_s":1.09}`, false, ""},
		{"gain margin", `{"name":"x","stable":true,"analysed":true,"max_radius":0.9,"gain_margin_db":8.9,"phase_margin_deg":50,"overshoot_pct":10,"settling_s":1}`, true, "GM 10 → 8.9 dB"},
		{"radius", `{"name":"x","stable":true,"analysed":true,"max_radius":0.906,"gain_margin_db":10,"phase_margin_deg":50,"overshoot_pct":10,"settling_s":1}`, true, "radius 0.9 → 0.906"},
		{"settling", `{"name":"x","stable":true,"analysed":true,"max_radius":0.9,"gain_margin_db":10,"phase_margin_deg":50,"overshoot_pct":10,"settling_s":1.2}`, true, "settling 1 → 1.2 s"},
		{"better is no regression", `{"name":"x","stable":true,"analysed":true,"max_radius":0.5,"gain_margin_db":20,"phase_margin_deg":70,"overshoot_pct":1,"settling_s":0.3}`, false, ""},
		{"verdict", `{"name":"x","stable":false,"analysed":true,"max_radius":1.1}`, true, "verdict stable → UNSTABLE"},
		{"undecided", `{"name":"x","stable":null,"analysed":true}`, true, "verdict stable → undecided"},
		{"crossing appears", `{"name":"x","stable":true,"analysed":true,"max_radius":0.9,"gain_margin_db":10,"phase_margin_deg":50,"overshoot_pct":10,"settling_s":null}`, true, "settling 1 → ∞ s"},
	}
	for _, c := range cases {
		after := `{"files":[{"path":"a.loop","diagnostics":[],"loops":[` + c.after + `,{"name":"y","stable":true,"analysed":true,"max_radius":0.9,"gain_margin_db":10,"phase_margin_deg":50}]}]}`
		cmp := Compare(doc(t, before), doc(t, after), DefaultThresholds())
		if got := cmp.Regressions > 0; got != c.regression {
			t.Errorf("%s: regression %v, want %v (%+v)", c.name, got, c.regression, cmp.Loops)
		}
		if got := strings.Join(cmp.Loops[0].Changes, "; "); c.change != "" && !strings.Contains(got, c.change) || c.change == "" && c.regression == false && strings.Contains(got, "→") && c.name != "better is no regression" {
			t.Errorf("%s: changes %q, want %q", c.name, got, c.change)
		}
	}
}

func TestUnstableToStableIsNoRegression(t *testing.T) {
	old := `{"files":[{"path":"a.loop","diagnostics":[],"loops":[{"name":"x","stable":false,"analysed":true,"max_radius":1.1}]}]}`
	cur := `{"files":[{"path":"a.loop","diagnostics":[],"loops":[{"name":"x","stable":true,"analysed":true,"max_radius":0.9}]}]}`
	cmp := Compare(doc(t, old), doc(t, cur), DefaultThresholds())
	if cmp.Regressions != 0 || cmp.Loops[0].Changes[0] != "verdict UNSTABLE → stable" {
		t.Errorf("%+v", cmp.Loops)
	}
}
