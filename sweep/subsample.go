package sweep

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"plumb/tsne"
)

// subsampleStream is the PCG stream of the subsample draw, so that a run's
// seed draws its subsample and its random start from different streams.
const subsampleStream = 0x73756273616d706c // "subsampl"

// SubsampleSize returns ⌈F·n⌉, the number of points a run with subsample
// fraction f embeds (n for f ≥ 1).
func SubsampleSize(n int, f float64) int {
	if f >= 1 || f <= 0 {
		return n
	}
	m := int(math.Ceil(f * float64(n)))
	return min(max(m, 1), n)
}

// Subsample returns the input rows embedded by the run with the given seed
// of a setting with subsample fraction f: SubsampleSize(n, f) distinct rows
// of 0..n−1, ascending, drawn uniformly without replacement by a partial
// Fisher–Yates shuffle from rand.New(rand.NewPCG(seed, subsampleStream)).
// It returns nil for f ≥ 1 (every row). The draw depends only on n, f and
// seed, so every shard, resume and reader finds the same rows. Cost O(n)
// time and memory.
func Subsample(n int, f float64, seed uint64) []int32 {
	m := SubsampleSize(n, f)
	if f >= 1 || m >= n {
		return nil
	}
	rng := rand.New(rand.NewPCG(seed, subsampleStream))
	perm := make([]int32, n)
	for i := range perm {
		perm[i] = int32(i)
	}
	for i := 0; i < m; i++ {
		j := i + rng.IntN(n-i)
		perm[i], perm[j] = perm[j], perm[i]
	}
	rows := perm[:m:m]
	slices.Sort(rows)
	return rows
}

// sharedNeighborCount returns the neighbours per point of the one shared
// search of a plan: NeighborCount(n, largest perplexity), and, when the
// plan resamples, enough more that each subsample's k nearest are, with
// overwhelming probability, among them (see subsetNeighbors):
//
//	K = ⌈(k + 5·sqrt(k·(1 − F)) + 2) / F⌉,  F the smallest fraction,
//
// capped at n − 1. Among a point's K nearest, the members of a subsample
// of fraction F number about K·F with standard deviation at most
// sqrt(K·F·(1 − F)) (hypergeometric, below the binomial's), so K·F
// exceeds k by about five of them; the rare point with fewer is searched
// again. k is the largest subsample's count, NeighborCount(⌈F·n⌉, perp).
func sharedNeighborCount(n int, plan *Plan) int {
	perp := plan.MaxPerplexity()
	k := tsne.NeighborCount(n, perp)
	f := plan.MinFraction()
	if f >= 1 {
		return k
	}
	for _, g := range plan.Fractions() {
		if g < 1 {
			k = max(k, tsne.NeighborCount(SubsampleSize(n, g), perp))
		}
	}
	big := int(math.Ceil((float64(k) + 5*math.Sqrt(float64(k)*(1-f)) + 2) / f))
	return min(big, n-1)
}

// subsetNeighbors returns the k nearest neighbours of every point of the
// subsample rows (ascending input rows) among the subsample, numbered
// 0..len(rows)−1, derived from full: neighbour lists of all n points of x
// in input order, sorted by distance with ties broken by the smaller index
// (tsne.ExactNeighbors, or an approximate search).
//
// Exactness: when full is exact, a point's k nearest within the subsample
// are the first k subsample members of its full list whenever that list
// holds at least k of them. Every subsample member missing from the list
// lies at least as far as the list's last entry, and on a tie has a larger
// input index than every listed point at that distance; numbering the
// subsample in ascending input order keeps that tie order. A point whose
// list holds fewer than k members is searched again exactly within the
// subsample (tsne.ExactNeighborsOf: the same distance kernel and tie rule
// as a fresh tsne.ExactNeighbors of the subsample), so the result equals a
// fresh exact search of the subsample bit for bit. With an approximate
// full search the derived lists are as approximate as it is.
//
// It returns the lists and the number of points searched again. Cost
// O(len(rows)·full.K), plus O(len(rows)·d) per point searched again.
func subsetNeighbors(full *tsne.Neighbors, rows []int32, x []float64, d, k, threads int) (*tsne.Neighbors, int, error) {
	m := len(rows)
	if k < 1 || k >= m {
		return nil, 0, fmt.Errorf("sweep: subsample of %d points cannot have %d neighbours per point", m, k)
	}
	pos := make([]int32, full.N)
	for i := range pos {
		pos[i] = -1
	}
	for a, r := range rows {
		pos[r] = int32(a)
	}
	nb := &tsne.Neighbors{N: m, K: k, Index: make([]int32, m*k), Dist: make([]float64, m*k)}
	var again []int32
	for a, r := range rows {
		got := 0
		row := full.Index[int(r)*full.K : (int(r)+1)*full.K]
		dist := full.Dist[int(r)*full.K : (int(r)+1)*full.K]
		for j, c := range row {
			if p := pos[c]; p >= 0 {
				nb.Index[a*k+got], nb.Dist[a*k+got] = p, dist[j]
				got++
				if got == k {
					break
				}
			}
		}
		if got < k {
			again = append(again, int32(a))
		}
	}
	if len(again) > 0 {
		xs := selectRows(x, d, rows)
		re, err := tsne.ExactNeighborsOf(xs, m, d, k, again, threads)
		if err != nil {
			return nil, 0, err
		}
		for q, a := range again {
			copy(nb.Index[int(a)*k:(int(a)+1)*k], re.Index[q*k:(q+1)*k])
			copy(nb.Dist[int(a)*k:(int(a)+1)*k], re.Dist[q*k:(q+1)*k])
		}
	}
	return nb, len(again), nil
}

// selectRows returns the rows of the n×d matrix x listed in rows.
func selectRows(x []float64, d int, rows []int32) []float64 {
	out := make([]float64, len(rows)*d)
	for a, r := range rows {
		copy(out[a*d:(a+1)*d], x[int(r)*d:(int(r)+1)*d])
	}
	return out
}

// selectStrings returns v[rows] (nil for nil v).
func selectStrings(v []string, rows []int32) []string {
	if v == nil {
		return nil
	}
	out := make([]string, len(rows))
	for a, r := range rows {
		out[a] = v[r]
	}
	return out
}
