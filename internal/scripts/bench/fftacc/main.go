// Command fftacc measures the accuracy and cost of tsne.FFT's repulsion
// for a range of grid settings (Lagrange nodes per interval, intervals per
// unit of layout extent, grid cap), for the engine benchmark.
//
//	go run ./internal/scripts/bench/fftacc [-layout y.csv] [-nodes 3,4] [-per-unit 1,2] [-cap 576]
//
// Layouts: the three digits layouts of testdata/sklearn_bh/repulsion.json
// (a converged scikit-learn map, a uniform square ±30 and the converged
// map × 0.05), a uniform square ±30 and ten Gaussian clusters within ±30 of
// 2,000 points each (seeded), and with -layout a layout written by
// `plumb embed --out y.csv` (columns x, y).
//
// The error is the relative RMS error of the repulsion (the gradient with
// an empty P, so attraction, which every method sums exactly, does not
// dilute it), the metric of testdata/sklearn_bh:
//
//	err = ‖F − F_ref‖ / ‖F_ref‖
//
// and the relative error of Z. The reference is the exact O(N²) sum up to
// -exact-max points and Barnes-Hut at θ = -ref-theta beyond. Cost is the
// process CPU time (user + sys) and wall time per evaluation, medians of
// -reps evaluations after one warm-up.
package main

import (
	"encoding/csv"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"time"

	"plumb/tsne"
)

type layout struct {
	name string
	y    []float64
}

func main() {
	root := flag.String("root", ".", "repository root (for testdata)")
	file := flag.String("layout", "", "extra layout (CSV with x and y columns)")
	nodes := flag.String("nodes", "3,4", "Lagrange nodes per interval")
	perUnit := flag.String("per-unit", "1,2", "intervals per unit of extent")
	caps := flag.String("cap", "576", "grid caps (intervals per dimension)")
	reps := flag.Int("reps", 5, "timed evaluations per setting")
	threads := flag.Int("threads", 0, "threads (0: all cores)")
	exactMax := flag.Int("exact-max", 20000, "largest layout with an exact reference")
	refTheta := flag.Float64("ref-theta", 0.2, "Barnes-Hut θ of the reference beyond -exact-max")
	small := flag.Bool("small", true, "include the built-in 2,000-point layouts")
	flag.Parse()

	var ls []layout
	if *small {
		ls = append(ls, digitsLayouts(*root)...)
		ls = append(ls, layout{"uniform ±30 (2,000)", synth("uniform", 2000)}, layout{"clusters ±30 (2,000)", synth("clusters", 2000)})
	}
	if *file != "" {
		y, err := readLayout(*file)
		if err != nil {
			fail(err)
		}
		ls = append(ls, layout{fmt.Sprintf("%s (%d)", filepath.Base(*file), len(y)/2), y})
	}
	fmt.Println("| layout | side | nodes | per unit | cap | intervals | repulsion rel. RMS | Z rel. err | CPU ms/eval | wall ms/eval |")
	fmt.Println("|---|---|---|---|---|---|---|---|---|---|")
	for _, l := range ls {
		n := len(l.y) / 2
		p := &tsne.Sparse{N: n, RowPtr: make([]int, n+1)}
		var ref tsne.Gradient = tsne.NewExact(*threads)
		if n > *exactMax {
			ref = tsne.NewBarnesHut(*refTheta, *threads)
		}
		want, wantZ := ref.Gradient(nil, l.y, p, 1)
		side := extent(l.y)
		for _, ns := range ints(*nodes) {
			for _, pu := range floats(*perUnit) {
				for _, c := range ints(*caps) {
					g := tsne.NewFFT(*threads)
					g.Nodes, g.IntervalsPerUnit, g.MaxIntervals = ns, pu, c
					got, z := g.Gradient(nil, l.y, p, 1)
					var cpu, wall []float64
					for r := 0; r < *reps; r++ {
						c0, w0 := cpuTime(), time.Now()
						g.Gradient(got, l.y, p, 1)
						cpu = append(cpu, (cpuTime()-c0).Seconds()*1e3)
						wall = append(wall, time.Since(w0).Seconds()*1e3)
					}
					fmt.Printf("| %s | %.1f | %d | %g | %d | %d | %.2g | %.2g | %.1f | %.1f |\n", l.name, side, ns, pu, c,
						intervals(side, pu, c), relRMS(got, want), math.Abs(z-wantZ)/wantZ, median(cpu), median(wall))
				}
			}
		}
	}
}

// intervals mirrors tsne's grid rule for the table (at least 50, then
// ⌈side·perUnit⌉ up to the cap, rounded up to a 3-smooth number).
func intervals(side, perUnit float64, c int) int {
	b := 50
	if side*perUnit > 50 {
		b = min(int(math.Ceil(side*perUnit)), c)
	}
	for ; ; b++ {
		k := b
		for k%2 == 0 {
			k /= 2
		}
		for k%3 == 0 {
			k /= 3
		}
		if k == 1 {
			return b
		}
	}
}

func digitsLayouts(root string) []layout {
	b, err := os.ReadFile(filepath.Join(root, "testdata", "sklearn_bh", "repulsion.json"))
	if err != nil {
		fail(err)
	}
	var fx struct {
		Layouts []struct {
			Name string    `json:"name"`
			Y    []float64 `json:"y"`
		} `json:"layouts"`
	}
	if err := json.Unmarshal(b, &fx); err != nil {
		fail(err)
	}
	var out []layout
	for _, l := range fx.Layouts {
		out = append(out, layout{"digits " + l.Name + " (1,797)", l.Y})
	}
	return out
}

// synth makes a seeded layout: "uniform" fills the square ±30; "clusters"
// puts ten Gaussian blobs (sd 2) at random centres within ±25.5.
func synth(kind string, n int) []float64 {
	r := rand.New(rand.NewPCG(5, 11))
	y := make([]float64, 2*n)
	const spread = 30
	switch kind {
	case "uniform":
		for i := range y {
			y[i] = spread * (2*r.Float64() - 1)
		}
	case "clusters":
		var cx, cy [10]float64
		for c := range cx {
			cx[c] = spread * (2*r.Float64() - 1) * 0.85
			cy[c] = spread * (2*r.Float64() - 1) * 0.85
		}
		for i := 0; i < n; i++ {
			c := i * 10 / n
			y[2*i] = cx[c] + r.NormFloat64()*spread/15
			y[2*i+1] = cy[c] + r.NormFloat64()*spread/15
		}
	}
	return y
}

func readLayout(name string) ([]float64, error) {
	f, err := os.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	r := csv.NewReader(f)
	head, err := r.Read()
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	xc, yc := slices.Index(head, "x"), slices.Index(head, "y")
	if xc < 0 || yc < 0 {
		return nil, fmt.Errorf("%s: no x and y columns", name)
	}
	var y []float64
	for row := 2; ; row++ {
		rec, err := r.Read()
		if err == io.EOF {
			return y, nil
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		a, err1 := strconv.ParseFloat(rec[xc], 64)
		b, err2 := strconv.ParseFloat(rec[yc], 64)
		if err1 != nil || err2 != nil {
			return nil, fmt.Errorf("%s: row %d: bad coordinates", name, row)
		}
		y = append(y, a, b)
	}
}

func extent(y []float64) float64 {
	x0, x1, y0, y1 := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for i := 0; i < len(y); i += 2 {
		x0, x1 = min(x0, y[i]), max(x1, y[i])
		y0, y1 = min(y0, y[i+1]), max(y1, y[i+1])
	}
	return max(x1-x0, y1-y0)
}

func relRMS(got, want []float64) float64 {
	var num, den float64
	for i := range got {
		d := got[i] - want[i]
		num += d * d
		den += want[i] * want[i]
	}
	return math.Sqrt(num / den)
}

func cpuTime() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func median(v []float64) float64 {
	slices.Sort(v)
	if len(v)%2 == 1 {
		return v[len(v)/2]
	}
	return (v[len(v)/2-1] + v[len(v)/2]) / 2
}

func ints(s string) []int {
	var out []int
	for _, f := range strings.Split(s, ",") {
		v, err := strconv.Atoi(strings.TrimSpace(f))
		if err != nil {
			fail(fmt.Errorf("bad integer %q", f))
		}
		out = append(out, v)
	}
	return out
}

func floats(s string) []float64 {
	var out []float64
	for _, f := range strings.Split(s, ",") {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil {
			fail(fmt.Errorf("bad number %q", f))
		}
		out = append(out, v)
	}
	return out
}

func fail(err error) {
	fmt.Fprintln(os.Stderr, "fftacc:", err)
	os.Exit(1)
}
