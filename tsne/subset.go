package tsne

import "plumb/internal/par"

// ExactNeighborsOf returns the k nearest neighbours among all n points of x
// (the point itself excluded) of each point listed in queries, in the order
// of queries: row q of the result belongs to point queries[q]. Distances,
// order and ties are those of ExactNeighbors (the same distance kernel,
// ties broken by the smaller index), so each row equals the matching row of
// ExactNeighbors(x, n, d, k, threads); the cost is O(len(queries)·n·d)
// instead of a search for every point. It is for the few points whose
// neighbours cannot be derived from an earlier, larger search.
//
// Errors are those of ExactNeighbors; a query outside 0..n−1 panics.
func ExactNeighborsOf(x []float64, n, d, k int, queries []int32, threads int) (*Neighbors, error) {
	if err := nbCheckInput(x, n, d, k); err != nil {
		return nil, err
	}
	m := len(queries)
	nb := &Neighbors{N: m, K: k, Index: make([]int32, m*k), Dist: make([]float64, m*k)}
	if m == 0 {
		return nb, nil
	}
	heaps := make([]*nbHeap, par.Workers(m, nbChunk, threads))
	rows := make([][]float64, len(heaps))
	par.Chunks(m, nbChunk, threads, func(w, lo, hi int) {
		h := heaps[w]
		if h == nil {
			h = newNBHeap(k)
			heaps[w] = h
			rows[w] = make([]float64, n)
		}
		row := rows[w]
		for q := lo; q < hi; q++ {
			i := int(queries[q])
			if i < 0 || i >= n {
				panic("tsne: ExactNeighborsOf query out of range")
			}
			sqDistRow(x[i*d:(i+1)*d], x, row)
			for j, s := range row {
				if j != i && s <= h.bound() {
					h.push(s, int32(j))
				}
			}
			h.drain(nb.Index[q*k:(q+1)*k], nb.Dist[q*k:(q+1)*k])
		}
	})
	return nb, nil
}
