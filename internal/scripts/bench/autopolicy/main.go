// Command autopolicy measures the costs behind the thresholds of the
// engine's "auto" policy (tsne.Choose), for the bench README:
//
//	go run ./internal/scripts/bench/autopolicy -part gradient   # exact vs Barnes-Hut vs FFT, one evaluation
//	go run ./internal/scripts/bench/autopolicy -part neighbors  # exact (VP-tree) vs NN-descent
//
// Gradient part: one evaluation of each method on a seeded layout of n
// points in 20 Gaussian clusters spread over a square of the given side
// (the extent of a converged map of that size; see the README), with a P of
// 90 entries a row. Neighbour part: each search on a seeded mixture of 20
// Gaussian clusters in d dimensions (as gmm_data.py: centres N(0, 2²), unit
// spread), k = 90. Costs are process CPU seconds (user + sys), so they
// stay comparable while other work shares the machine; wall seconds are
// printed beside them. Each gradient is evaluated once to warm up, then
// -reps times (median).
package main

import (
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"time"

	"plumb/tsne"
)

func main() {
	part := flag.String("part", "gradient", "gradient or neighbors")
	sizes := flag.String("n", "500,1000,2000", "sizes (gradient: n:side pairs, side optional)")
	methods := flag.String("methods", "exact,barnes-hut,fft", "gradient methods")
	dims := flag.String("d", "50", "dimensions (neighbours)")
	reps := flag.Int("reps", 3, "timed evaluations per gradient")
	threads := flag.Int("threads", 0, "threads (0: all cores)")
	flag.Parse()
	switch *part {
	case "gradient":
		fmt.Println("| n | side | method | CPU ms/eval | wall ms/eval |")
		fmt.Println("|---|---|---|---|---|")
		for _, f := range strings.Split(*sizes, ",") {
			n, side := parseSize(f)
			y := layout(n, side)
			p := knnP(n, 90)
			for _, m := range strings.Split(*methods, ",") {
				var g tsne.Gradient
				switch tsne.Method(m) {
				case tsne.MethodExact:
					g = tsne.NewExact(*threads)
				case tsne.MethodBarnesHut:
					g = tsne.NewBarnesHut(tsne.DefaultTheta, *threads)
				case tsne.MethodFFT:
					g = tsne.NewFFT(*threads)
				default:
					fail(fmt.Errorf("unknown method %q", m))
				}
				dst, _ := g.Gradient(nil, y, p, 1)
				var cpu, wall []float64
				for r := 0; r < *reps; r++ {
					c0, w0 := cpuTime(), time.Now()
					g.Gradient(dst, y, p, 1)
					cpu = append(cpu, cpuTime()-c0)
					wall = append(wall, time.Since(w0).Seconds())
				}
				fmt.Printf("| %d | %.0f | %s | %.3g | %.3g |\n", n, side, m, 1e3*median(cpu), 1e3*median(wall))
			}
		}
	case "neighbors":
		fmt.Println("| n | d | search | CPU s | wall s |")
		fmt.Println("|---|---|---|---|---|")
		for _, ds := range strings.Split(*dims, ",") {
			d, _ := strconv.Atoi(ds)
			for _, f := range strings.Split(*sizes, ",") {
				n, _ := parseSize(f)
				x := mixture(n, d)
				for _, s := range []string{"exact", "approx"} {
					c0, w0 := cpuTime(), time.Now()
					if _, err := tsne.FindNeighbors(x, n, d, 90, s, 1, *threads); err != nil {
						fail(err)
					}
					fmt.Printf("| %d | %d | %s | %.1f | %.1f |\n", n, d, s, cpuTime()-c0, time.Since(w0).Seconds())
				}
			}
		}
	default:
		fail(fmt.Errorf("unknown part %q", *part))
	}
}

// parseSize reads "n" or "n:side"; the side defaults to 2.6·√n (about the
// extent of this engine's converged maps of clustered data).
func parseSize(f string) (int, float64) {
	a, b, _ := strings.Cut(strings.TrimSpace(f), ":")
	n, err := strconv.Atoi(a)
	if err != nil || n < 2 {
		fail(fmt.Errorf("bad size %q", f))
	}
	side := 2.6 * math.Sqrt(float64(n))
	if b != "" {
		if side, err = strconv.ParseFloat(b, 64); err != nil {
			fail(fmt.Errorf("bad side %q", f))
		}
	}
	return n, side
}

// layout puts n points in 20 Gaussian clusters (sd side/30) with centres
// uniform within the middle 80% of a square of the given side.
func layout(n int, side float64) []float64 {
	r := rand.New(rand.NewPCG(uint64(n), 3))
	var cx, cy [20]float64
	for c := range cx {
		cx[c] = side * 0.8 * (r.Float64() - 0.5)
		cy[c] = side * 0.8 * (r.Float64() - 0.5)
	}
	y := make([]float64, 2*n)
	for i := 0; i < n; i++ {
		c := r.IntN(20)
		y[2*i] = cx[c] + r.NormFloat64()*side/30
		y[2*i+1] = cy[c] + r.NormFloat64()*side/30
	}
	return y
}

// knnP is a P with k entries a row at index offsets (cheap, with the
// attraction's usual cost; the repulsion does not depend on P).
func knnP(n, k int) *tsne.Sparse {
	p := &tsne.Sparse{N: n, RowPtr: make([]int, n+1)}
	for i := 0; i < n; i++ {
		cols := make([]int32, 0, k)
		for a := 1; a <= k; a++ {
			cols = append(cols, int32((i+a)%n))
		}
		slices.Sort(cols)
		for _, j := range cols {
			p.Col = append(p.Col, j)
			p.Val = append(p.Val, 1/float64(n*k))
		}
		p.RowPtr[i+1] = len(p.Col)
	}
	return p
}

func mixture(n, d int) []float64 {
	r := rand.New(rand.NewPCG(1, uint64(d)))
	cent := make([]float64, 20*d)
	for i := range cent {
		cent[i] = 2 * r.NormFloat64()
	}
	x := make([]float64, n*d)
	for i := 0; i < n; i++ {
		c := r.IntN(20)
		for j := 0; j < d; j++ {
			x[i*d+j] = cent[c*d+j] + r.NormFloat64()
		}
	}
	return x
}

func cpuTime() float64 {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}

func median(v []float64) float64 {
	slices.Sort(v)
	if len(v)%2 == 1 {
		return v[len(v)/2]
	}
	return (v[len(v)/2-1] + v[len(v)/2]) / 2
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "autopolicy:", err)
	os.Exit(1)
}
