// Package anglegrid builds the grids of angles over [0, π] that the
// frequency-domain searches walk: uniform points merged with geometric
// clusters around features near the unit circle (a root at distance d from
// the circle changes the response over an angular width of about d).
// The clusters come out sorted by construction and are merged, not sorted:
// the grid is built once per loop, for thousands of loops.
package anglegrid

import "math"

// Ratio is the growth of a cluster's offsets from its centre.
const Ratio = 1.5

// MinGap merges points closer than this (rad): far below any feature the
// searches resolve, above the spacing of float64 angles near π.
const MinGap = 1e-14

// Cluster asks for points at Center and Center ± s for s = Start,
// Ratio·Start, … while s < the reach given to Build.
type Cluster struct {
	Center, Start float64
}

// Scratch holds the working arrays of Build, reused from one grid to the
// next (a check builds a grid per loop, thousands of them); its zero
// value is ready to use.
type Scratch struct {
	clusters    []Cluster
	runs, buf   []float64
	offs        []float64
	bounds, nxt []int
}

// Build appends to dst[:0] the sorted distinct angles in [0, π]: count + 1
// uniform points π·i/count, the points of every cluster (offsets below
// reach; the last uniform point is π itself; of clusters with the same
// centre only the finest counts), and the points of extra (sorted
// ascending); points outside [0, π] are dropped and points within MinGap
// of the previous one merged.
// The result is dst's array (or a new one when dst is too small), never
// the scratch's.
func (sc *Scratch) Build(dst []float64, count int, clusters []Cluster, reach float64, extra []float64) []float64 {
	cs := sc.finest(clusters)
	runs := append(sc.runs[:0], extra...)
	bounds := append(sc.bounds[:0], 0, len(runs))
	for _, c := range cs {
		offs := sc.offs[:0]
		for s := c.Start; s < reach; s *= Ratio {
			offs = append(offs, s)
		}
		sc.offs = offs
		for i := len(offs) - 1; i >= 0; i-- {
			runs = append(runs, c.Center-offs[i])
		}
		runs = append(runs, c.Center)
		for _, s := range offs {
			runs = append(runs, c.Center+s)
		}
		bounds = append(bounds, len(runs))
	}
	sc.runs, sc.bounds = runs, bounds
	return mergeUniform(dst[:0], count, sc.mergeRuns())
}

// finest keeps, of clusters with the same centre, the one starting
// closest to it: its points are those of the others' spacing (offsets grow
// by the same Ratio) and finer, so theirs would only double the density.
// Roots on the real axis all centre at 0 or π (an integrator, a PI zero and
// the slow closed-loop poles of a loop share θ = 0).
func (sc *Scratch) finest(clusters []Cluster) []Cluster {
	out := sc.clusters[:0]
next:
	for _, c := range clusters {
		for i, o := range out {
			if o.Center == c.Center {
				out[i].Start = math.Min(o.Start, c.Start)
				continue next
			}
		}
		out = append(out, c)
	}
	sc.clusters = out
	return out
}

// mergeRuns merges the sorted runs sc.runs[bounds[i]:bounds[i+1]] pairwise
// until one is left, and returns it (one of the scratch's arrays).
func (sc *Scratch) mergeRuns() []float64 {
	runs, bounds := sc.runs, sc.bounds
	if cap(sc.buf) < len(runs) {
		sc.buf = make([]float64, 0, cap(runs))
	}
	buf := sc.buf[:0]
	for len(bounds) > 2 {
		next := sc.nxt[:0]
		next = append(next, 0)
		out := buf[:0]
		for i := 0; i+1 < len(bounds); i += 2 {
			a := runs[bounds[i]:bounds[i+1]]
			var b []float64
			if i+2 < len(bounds) {
				b = runs[bounds[i+1]:bounds[i+2]]
			}
			out = merge(out, a, b)
			next = append(next, len(out))
		}
		sc.nxt = bounds[:0]
		runs, buf, bounds = out, runs, next
	}
	sc.runs, sc.buf, sc.bounds = runs, buf, bounds
	return runs
}

// merge appends the merge of sorted a and b to out.
func merge(out, a, b []float64) []float64 {
	i, j := 0, 0
	for i < len(a) && j < len(b) {
		if a[i] <= b[j] {
			out = append(out, a[i])
			i++
		} else {
			out = append(out, b[j])
			j++
		}
	}
	out = append(out, a[i:]...)
	return append(out, b[j:]...)
}

// mergeUniform appends the uniform points merged with sorted, dropping
// points outside [0, π] and points within MinGap of the previous one.
func mergeUniform(out []float64, count int, sorted []float64) []float64 {
	if need := len(out) + count + 1 + len(sorted); cap(out) < need {
		out = append(make([]float64, 0, need), out...)
	}
	last := math.Inf(-1)
	j := 0
	for i := 0; i <= count+1; i++ {
		u := math.Inf(1) // after the last uniform point: the rest of sorted
		switch {
		case i < count:
			u = math.Pi * float64(i) / float64(count)
		case i == count:
			u = math.Pi // π·count/count may round above π
		}
		for ; j < len(sorted) && sorted[j] < u; j++ {
			if th := sorted[j]; th >= 0 && th <= math.Pi && th-last >= MinGap {
				out, last = append(out, th), th
			}
		}
		if i <= count && u-last >= MinGap {
			out, last = append(out, u), u
		}
	}
	return out
}
