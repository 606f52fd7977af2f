package stability_test

import (
	"math"
	"math/rand/v2"
	"strconv"
	"syscall"
	"testing"
	"time"

	"plumb/stability"
)

// mapLike returns a layout of n points shaped like a t-SNE map: 20 evenly
// filled discs of radius ∝ √size (sizes 1 … 20 parts), centres on a ring
// of radius 60, plus 1 % of points uniform over the square [−80, 80]²,
// from rand.NewPCG(seed, 3).
func mapLike(n int, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 3))
	y := make([]float64, 0, 2*n)
	noise := n / 100
	parts := 0
	for c := 1; c <= 20; c++ {
		parts += c
	}
	left := n - noise
	for c := 1; c <= 20 && left > 0; c++ {
		size := (n - noise) * c / parts
		if c == 20 {
			size = left
		}
		left -= size
		a := 2 * math.Pi * float64(c) / 20
		cx, cy := 60*math.Cos(a), 60*math.Sin(a)
		r := 0.1 * math.Sqrt(float64(size))
		for i := 0; i < size; i++ {
			for {
				u, v := 2*rng.Float64()-1, 2*rng.Float64()-1
				if u*u+v*v <= 1 {
					y = append(y, cx+r*u, cy+r*v)
					break
				}
			}
		}
	}
	for i := 0; i < noise; i++ {
		y = append(y, 160*rng.Float64()-80, 160*rng.Float64()-80)
	}
	return y
}

// cpuTime is the process's user + sys time: on a shared machine the
// benchmarks report it per operation ("cpu-s/op") beside wall time.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// BenchmarkMapClusters clusters a map-like layout of 5k and 100k points
// with the default settings on all cores.
func BenchmarkMapClusters(b *testing.B) {
	for _, n := range []int{5000, 100000} {
		y := mapLike(n, 1)
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			var k int
			c0 := cpuTime()
			for i := 0; i < b.N; i++ {
				mc, err := stability.MapClusters(y, stability.MapClusterConfig{})
				if err != nil {
					b.Fatal(err)
				}
				k = mc.K
			}
			b.ReportMetric((cpuTime()-c0).Seconds()/float64(b.N), "cpu-s/op")
			b.ReportMetric(float64(k), "clusters")
		})
	}
}

// BenchmarkCoAssignment scores 10 runs of 100k points with 20 clusters
// each (45 pairs of runs).
func BenchmarkCoAssignment(b *testing.B) {
	const n, runs = 100000, 10
	rng := rand.New(rand.NewPCG(1, 4))
	rc := make([]stability.RunClusters, runs)
	for r := range rc {
		lab := make([]int32, n)
		for i := range lab {
			lab[i] = int32(i * 20 / n)
			if rng.IntN(20) == 0 {
				lab[i] = int32(rng.IntN(20))
			}
		}
		rc[r] = stability.RunClusters{Labels: lab}
	}
	b.ReportAllocs()
	b.ResetTimer()
	c0 := cpuTime()
	for i := 0; i < b.N; i++ {
		if _, err := stability.CoAssignment(rc, n, 0); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric((cpuTime()-c0).Seconds()/float64(b.N), "cpu-s/op")
}
