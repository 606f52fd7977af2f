package tsne

import (
	"math"
	"math/rand/v2"

	"plumb/internal/par"
)

// vpLeafSize is the largest subtree stored as a flat bucket and scanned
// linearly (one sqDistRow call over its contiguous rows). 16, 32 and 64
// were within 15% of each other at n = 2000 and 10000 (k = 90, 50-d
// mixture; BenchmarkExactNeighbors); 32 is the middle.
const vpLeafSize = 32

// vpNode is one node of a vantage-point tree. The subtree owns
// items[lo:hi]. An internal node's vantage point is items[lo]; its inner
// child holds the points nearer to it than the median distance and its
// outer child the points at the median distance or beyond (points at
// exactly the median may fall on either side).
type vpNode struct {
	lo, hi       int32
	inner, outer int32 // child node indices; -1 for a leaf bucket
	minIdx       int32 // smallest point index in the subtree
	// The inner child's distances to the vantage point lie in
	// [inLo, inHi], the outer child's in [outLo, outHi] (inHi ≤ outLo).
	inLo, inHi, outLo, outHi float64
}

// vpTree is a vantage-point tree over the rows of x under the Euclidean
// distance (Yianilos 1993). Each internal node splits its points at the
// median distance to a vantage point chosen at random with a fixed seed,
// so the tree, and the cost of a search, are reproducible; the search
// result is exact and would not depend on the choice anyway.
type vpTree struct {
	x     []float64
	d     int
	items []int32
	nodes []vpNode
	// xs holds the rows of x in tree order (row s is point items[s]), so
	// that a leaf bucket is one contiguous block scanned by sqDistRow.
	xs []float64
}

// newVPTree builds the tree in O(n log n · d) time and O(n) space.
func newVPTree(x []float64, n, d int) *vpTree {
	t := &vpTree{x: x, d: d, items: make([]int32, n), nodes: make([]vpNode, 0, 2*n/vpLeafSize+1)}
	for i := range t.items {
		t.items[i] = int32(i)
	}
	dist := make([]float64, n)
	// Fixed stream: the tree's shape is part of the algorithm, not of any
	// user-seeded randomness.
	rng := rand.New(rand.NewPCG(0x76702d74, 0x72656521))
	t.build(0, n, dist, rng)
	t.xs = make([]float64, n*d)
	for s, p := range t.items {
		copy(t.xs[s*d:(s+1)*d], t.row(p))
	}
	return t
}

func (t *vpTree) row(i int32) []float64 { return t.x[int(i)*t.d : int(i+1)*t.d] }

func (t *vpTree) build(lo, hi int, dist []float64, rng *rand.Rand) int32 {
	id := int32(len(t.nodes))
	t.nodes = append(t.nodes, vpNode{lo: int32(lo), hi: int32(hi), inner: -1, outer: -1})
	minIdx := t.items[lo]
	for _, p := range t.items[lo+1 : hi] {
		minIdx = min(minIdx, p)
	}
	t.nodes[id].minIdx = minIdx
	if hi-lo <= vpLeafSize {
		return id
	}
	r := lo + rng.IntN(hi-lo)
	t.items[lo], t.items[r] = t.items[r], t.items[lo]
	xv := t.row(t.items[lo])
	for s := lo + 1; s < hi; s++ {
		dist[s] = math.Sqrt(nbSqDist(xv, t.row(t.items[s]), math.Inf(1)))
	}
	m := lo + 1 + (hi-lo-1)/2
	vpSelect(dist, t.items, lo+1, hi, m, rng)
	nd := &t.nodes[id]
	nd.inLo, nd.inHi = vpRange(dist[lo+1 : m])
	nd.outLo, nd.outHi = vpRange(dist[m:hi])
	inner := t.build(lo+1, m, dist, rng) // may grow t.nodes: nd is stale below
	outer := t.build(m, hi, dist, rng)
	t.nodes[id].inner, t.nodes[id].outer = inner, outer
	return id
}

// vpRange returns the smallest and largest value of a non-empty slice.
func vpRange(v []float64) (lo, hi float64) {
	lo, hi = v[0], v[0]
	for _, x := range v[1:] {
		lo, hi = min(lo, x), max(hi, x)
	}
	return lo, hi
}

// vpSelect reorders dist[a:b] (and items alongside) so that dist[m] is the
// value a sort would put there, smaller-or-equal values before it and
// greater-or-equal after (quickselect with a three-way partition, which
// stays linear when many distances are equal, as with duplicate points).
func vpSelect(dist []float64, items []int32, a, b, m int, rng *rand.Rand) {
	swap := func(i, j int) {
		dist[i], dist[j] = dist[j], dist[i]
		items[i], items[j] = items[j], items[i]
	}
	for b-a > 1 {
		pivot := dist[a+rng.IntN(b-a)]
		lt, i, gt := a, a, b
		for i < gt {
			switch {
			case dist[i] < pivot:
				swap(lt, i)
				lt++
				i++
			case dist[i] > pivot:
				gt--
				swap(i, gt)
			default:
				i++
			}
		}
		switch {
		case m < lt:
			b = lt
		case m >= gt:
			a = gt
		default:
			return
		}
	}
}

// vpSearch is one worker's state for k-nearest-neighbour queries.
type vpSearch struct {
	t    *vpTree
	h    *nbHeap
	q    []float64
	self int32
	leaf []float64 // distances to the points of one bucket
}

// query collects the k nearest neighbours of point self into the heap.
func (s *vpSearch) query(self int32) {
	s.self, s.q = self, s.t.row(self)
	s.visit(0)
}

func (s *vpSearch) visit(ni int32) {
	t := s.t
	nd := &t.nodes[ni]
	if nd.inner < 0 {
		// The whole bucket in one pass over its contiguous rows (full
		// sums, the same bits as nbSqDist), then the heap in item order.
		lo, hi := int(nd.lo), int(nd.hi)
		dist := s.leaf[:hi-lo]
		sqDistRow(s.q, t.xs[lo*t.d:hi*t.d], dist)
		for m, p := range t.items[lo:hi] {
			if p != s.self && dist[m] <= s.h.bound() {
				s.h.push(dist[m], p)
			}
		}
		return
	}
	v := t.items[nd.lo]
	sq := nbSqDist(s.q, t.row(v), math.Inf(1))
	if v != s.self && sq <= s.h.bound() {
		s.h.push(sq, v)
	}
	dv := math.Sqrt(sq)
	// Triangle inequality: a point p with d(p,v) in [lo, hi] has
	// d(q,p) ≥ max(lo − dv, dv − hi). Visit the likelier side first.
	inLB := max(nd.inLo-dv, dv-nd.inHi)
	outLB := max(nd.outLo-dv, dv-nd.outHi)
	slack := 1e-10 * (dv + nd.outHi)
	inner, outer := nd.inner, nd.outer
	if dv < nd.inHi {
		s.maybe(inner, inLB, slack)
		s.maybe(outer, outLB, slack)
	} else {
		s.maybe(outer, outLB, slack)
		s.maybe(inner, inLB, slack)
	}
}

// maybe visits subtree ni unless its lower bound lb on the distance to the
// query proves it holds no candidate ranking before the current worst kept
// one. slack absorbs rounding in the computed distances, so the pruning is
// conservative and the search exact. When the worst kept distance is 0
// only an exact tie with a smaller index could enter, which the subtree's
// smallest index rules out cheaply (this keeps masses of duplicate points
// from forcing a full scan).
func (s *vpSearch) maybe(ni int32, lb, slack float64) {
	h := s.h
	if len(h.sq) < h.k {
		s.visit(ni)
		return
	}
	if h.sq[0] == 0 {
		if lb <= slack && s.t.nodes[ni].minIdx < h.idx[0] {
			s.visit(ni)
		}
		return
	}
	if tau := math.Sqrt(h.sq[0]); lb <= tau+slack+1e-10*tau {
		s.visit(ni)
	}
}

// nbVPTree answers all queries with one tree, in parallel fixed chunks.
func nbVPTree(x []float64, n, d, k, threads int) *Neighbors {
	t := newVPTree(x, n, d)
	nb := &Neighbors{N: n, K: k, Index: make([]int32, n*k), Dist: make([]float64, n*k)}
	searches := make([]*vpSearch, par.Workers(n, nbChunk, threads))
	par.Chunks(n, nbChunk, threads, func(w, lo, hi int) {
		s := searches[w]
		if s == nil {
			s = &vpSearch{t: t, h: newNBHeap(k), leaf: make([]float64, vpLeafSize)}
			searches[w] = s
		}
		for i := lo; i < hi; i++ {
			s.query(int32(i))
			s.h.drain(nb.Index[i*k:(i+1)*k], nb.Dist[i*k:(i+1)*k])
		}
	})
	return nb
}
