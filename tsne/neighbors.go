package tsne

import (
	"fmt"
	"math"

	"plumb/internal/par"
)

// BruteForceMaxN is the largest n for which ExactNeighbors compares every
// pair directly; above it a vantage-point tree is built. Brute force costs
// n²·d multiply-adds with no set-up and does not depend on the data's
// intrinsic dimension; the tree pays off once n reaches a thousand or so
// on data with structure. Measured with k = 90 on this project's 2-core
// machine with the AVX2 distance kernels and 32-point buckets (2026-12-02):
// on the digits (n = 1797, d = 64) the two took 37 and 36 ms; on a
// 50-dimensional mixture of 10 Gaussians the tree took 0.55× the
// brute-force time at n = 2000 (24 and 46 ms) and 0.3× at n = 10000.
const BruteForceMaxN = 1000

// nbChunk is the number of query points a worker takes at a time. The
// chunks are fixed and each query writes only its own row, so the result
// does not depend on the number of threads.
const nbChunk = 64

// ExactNeighbors returns the k nearest neighbours of every point of x (n
// points of d features, flat row-major, length n·d) under the Euclidean
// distance, the point itself excluded:
//
//	d_ij = ‖x_i − x_j‖ = sqrt(Σ_c (x_ic − x_jc)²)
//
// Row i lists neighbours by ascending distance, ties broken by the smaller
// index, so the result is fully determined by x. Duplicate points are
// allowed and appear as neighbours at distance 0.
//
// For n ≤ BruteForceMaxN every pair is compared (O(n²·d)); beyond, a
// vantage-point tree (Yianilos 1993) is built in O(n log n · d) and each
// query descends it with triangle-inequality pruning, typically far fewer
// than n distance evaluations when the data's intrinsic dimension is low
// (in high intrinsic dimension it degrades towards brute force). Both paths
// compute every distance with the same summation order and return identical
// results.
//
// Queries run in parallel on threads goroutines (threads < 1 means
// runtime.GOMAXPROCS(0)) in fixed chunks; the output is bit-identical for
// any thread count.
//
// Errors: len(x) ≠ n·d, n < 2, d < 1, k < 1, k ≥ n, n ≥ 2³¹, or a NaN or
// infinite feature value (reported with its row and column).
func ExactNeighbors(x []float64, n, d, k, threads int) (*Neighbors, error) {
	if err := nbCheckInput(x, n, d, k); err != nil {
		return nil, err
	}
	if n <= BruteForceMaxN {
		return nbBruteForce(x, n, d, k, threads), nil
	}
	return nbVPTree(x, n, d, k, threads), nil
}

// nbCheckInput validates the arguments of ExactNeighbors.
func nbCheckInput(x []float64, n, d, k int) error {
	switch {
	case n < 2:
		return fmt.Errorf("tsne: neighbours need at least 2 points, got n = %d", n)
	case d < 1:
		return fmt.Errorf("tsne: neighbours need at least 1 feature, got d = %d", d)
	case n > math.MaxInt32:
		return fmt.Errorf("tsne: too many points for 32-bit neighbour indices: n = %d", n)
	case len(x) != n*d:
		return fmt.Errorf("tsne: features have length %d, want n·d = %d·%d = %d", len(x), n, d, n*d)
	case k < 1:
		return fmt.Errorf("tsne: neighbour count k = %d, want at least 1", k)
	case k >= n:
		return fmt.Errorf("tsne: neighbour count k = %d, want less than n = %d", k, n)
	}
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("tsne: feature row %d, column %d is %v", i/d, i%d, v)
		}
	}
	return nil
}

// NeighborCount is the number of neighbours t-SNE uses for a perplexity:
//
//	k = min(n − 1, ⌊3·perplexity⌋)
//
// following van der Maaten (2014), who keeps the ⌊3u⌋ nearest neighbours
// for perplexity u. It returns 0 when n < 2 or perplexity is not positive
// (or is NaN). Note that scikit-learn 1.2.1 uses int(3·perplexity + 1), one
// neighbour more.
func NeighborCount(n int, perplexity float64) int {
	if n < 2 || !(perplexity > 0) {
		return 0
	}
	k := n - 1
	if t := math.Floor(3 * perplexity); t < float64(k) {
		k = int(t)
	}
	return k
}

// Truncate returns the first k neighbours of every row (the k nearest) as a
// new Neighbors sharing no memory with nb. It panics with
// "tsne: Truncate k out of range" unless 1 ≤ k ≤ nb.K.
func (nb *Neighbors) Truncate(k int) *Neighbors {
	if k < 1 || k > nb.K {
		panic("tsne: Truncate k out of range")
	}
	out := &Neighbors{N: nb.N, K: k, Index: make([]int32, nb.N*k), Dist: make([]float64, nb.N*k)}
	for i := 0; i < nb.N; i++ {
		copy(out.Index[i*k:(i+1)*k], nb.Index[i*nb.K:i*nb.K+k])
		copy(out.Dist[i*k:(i+1)*k], nb.Dist[i*nb.K:i*nb.K+k])
	}
	return out
}

// nbSqDist returns the squared Euclidean distance between a and b
// (len(b) ≥ len(a)), or some partial sum greater than bound as soon as the
// running sum exceeds bound. Every distance in this file goes through this
// function, so all paths see bit-identical distances. Four accumulators
// combined as (s0+s1)+(s2+s3) keep the sum monotone in the terms, so a
// partial sum above bound proves the full sum is above bound too.
func nbSqDist(a, b []float64, bound float64) float64 {
	b = b[:len(a)]
	m := len(a) &^ 7
	var s0, s1, s2, s3 float64
	if m > 0 {
		var over bool
		if useAVX2 {
			s0, s1, s2, s3, over = sqDist8AVX2(a[:m], b[:m], bound)
		} else {
			s0, s1, s2, s3, over = sqDist8Generic(a[:m], b[:m], bound)
		}
		if over {
			return (s0 + s1) + (s2 + s3)
		}
	}
	for j := m; j < len(a); j++ {
		t := a[j] - b[j]
		s0 += t * t
	}
	return (s0 + s1) + (s2 + s3)
}

// sqDist8Generic is nbSqDist's loop over whole blocks of eight features
// (len(a) = len(b), a multiple of 8): lane l sums the squared differences
// of features l and l + 4 of each block, and after each block the sum
// (s0 + s1) + (s2 + s3) is compared with bound. It returns the lane sums
// and whether they passed bound (then the remaining blocks were skipped).
// sqDist8AVX2 does the same operations four at a time.
func sqDist8Generic(a, b []float64, bound float64) (s0, s1, s2, s3 float64, over bool) {
	b = b[:len(a)]
	for j := 0; j+8 <= len(a); j += 8 {
		t0 := a[j] - b[j]
		t1 := a[j+1] - b[j+1]
		t2 := a[j+2] - b[j+2]
		t3 := a[j+3] - b[j+3]
		s0 += t0 * t0
		s1 += t1 * t1
		s2 += t2 * t2
		s3 += t3 * t3
		t0 = a[j+4] - b[j+4]
		t1 = a[j+5] - b[j+5]
		t2 = a[j+6] - b[j+6]
		t3 = a[j+7] - b[j+7]
		s0 += t0 * t0
		s1 += t1 * t1
		s2 += t2 * t2
		s3 += t3 * t3
		if (s0+s1)+(s2+s3) > bound {
			return s0, s1, s2, s3, true
		}
	}
	return s0, s1, s2, s3, false
}

// nbHeap is a bounded max-heap of candidate neighbours keyed by (squared
// distance, index): the root is the worst candidate kept.
type nbHeap struct {
	k   int
	sq  []float64
	idx []int32
}

func newNBHeap(k int) *nbHeap {
	return &nbHeap{k: k, sq: make([]float64, 0, k), idx: make([]int32, 0, k)}
}

func (h *nbHeap) reset() { h.sq, h.idx = h.sq[:0], h.idx[:0] }

// after reports whether entry a is farther than entry b (a ranks after b).
func (h *nbHeap) after(a, b int) bool {
	return h.sq[a] > h.sq[b] || (h.sq[a] == h.sq[b] && h.idx[a] > h.idx[b])
}

func (h *nbHeap) swap(a, b int) {
	h.sq[a], h.sq[b] = h.sq[b], h.sq[a]
	h.idx[a], h.idx[b] = h.idx[b], h.idx[a]
}

// bound is the squared distance a candidate must not exceed to enter.
func (h *nbHeap) bound() float64 {
	if len(h.sq) < h.k {
		return math.Inf(1)
	}
	return h.sq[0]
}

// push offers a candidate; it is kept if it ranks before the worst kept
// one (smaller distance, or equal distance and smaller index).
func (h *nbHeap) push(sq float64, idx int32) {
	if len(h.sq) < h.k {
		h.sq = append(h.sq, sq)
		h.idx = append(h.idx, idx)
		for c := len(h.sq) - 1; c > 0; {
			p := (c - 1) / 2
			if !h.after(c, p) {
				break
			}
			h.swap(c, p)
			c = p
		}
		return
	}
	if sq > h.sq[0] || (sq == h.sq[0] && idx > h.idx[0]) {
		return
	}
	h.sq[0], h.idx[0] = sq, idx
	h.down(0, len(h.sq))
}

func (h *nbHeap) down(p, n int) {
	for {
		c := 2*p + 1
		if c >= n {
			return
		}
		if c+1 < n && h.after(c+1, c) {
			c++
		}
		if !h.after(c, p) {
			return
		}
		h.swap(c, p)
		p = c
	}
}

// drain writes the kept candidates in ascending order as (index, Euclidean
// distance) and empties the heap.
func (h *nbHeap) drain(index []int32, dist []float64) {
	for n := len(h.sq); n > 0; n-- {
		index[n-1], dist[n-1] = h.idx[0], math.Sqrt(h.sq[0])
		h.swap(0, n-1)
		h.down(0, n-1)
	}
	h.reset()
}

// nbBruteForce compares every query with every other point.
func nbBruteForce(x []float64, n, d, k, threads int) *Neighbors {
	nb := &Neighbors{N: n, K: k, Index: make([]int32, n*k), Dist: make([]float64, n*k)}
	heaps := make([]*nbHeap, par.Workers(n, nbChunk, threads))
	rows := make([][]float64, len(heaps))
	par.Chunks(n, nbChunk, threads, func(w, lo, hi int) {
		h := heaps[w]
		if h == nil {
			h = newNBHeap(k)
			heaps[w] = h
			rows[w] = make([]float64, n)
		}
		row := rows[w]
		for i := lo; i < hi; i++ {
			// Every distance in full (sqDistRow: the bits of nbSqDist's
			// full sum), then the k smallest.
			sqDistRow(x[i*d:(i+1)*d], x, row)
			for j, s := range row {
				if j != i && s <= h.bound() {
					h.push(s, int32(j))
				}
			}
			h.drain(nb.Index[i*k:(i+1)*k], nb.Dist[i*k:(i+1)*k])
		}
	})
	return nb
}
