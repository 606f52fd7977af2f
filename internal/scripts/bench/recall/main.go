// Command recall measures the recall of tsne.ApproxNeighbors against brute
// force on a seeded sample of query points, for the engine benchmark.
//
//	go run ./internal/scripts/bench/recall -input data.csv -label-column cluster [-k 90] [-queries 1000]
//
// It prints "recall R seconds S" where R is the fraction of the exact k
// nearest neighbours of the sampled points that the approximate lists
// contain (Dong, Charikar & Li 2011, "recall") and S the time
// ApproxNeighbors took.
package main

import (
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"slices"
	"time"

	"plumb/internal/dataset"
	"plumb/tsne"
)

func main() {
	input := flag.String("input", "", "input CSV")
	label := flag.String("label-column", "", "label column (not a feature)")
	k := flag.Int("k", 90, "neighbours per point")
	queries := flag.Int("queries", 1000, "sampled query points")
	seed := flag.Uint64("seed", 1, "seed of the approximate search")
	threads := flag.Int("threads", 0, "threads (0: all cores)")
	flag.Parse()
	ds, err := dataset.Read(*input, dataset.Options{IDColumn: "id", LabelColumn: *label})
	if err != nil {
		fmt.Fprintln(os.Stderr, "recall:", err)
		os.Exit(1)
	}
	t0 := time.Now()
	nb, err := tsne.ApproxNeighbors(ds.X, ds.N, ds.D, *k, *seed, *threads)
	if err != nil {
		fmt.Fprintln(os.Stderr, "recall:", err)
		os.Exit(1)
	}
	secs := time.Since(t0).Seconds()
	r := rand.New(rand.NewPCG(7, 7))
	q := min(*queries, ds.N)
	hit := 0
	type cand struct {
		sq float64
		j  int
	}
	best := make([]cand, 0, *k+1) // the k nearest so far, ascending
	for _, i := range r.Perm(ds.N)[:q] {
		best = best[:0]
		xi := ds.X[i*ds.D : (i+1)*ds.D]
		for j := 0; j < ds.N; j++ {
			if j == i {
				continue
			}
			var sq float64
			for c, v := range ds.X[j*ds.D : (j+1)*ds.D] {
				t := v - xi[c]
				sq += t * t
			}
			if len(best) == *k && sq >= best[*k-1].sq {
				continue
			}
			p := len(best)
			best = append(best, cand{sq, j})
			for p > 0 && best[p-1].sq > sq {
				best[p] = best[p-1]
				p--
			}
			best[p] = cand{sq, j}
			if len(best) > *k {
				best = best[:*k]
			}
		}
		row := nb.Index[i**k : (i+1)**k]
		for _, c := range best {
			if slices.Contains(row, int32(c.j)) {
				hit++
			}
		}
	}
	fmt.Printf("recall %.4f seconds %.1f\n", float64(hit)/float64(q**k), secs)
}
