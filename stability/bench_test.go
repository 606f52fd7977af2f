package stability

import (
	"fmt"
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
