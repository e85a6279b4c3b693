package anglegrid

import (
	"math"
	"math/rand"
	"sort"
	"testing"
)

// naive is the grid by definition: every point listed, sorted, filtered.
func naive(count int, clusters []Cluster, reach float64, extra []float64) []float64 {
	var all []float64
	for i := 0; i < count; i++ {
		all = append(all, math.Pi*float64(i)/float64(count))
	}
	all = append(all, math.Pi)
	all = append(all, extra...)
	for _, c := range finestByDefinition(clusters) {
		all = append(all, c.Center)
		for s := c.Start; s < reach; s *= Ratio {
			all = append(all, c.Center-s, c.Center+s)
		}
	}
	sort.Float64s(all)
	var out []float64
	for _, v := range all {
		if v < 0 || v > math.Pi || len(out) > 0 && v-out[len(out)-1] < MinGap {
			continue
		}
		out = append(out, v)
	}
	return out
}

// finestByDefinition: for each centre, the smallest start among the
// clusters there.
func finestByDefinition(cs []Cluster) []Cluster {
	start := map[float64]float64{}
	var order []float64
	for _, c := range cs {
		if s, ok := start[c.Center]; !ok || c.Start < s {
			if !ok {
				order = append(order, c.Center)
			}
			start[c.Center] = c.Start
		}
	}
	var out []Cluster
	for _, c := range order {
		out = append(out, Cluster{c, start[c]})
	}
	return out
}

func TestBuildMatchesSortedDefinition(t *testing.T) {
	rng := rand.New(rand.NewSource(4))
	var sc Scratch
	var dst []float64
	for trial := 0; trial < 300; trial++ {
		count := 16 + rng.Intn(600)
		var cs []Cluster
		for i := rng.Intn(12); i > 0; i-- {
			c := Cluster{Center: math.Pi * rng.Float64(), Start: math.Pow(10, -1-9*rng.Float64())}
			switch rng.Intn(5) {
			case 0:
				c.Center = 0 // clusters at the ends spill outside [0, π]
			case 1:
				c.Center = math.Pi
			}
			cs = append(cs, c)
		}
		var extra []float64
		for i := rng.Intn(6); i > 0; i-- {
			extra = append(extra, math.Pi*rng.Float64())
		}
		sort.Float64s(extra)
		reach := 0.4 * rng.Float64()
		got, want := new(Scratch).Build(nil, count, cs, reach, extra), naive(count, cs, reach, extra)
		if trial%2 == 1 { // a scratch reused from earlier grids gives the same
			dst = sc.Build(dst, count, cs, reach, extra)
			got = dst
		}
		if len(got) != len(want) {
			t.Fatalf("trial %d: %d points, want %d", trial, len(got), len(want))
		}
		for i := range got {
			if got[i] != want[i] {
				t.Fatalf("trial %d: point %d is %v, want %v", trial, i, got[i], want[i])
			}
		}
	}
}

func BenchmarkBuild(b *testing.B) {
	cs := []Cluster{{0, 1e-11}, {0.03, 0.001}, {0.031, 0.002}, {3.1, 0.002}, {0.5, 0.01}}
	var dst []float64
	var sc Scratch
	for i := 0; i < b.N; i++ {
		dst = sc.Build(dst, 256, cs, 2*math.Pi/256, nil)
	}
}
