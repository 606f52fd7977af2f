package sweep

import "plumb/tsne"

// AutoExactMaxN is the largest n for which the plan's "auto" neighbour
// search is exact (tsne.ExactNeighbors); beyond it the approximate search
// (tsne.ApproxNeighbors, NN-descent) is used.
const AutoExactMaxN = 100000

// neighborSeed seeds the approximate neighbour search. It is fixed, so
// every shard and every resume builds the same lists.
const neighborSeed = 0x706c756d62

// neighborsMode resolves the plan's neighbour search for n points.
func neighborsMode(mode string, n int) string {
	if mode == "auto" {
		if n <= AutoExactMaxN {
			return "exact"
		}
		return "approx"
	}
	return mode
}

// searchNeighbors builds the shared neighbour lists with the plan's search.
// Both searches return rows sorted by distance, so the lists for a smaller
// perplexity are the first columns of each row (tsne.Affinities reads only those).
func searchNeighbors(mode string, x []float64, n, d, k, threads int) (*tsne.Neighbors, error) {
	if mode == "approx" {
		return tsne.ApproxNeighbors(x, n, d, k, neighborSeed, threads)
	}
	return tsne.ExactNeighbors(x, n, d, k, threads)
}
