package report

import "ringside/analysis"

// DiskMargin is the symmetric disk margin (loop-format.md, "Disk margin").
type DiskMargin struct {
	Alpha      float64  `json:"alpha"`
	GainLowDB  *float64 `json:"gain_low_db"`
	GainHighDB *float64 `json:"gain_high_db"`
	PhaseDeg   float64  `json:"phase_deg"`
	PeakHz     float64  `json:"peak_hz"` // where |S − 1/2| peaks (addition)
}

// Robust is a loop's verdict over the box of its varying gains
// (loop-format.md, "Parameter ranges"); Exact, Why and Ranges are additions.
type Robust struct {
	Stable *bool                 `json:"stable"`
	Method string                `json:"method"`
	Exact  bool                  `json:"exact"`
	Why    string                `json:"why,omitempty"`
	Ranges map[string][2]float64 `json:"ranges"`
	Worst  *RobustWorst          `json:"worst"`
	// IllPosedAt is a point where a closed-loop pole goes to infinity.
	IllPosedAt map[string]float64 `json:"ill_posed_at,omitempty"`
	// NominalOnly: no point of the range could be examined; worst is the
	// nominal point.
	NominalOnly bool `json:"nominal_only,omitempty"`
}

// RobustWorst is the point of the box with the largest closed-loop pole
// radius, and the smallest margins over the points examined.
type RobustWorst struct {
	Values         map[string]float64 `json:"values"`
	MaxRadius      *float64           `json:"max_radius"`
	GainMarginDB   *float64           `json:"gain_margin_db"`
	PhaseMarginDeg *float64           `json:"phase_margin_deg"`
}

func diskMargin(l *analysis.Loop) *DiskMargin {
	d := l.Disk
	if d == nil || !l.Stable {
		return nil
	}
	return &DiskMargin{Alpha: d.Alpha, GainLowDB: finitePtr(d.GainLowDB), GainHighDB: finitePtr(d.GainHighDB), PhaseDeg: d.PhaseDeg, PeakHz: d.PeakHz}
}

func robust(l *analysis.Loop) *Robust {
	r := l.Robust
	if r == nil {
		return nil
	}
	out := &Robust{Stable: r.Stable, Method: r.Method, Exact: r.Exact, Why: r.Why, Ranges: map[string][2]float64{}}
	for i, n := range r.Names {
		out.Ranges[n] = [2]float64{r.Ranges[i].Lo, r.Ranges[i].Hi}
	}
	if r.IllPosed != nil {
		out.IllPosedAt = map[string]float64{}
		for i, n := range r.Names {
			out.IllPosedAt[n] = r.IllPosed[i]
		}
	}
	out.NominalOnly = r.NominalOnly
	if r.Worst != nil {
		w := &RobustWorst{Values: map[string]float64{}, MaxRadius: finite(r.WorstRadius),
			GainMarginDB: finitePtr(r.GainMarginDB), PhaseMarginDeg: finitePtr(r.PhaseMarginDeg)}
		for i, n := range r.Names {
			w.Values[n] = r.Worst[i]
		}
		out.Worst = w
	}
	return out
}
