package planted

import (
	"math"
	"slices"
	"testing"
)

// TestMake checks the planted structure: counts and kinds, the same data
// for the same seed, centres Separation apart (regular simplex: the mean of
// each cluster's points lies within a few σ/√size of its centre, and the
// means are ≈ Separation apart), bridge points between centres, and the
// two sub-blobs SplitGap apart along the last feature.
func TestMake(t *testing.T) {
	cfg := Config{Sizes: []int{400, 400}, Bridges: 50, Noise: 30, Split: 1, SplitGap: 4, Seed: 1}
	d, err := Make(cfg)
	if err != nil {
		t.Fatal(err)
	}
	if d.N != 880 || len(d.X) != 880*20 || len(d.Kind) != 880 {
		t.Fatalf("got N = %d, %d values, %d kinds; want 880 points of 20 features", d.N, len(d.X), len(d.Kind))
	}
	count := map[Kind]int{}
	for _, k := range d.Kind {
		count[k]++
	}
	if count[Core] != 800 || count[Bridge] != 50 || count[Noise] != 30 {
		t.Fatalf("got kinds %v", count)
	}
	again, _ := Make(cfg)
	if !slices.Equal(d.X, again.X) {
		t.Fatal("same seed, different data")
	}
	mean := func(keep func(i int) bool) []float64 {
		m := make([]float64, 20)
		c := 0
		for i := 0; i < d.N; i++ {
			if keep(i) {
				for f := 0; f < 20; f++ {
					m[f] += d.X[i*20+f]
				}
				c++
			}
		}
		for f := range m {
			m[f] /= float64(c)
		}
		return m
	}
	dist := func(a, b []float64) float64 {
		var s float64
		for f := range a {
			s += (a[f] - b[f]) * (a[f] - b[f])
		}
		return math.Sqrt(s)
	}
	m0 := mean(func(i int) bool { return d.Kind[i] == Core && d.Cluster[i] == 0 })
	m1 := mean(func(i int) bool { return d.Kind[i] == Core && d.Cluster[i] == 1 })
	// Each mean has sd 1/√400 = 0.05 per feature, ≈ 0.22 over 20 features.
	if got := dist(m0, m1); math.Abs(got-10) > 1 {
		t.Errorf("cluster means %.2f apart, want ≈ 10", got)
	}
	s0 := mean(func(i int) bool { return d.Sub[i] == 0 })
	s1 := mean(func(i int) bool { return d.Sub[i] == 1 })
	if got := s1[19] - s0[19]; math.Abs(got-4) > 0.5 {
		t.Errorf("sub-blobs %.2f apart on the last feature, want ≈ 4", got)
	}
	mb := mean(func(i int) bool { return d.Kind[i] == Bridge })
	if a, b := dist(mb, m0), dist(mb, m1); math.Abs(a-b) > 2.5 || a > 8 {
		t.Errorf("bridge mean %.2f and %.2f from the clusters, want about halfway (≈ 5 each, t ∈ [0.25, 0.75])", a, b)
	}
	for _, bad := range []Config{{}, {Sizes: []int{5}, Bridges: 3, Split: -1}, {Sizes: []int{5}, Split: 1}, {Sizes: []int{5, 5}, Spreads: []float64{1}, Split: -1}} {
		if _, err := Make(bad); err == nil {
			t.Errorf("config %+v: got no error", bad)
		}
	}
}
