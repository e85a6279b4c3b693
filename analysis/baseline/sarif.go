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

// States returns the SARIF baseline of this comparison: the states of this
// run's results and the baseline's results that are gone.
func (c *Comparison) States() report.Baseline {
	s := &states{old: map[diagKey][]report.AbsentResult{}}
	for _, f := range c.old.Files {
		for _, d := range f.Diagnostics {
			k := diagKey{f.Path, d.Code, subject(d.Message)}
			s.old[k] = append(s.old[k], report.AbsentResult{URI: f.Path, Diagnostic: d})
		}
	}
	// Pair each current result with an earlier one of its key (an
	// identical message first), so that what is left over is absent.
	s.state = map[string]string{}
	used := map[diagKey]int{}
	for _, f := range c.cur.Files {
		for _, d := range f.Diagnostics {
			k := diagKey{f.Path, d.Code, subject(d.Message)}
			st := "new"
			if olds := s.old[k]; used[k] < len(olds) {
				st = "updated"
				for _, o := range olds {
					if o.Message == d.Message {
						st = "unchanged"
					}
				}
				used[k]++
			}
			s.state[f.Path+"\x00"+d.Code+"\x00"+d.Message] = st
		}
	}
	for k, olds := range s.old {
		s.absent = append(s.absent, olds[min(used[k], len(olds)):]...)
	}
	sortAbsent(s.absent)
	return s
}

type states struct {
	old    map[diagKey][]report.AbsentResult
	state  map[string]string
	absent []report.AbsentResult
}

func (s *states) State(uri, code, message string) string {
	if st, ok := s.state[uri+"\x00"+code+"\x00"+message]; ok {
		return st
	}
	return "new"
}

func (s *states) Absent() []report.AbsentResult { return s.absent }

func sortAbsent(a []report.AbsentResult) {
	sort.Slice(a, func(i, j int) bool {
		x, y := a[i], a[j]
		if x.URI != y.URI {
			return x.URI < y.URI
		}
		if x.Line != y.Line {
			return x.Line < y.Line
		}
		return x.Code < y.Code
	})
}
