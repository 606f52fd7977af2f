package stability_test

import (
	"math/rand/v2"
	"os"
	"slices"
	"sync"
	"testing"

	"plumb/internal/par"
	"plumb/internal/planted"
	"plumb/tsne"
)

// plantedRun is one t-SNE run of a planted dataset: the input rows it
// embedded and its layout.
type plantedRun struct {
	rows   []int32
	layout []float64
}

var embedCache sync.Map // key string → []plantedRun

// embedRuns embeds the data with random initialisation, perplexity 30 and
// seeds 1 … seeds, each run on all rows (frac = 1) or on a seeded random
// subset of round(frac·N) rows (rand.NewPCG(seed, 11)). Runs share two
// goroutines, one each.
func embedRuns(t testing.TB, name string, d *planted.Data, seeds int, frac float64) []plantedRun {
	key := name + "/" + string(rune(seeds)) + "/" + string(rune(int(frac*1000)))
	if v, ok := embedCache.Load(key); ok {
		return v.([]plantedRun)
	}
	runs := make([]plantedRun, seeds)
	errs := make([]error, seeds)
	par.Each(seeds, 2, func(s int) {
		seed := uint64(s + 1)
		rows := make([]int32, d.N)
		for i := range rows {
			rows[i] = int32(i)
		}
		if frac < 1 {
			rng := rand.New(rand.NewPCG(seed, 11))
			rng.Shuffle(len(rows), func(a, b int) { rows[a], rows[b] = rows[b], rows[a] })
			rows = rows[:int(frac*float64(d.N)+0.5)]
			slices.Sort(rows)
		}
		x := make([]float64, 0, len(rows)*d.Dim)
		for _, r := range rows {
			x = append(x, d.X[int(r)*d.Dim:(int(r)+1)*d.Dim]...)
		}
		res, err := tsne.Embed(x, len(rows), d.Dim, tsne.EmbedConfig{
			Perplexity: 30, Init: tsne.InitRandom, Seed: seed, Config: tsne.Config{Threads: 1},
		})
		if err != nil {
			errs[s] = err
			return
		}
		runs[s] = plantedRun{rows: rows, layout: res.Y}
	})
	for _, err := range errs {
		if err != nil {
			t.Fatal(err)
		}
	}
	embedCache.Store(key, runs)
	return runs
}

// coreCluster returns, for every row each run embedded, the planted
// cluster that holds most of its truthNeighbors nearest core points in
// that run's map (ties to the cluster of the nearest of them); −2 for rows
// the run did not embed.
const truthNeighbors = 10

func coreCluster(d *planted.Data, run plantedRun) []int {
	out := make([]int, d.N)
	for i := range out {
		out[i] = -2
	}
	var cores []int // positions in run
	for m, r := range run.rows {
		if d.Kind[r] == planted.Core {
			cores = append(cores, m)
		}
	}
	type cand struct {
		d2 float64
		m  int
	}
	y := run.layout
	for m, r := range run.rows {
		if d.Kind[r] == planted.Core {
			out[r] = d.Cluster[r]
			continue
		}
		cs := make([]cand, 0, len(cores))
		for _, c := range cores {
			dx, dy := y[2*c]-y[2*m], y[2*c+1]-y[2*m+1]
			cs = append(cs, cand{dx*dx + dy*dy, c})
		}
		slices.SortFunc(cs, func(a, b cand) int {
			if a.d2 != b.d2 {
				if a.d2 < b.d2 {
					return -1
				}
				return 1
			}
			return a.m - b.m
		})
		votes := map[int]int{}
		best, bestV := -1, 0
		for _, c := range cs[:min(truthNeighbors, len(cs))] {
			cl := d.Cluster[run.rows[c.m]]
			votes[cl]++
			if votes[cl] > bestV {
				best, bestV = cl, votes[cl]
			}
		}
		// The first cluster to reach the top count is the one whose
		// member came nearest among the tied.
		out[r] = best
	}
	return out
}

// truth classes of the rows: core, switcher (a non-core point whose
// nearest core points' planted cluster differs between two runs), other
// (non-core, never switching).
const (
	isCore = iota
	isSwitcher
	isOther
)

func truthOf(d *planted.Data, runs []plantedRun) []int {
	cl := make([][]int, len(runs))
	for s, r := range runs {
		cl[s] = coreCluster(d, r)
	}
	out := make([]int, d.N)
	for i := 0; i < d.N; i++ {
		if d.Kind[i] == planted.Core {
			out[i] = isCore
			continue
		}
		out[i] = isOther
		first := -2
		for s := range runs {
			c := cl[s][i]
			if c == -2 {
				continue
			}
			if first == -2 {
				first = c
			} else if c != first {
				out[i] = isSwitcher
			}
		}
	}
	return out
}

func longTests() bool { return os.Getenv("PLUMB_LONG") == "1" }

// plantedVariant is a planted dataset of the validation.
type plantedVariant struct {
	name string
	cfg  planted.Config
	long bool // only with PLUMB_LONG=1
}

// plantedVariants are the datasets of the validation. Every cluster centre
// is 10 apart from every other in 20-D (planted.Config's default), where a
// unit-spread cluster's own points are about 6.3 apart: the clusters are
// well separated in the input.
func plantedVariants() []plantedVariant {
	return []plantedVariant{
		// Three clusters of unequal sizes and densities.
		{name: "three", cfg: planted.Config{Sizes: []int{400, 200, 100}, Spreads: []float64{1, 0.6, 1.5}, Bridges: 60, Noise: 50, Split: -1, Seed: 3}},
		// Six equal clusters as in the issue: 6 × 200 + 150 bridge + 100 noise.
		{name: "six", cfg: planted.Config{Sizes: []int{200, 200, 200, 200, 200, 200}, Bridges: 150, Noise: 100, Split: -1, Seed: 6}},
		// Six clusters of unequal sizes and densities.
		{name: "six-unequal", long: true, cfg: planted.Config{Sizes: []int{400, 300, 200, 150, 100, 50}, Spreads: []float64{1, 0.8, 1.2, 0.6, 1.5, 1}, Bridges: 150, Noise: 100, Split: -1, Seed: 7}},
	}
}
