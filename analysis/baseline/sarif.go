package baseline

import (
	"sort"
	"strings"

	"ringside/analysis/report"
)

// A diagnostic of this run matches one of the baseline by file, code and
// subject (the message's first two words: "loop tilt", "block pi_ctrl",
// "gain kpp"), not by line, since edits above it move it; the same
// message is then "unchanged", another one "updated".
type diagKey struct{ uri, code, subject string }

func subject(msg string) string {
	f := strings.Fields(msg)
	if len(f) > 2 {
		f = f[:2]
	}
	return strings.TrimSuffix(strings.Join(f, " "), ":")
}

// States gives SARIF results their baselineState as they are written (a
// report.Baseline): each result of this run is paired with an unpaired
// baseline result of its key, an identical message first; the baseline
// results left unpaired at the end are absent.
type States struct {
	old  map[diagKey][]report.AbsentResult
	used map[diagKey][]bool
}

// NewStates prepares the pairing against the baseline document.
func NewStates(old *Doc) *States {
	s := &States{old: map[diagKey][]report.AbsentResult{}, used: map[diagKey][]bool{}}
	for _, f := range old.Files {
		for _, d := range f.Diagnostics {
			k := diagKey{f.Path, d.Code, subject(d.Message)}
			s.old[k] = append(s.old[k], report.AbsentResult{URI: f.Path, Diagnostic: d})
			s.used[k] = append(s.used[k], false)
		}
	}
	return s
}

// State is "unchanged", "updated" or "new" for the next result of this run.
func (s *States) State(uri, code, message string) string {
	k := diagKey{uri, code, subject(message)}
	olds, used := s.old[k], s.used[k]
	free := -1
	for i, o := range olds {
		if used[i] {
			continue
		}
		if o.Message == message {
			used[i] = true
			return "unchanged"
		}
		if free < 0 {
			free = i
		}
	}
	if free < 0 {
		return "new"
	}
	used[free] = true
	return "updated"
}

// Absent lists the baseline's results that no result of this run paired.
func (s *States) Absent() []report.AbsentResult {
	var out []report.AbsentResult
	for k, olds := range s.old {
		for i, o := range olds {
			if !s.used[k][i] {
				out = append(out, o)
			}
		}
	}
	sort.Slice(out, func(i, j int) bool {
		x, y := out[i], out[j]
		if x.URI != y.URI {
			return x.URI < y.URI
		}
		if x.Line != y.Line {
			return x.Line < y.Line
		}
		return x.Code < y.Code
	})
	return out
}
