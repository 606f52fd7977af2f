package stability

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

var sinkScore Faithfulness

// BenchmarkTrustworthiness: exact trustworthiness (every point a query) of
// a seeded Gaussian input (d = 50) against a map that is its first two
// coordinates plus noise, k = 15. The n = 10000 case is the target.
func BenchmarkTrustworthiness(b *testing.B) {
	for _, n := range []int{2000, 10000} {
		b.Run(fmt.Sprintf("n=%d/d=50", n), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(1, uint64(n)))
			d := 50
			x := gauss(rng, n*d)
			y := make([]float64, 2*n)
			for i := 0; i < n; i++ {
				y[2*i] = x[i*d] + 0.3*rng.NormFloat64()
				y[2*i+1] = x[i*d+1] + 0.3*rng.NormFloat64()
			}
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				s, err := TrustworthinessWith(x, d, y, 15, Options{})
				if err != nil {
					b.Fatal(err)
				}
				sinkScore.Trustworthiness = s
			}
		})
	}
}

// BenchmarkFaithfulness: trustworthiness, continuity and recall together.
func BenchmarkFaithfulness(b *testing.B) {
	n, d := 10000, 50
	rng := rand.New(rand.NewPCG(2, 3))
	x := gauss(rng, n*d)
	y := gauss(rng, 2*n)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		f, err := FaithfulnessAt(x, d, y, 15, Options{})
		if err != nil {
			b.Fatal(err)
		}
		sinkScore = f
	}
}

var sinkF float64

func BenchmarkNeighborJaccard(b *testing.B) {
	n := 100000
	rng := rand.New(rand.NewPCG(4, 5))
	a, c := gauss(rng, 2*n), gauss(rng, 2*n)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		j, err := NeighborJaccard(a, c, 15)
		if err != nil {
			b.Fatal(err)
		}
		sinkF = j
	}
}

// BenchmarkTrustworthinessList: n = 10000, d = 50, nearly planar input (two
// coordinates sd 1, 48 sd 0.002) and a faithful map, with the exact input
// neighbour list (K = 90, as the engine keeps for perplexity 30) passed in.
func BenchmarkTrustworthinessList(b *testing.B) {
	n, d, K := 10000, 50, 90
	rng := rand.New(rand.NewPCG(6, 7))
	x := gauss(rng, n*d)
	y := make([]float64, 2*n)
	for i := 0; i < n; i++ {
		for c := 2; c < d; c++ {
			x[i*d+c] *= 0.002
		}
		y[2*i] = x[i*d] + 0.01*rng.NormFloat64()
		y[2*i+1] = x[i*d+1] + 0.01*rng.NormFloat64()
	}
	nb := exactInputNeighbors(x, n, d, K)
	for _, withList := range []bool{false, true} {
		b.Run(fmt.Sprintf("list=%v", withList), func(b *testing.B) {
			opt := Options{}
			if withList {
				opt.InputNeighbors, opt.InputK = nb, K
			}
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				s, err := TrustworthinessWith(x, d, y, 15, opt)
				if err != nil {
					b.Fatal(err)
				}
				sinkScore.Trustworthiness = s
			}
			b.ReportMetric(sinkScore.Trustworthiness.Value, "T")
		})
	}
}

var sinkBatch []Faithfulness

// BenchmarkFaithfulnessBatch: L layouts of one seeded Gaussian input
// (n = 2000, d = 50), k = 15, scored together; compare with L times
// BenchmarkFaithfulness-style single calls (the per=single case).
func BenchmarkFaithfulnessBatch(b *testing.B) {
	n, d := 2000, 50
	rng := rand.New(rand.NewPCG(8, 9))
	x := gauss(rng, n*d)
	var ys [][]float64
	for l := 0; l < 8; l++ {
		ys = append(ys, gauss(rng, 2*n))
	}
	for _, L := range []int{1, 8} {
		b.Run(fmt.Sprintf("L=%d/per=batch", L), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				f, err := FaithfulnessBatch(x, d, ys[:L], 15, Options{})
				if err != nil {
					b.Fatal(err)
				}
				sinkBatch = f
			}
		})
		b.Run(fmt.Sprintf("L=%d/per=single", L), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				for _, y := range ys[:L] {
					f, err := FaithfulnessAt(x, d, y, 15, Options{})
					if err != nil {
						b.Fatal(err)
					}
					sinkScore = f
				}
			}
		})
	}
}

// BenchmarkDistanceCorrelation: input (n = 5000, d = 50) against a layout
// over DefaultPairs sampled pairs, one-shot and with the input ranked once.
func BenchmarkDistanceCorrelation(b *testing.B) {
	n, d := 5000, 50
	rng := rand.New(rand.NewPCG(10, 11))
	x, y := gauss(rng, n*d), gauss(rng, 2*n)
	b.Run("one-shot", func(b *testing.B) {
		b.ReportAllocs()
		for i := 0; i < b.N; i++ {
			s, err := DistanceCorrelation(x, d, y, 2, 0, 1)
			if err != nil {
				b.Fatal(err)
			}
			sinkF = s.Value
		}
	})
	b.Run("prepared", func(b *testing.B) {
		in, err := NewDistanceRanks(x, d, 0, 1)
		if err != nil {
			b.Fatal(err)
		}
		b.ReportAllocs()
		b.ResetTimer()
		for i := 0; i < b.N; i++ {
			s, err := in.Correlation(y, 2)
			if err != nil {
				b.Fatal(err)
			}
			sinkF = s.Value
		}
	})
}

// sweepLike returns a clustered input (n points, d = 50: ten clusters, each
// a random 2-d sheet plus noise) and L layouts shaped like t-SNE maps of
// it: the clusters placed in random order on a circle, each sheet rotated,
// map noise growing from layout to layout, and 1% of the points torn away
// to a random cluster. Seeded; used by the benchmarks and the rank tests.
func sweepLike(seed uint64, n, L int) (x []float64, d int, ys [][]float64) {
	const clusters = 10
	d = 50
	rng := rand.New(rand.NewPCG(seed, 1))
	centre := gauss(rng, clusters*d)
	sheet := gauss(rng, clusters*d*2)
	for i := range centre {
		centre[i] *= 6
	}
	lab := make([]int, n)
	z := gauss(rng, 2*n)
	x = make([]float64, n*d)
	for i := 0; i < n; i++ {
		c := rng.IntN(clusters)
		lab[i] = c
		for a := 0; a < d; a++ {
			x[i*d+a] = centre[c*d+a] + sheet[(c*d+a)*2]*z[2*i] + sheet[(c*d+a)*2+1]*z[2*i+1] + 0.1*rng.NormFloat64()
		}
	}
	for l := 0; l < L; l++ {
		noise := 0.05 + 0.6*float64(l)/float64(max(1, L-1))
		// Cluster c on a circle of radius 25, in a random order.
		pos := make([]float64, 2*clusters)
		for c, s := range rng.Perm(clusters) {
			pos[2*c], pos[2*c+1] = math.Sincos(2 * math.Pi * float64(s) / clusters)
		}
		rot := make([]float64, clusters)
		for c := range rot {
			rot[c] = 2 * math.Pi * rng.Float64()
		}
		y := make([]float64, 2*n)
		for i := 0; i < n; i++ {
			c := lab[i]
			if rng.IntN(100) == 0 {
				c = rng.IntN(clusters)
			}
			s, co := math.Sincos(rot[c])
			y[2*i] = 25*pos[2*c] + 2*(co*z[2*i]-s*z[2*i+1]) + noise*rng.NormFloat64()
			y[2*i+1] = 25*pos[2*c+1] + 2*(s*z[2*i]+co*z[2*i+1]) + noise*rng.NormFloat64()
		}
		ys = append(ys, y)
	}
	return x, d, ys
}

// BenchmarkFaithfulnessSweep: one batch of a sweep's scoring, n = 5000,
// k = 15, with the exact input neighbour list (K = 90, as the engine keeps
// for perplexity 30). layouts=sweep are eight sweepLike maps; layouts=random
// are two Gaussian clouds (chance level, the worst case for continuity).
func BenchmarkFaithfulnessSweep(b *testing.B) {
	n, K := 5000, 90
	x, d, ys := sweepLike(12, n, 8)
	rng := rand.New(rand.NewPCG(13, 14))
	nb := exactInputNeighbors(x, n, d, K)
	for _, tc := range []struct {
		name string
		ys   [][]float64
	}{{"sweep", ys}, {"random", [][]float64{gauss(rng, 2*n), gauss(rng, 2*n)}}} {
		b.Run("layouts="+tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				f, err := FaithfulnessBatch(x, d, tc.ys, 15, Options{InputNeighbors: nb, InputK: K})
				if err != nil {
					b.Fatal(err)
				}
				sinkBatch = f
			}
			b.ReportMetric(sinkBatch[0].Continuity.Value, "C0")
			b.ReportMetric(sinkBatch[len(sinkBatch)-1].Continuity.Value, "Clast")
		})
	}
}
