package tsne

// LocalityMinN is the smallest n for which Embed renumbers the points for
// memory locality (LocalityOrder) before computing P. Below it the layout
// (16 bytes a point) fits in a core's L2 cache, whatever the numbering,
// and results stay as they were. Above it the attraction, which reads the
// layout at the columns of P, waits on cache misses unless neighbours are
// numbered near each other: at 1M points in input order it took 9 ns per
// entry of P, 44% of a run's CPU time (profile of the 1M benchmark row).
const LocalityMinN = 50000

// localityMinN is LocalityMinN, lowered by tests.
var localityMinN = LocalityMinN

// LocalityOrder returns a renumbering of the points that puts the points of
// each neighbour list near each other: the breadth-first order of the
// neighbour graph (Cuthill & McKee, "Reducing the bandwidth of sparse
// symmetric matrices", ACM 1969, without their degree ordering), each
// point's neighbours visited in list order (nearest first), restarted at
// the lowest-numbered unvisited point. order[r] is the original index of
// the point numbered r. It depends only on nb. Cost O(N·K) time, 5·N bytes.
func LocalityOrder(nb *Neighbors) []int32 {
	n, k := nb.N, nb.K
	order := make([]int32, 0, n)
	seen := make([]bool, n)
	for s := 0; s < n; s++ {
		if seen[s] {
			continue
		}
		seen[s] = true
		order = append(order, int32(s))
		for h := len(order) - 1; h < len(order); h++ {
			i := int(order[h])
			for _, j := range nb.Index[i*k : (i+1)*k] {
				if !seen[j] {
					seen[j] = true
					order = append(order, j)
				}
			}
		}
	}
	return order
}

// Permute returns the neighbour lists of the points renumbered by order
// (as from LocalityOrder: order[r] is the original index of new point r):
// row r is the list of point order[r] with every index renumbered, in the
// same order. Ties in distance therefore stay broken by the original
// index, so that a prefix of a row (a smaller perplexity's neighbours)
// holds the same points as before the renumbering. It panics if order is
// not a permutation of [0, N).
func (nb *Neighbors) Permute(order []int32) *Neighbors {
	n, k := nb.N, nb.K
	inv := inversePerm(order, n)
	out := &Neighbors{N: n, K: k, Index: make([]int32, n*k), Dist: make([]float64, n*k)}
	nbParallel(n, 1024, 0, func(lo, hi, _ int) {
		for r := lo; r < hi; r++ {
			o := int(order[r])
			idx, dis := out.Index[r*k:(r+1)*k], out.Dist[r*k:(r+1)*k]
			for e, j := range nb.Index[o*k : (o+1)*k] {
				idx[e] = inv[j]
			}
			copy(dis, nb.Dist[o*k:(o+1)*k])
		}
	})
	return out
}

// inversePerm returns inv with inv[order[r]] = r, panicking if order is
// not a permutation of [0, n).
func inversePerm(order []int32, n int) []int32 {
	if len(order) != n {
		panic("tsne: permutation length mismatch")
	}
	inv := make([]int32, n)
	for i := range inv {
		inv[i] = -1
	}
	for r, o := range order {
		if o < 0 || int(o) >= n || inv[o] >= 0 {
			panic("tsne: not a permutation")
		}
		inv[o] = int32(r)
	}
	return inv
}

// PermuteLayout returns the layout y (2 values a point) renumbered by
// order: point r of the result is point order[r] of y.
func PermuteLayout(y []float64, order []int32) []float64 {
	if len(y) != 2*len(order) {
		panic("tsne: layout and permutation sizes differ")
	}
	out := make([]float64, len(y))
	for r, o := range order {
		out[2*r], out[2*r+1] = y[2*o], y[2*o+1]
	}
	return out
}

// UnpermuteLayout undoes PermuteLayout: point order[r] of the result is
// point r of y.
func UnpermuteLayout(y []float64, order []int32) []float64 {
	if len(y) != 2*len(order) {
		panic("tsne: layout and permutation sizes differ")
	}
	out := make([]float64, len(y))
	for r, o := range order {
		out[2*o], out[2*o+1] = y[2*r], y[2*r+1]
	}
	return out
}
