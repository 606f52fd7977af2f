package tsne

import "plumb/internal/par"

// LocalityMinN is the smallest n for which Embed and sweeps renumber the
// points for memory locality (LocalityOrder) before computing P. The
// attraction reads the layout at the columns of P, so with neighbours
// numbered near each other those reads hit the cache. Measured on the
// 2-core development machine (one run each, same build): at 5,000 points
// (one thread) a run took 2.30 s instead of 2.64 s, at 20,000 (two
// threads) 6.2 s instead of 7.1 s; at 1,000,000 points in input order the
// attraction waited on cache misses (9 ns an entry of P, 44% of the CPU
// time). Below 2,000 points the exact gradient or a small tree dominates
// and results stay as they were.
const LocalityMinN = 2000

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

// Renumber renumbers the points of nb in place by order (as from
// LocalityOrder: order[r] is the original index of new point r): row r
// becomes the list of point order[r], with every index renumbered and the
// entries in the same order. Ties in distance therefore stay broken by the
// original index, so that a prefix of a row (a smaller perplexity's
// neighbours) holds the same points as before. The rows move along the
// cycles of the permutation, so besides 5·N bytes nothing is allocated. It
// panics if order is not a permutation of [0, N).
func (nb *Neighbors) Renumber(order []int32) {
	n, k := nb.N, nb.K
	inv := inversePerm(order, n)
	done := make([]bool, n)
	ti, td := make([]int32, k), make([]float64, k)
	for s := 0; s < n; s++ {
		if done[s] {
			continue
		}
		// Position cur receives the row of order[cur].
		copy(ti, nb.Index[s*k:(s+1)*k])
		copy(td, nb.Dist[s*k:(s+1)*k])
		cur := s
		for {
			done[cur] = true
			src := int(order[cur])
			if src == s {
				copy(nb.Index[cur*k:(cur+1)*k], ti)
				copy(nb.Dist[cur*k:(cur+1)*k], td)
				break
			}
			copy(nb.Index[cur*k:(cur+1)*k], nb.Index[src*k:(src+1)*k])
			copy(nb.Dist[cur*k:(cur+1)*k], nb.Dist[src*k:(src+1)*k])
			cur = src
		}
	}
	par.Chunks(n, 1024, 0, func(_, lo, hi int) {
		for e := lo * k; e < hi*k; e++ {
			nb.Index[e] = inv[nb.Index[e]]
		}
	})
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
	out := make([]float64, len(y))
	unpermuteInto(out, y, order)
	return out
}

// unpermuteInto writes UnpermuteLayout(y, order) into dst.
func unpermuteInto(dst, y []float64, order []int32) {
	if len(y) != 2*len(order) || len(dst) != len(y) {
		panic("tsne: layout and permutation sizes differ")
	}
	for r, o := range order {
		dst[2*o], dst[2*o+1] = y[2*r], y[2*r+1]
	}
}
