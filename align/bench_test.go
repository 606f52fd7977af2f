package align

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

var sinkGPA *GPAResult

// BenchmarkGeneralized: S noisy, rigidly moved copies of one Gaussian
// layout (seeded), as the runs of one setting would be.
func BenchmarkGeneralized(b *testing.B) {
	for _, size := range []struct{ s, n int }{{10, 10000}, {10, 100000}} {
		b.Run(fmt.Sprintf("S=%d/n=%d", size.s, size.n), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(1, uint64(size.n)))
			base := gaussLayout(rng, size.n)
			ls := make([][]float64, size.s)
			for k := range ls {
				y := randomSimilarity(rng, k%2 == 1, 1+rng.Float64()).Apply(base)
				for i := range y {
					y[i] += 0.05 * rng.NormFloat64()
				}
				ls[k] = y
			}
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				g, err := Generalized(ls, 0, 0)
				if err != nil {
					b.Fatal(err)
				}
				sinkGPA = g
			}
			b.ReportMetric(float64(sinkGPA.Iters), "rounds")
		})
	}
}

var sinkF float64

func BenchmarkDisparity(b *testing.B) {
	rng := rand.New(rand.NewPCG(2, 3))
	a, c := gaussLayout(rng, 100000), gaussLayout(rng, 100000)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		d, err := Disparity(a, c)
		if err != nil {
			b.Fatal(err)
		}
		sinkF = d
	}
}
