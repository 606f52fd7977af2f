package stability

import (
	"sort"

	"plumb/internal/par"
)

// This file holds the exact nearest-neighbour search used on maps: a 2-d
// k-d tree (Bentley 1975) whose queries return the k nearest other points
// sorted by ascending squared distance, ties broken by the smaller index, so
// results do not depend on the tree's shape or on thread count.
//
// The same tree counts, for continuity, how many points are nearer a query
// than each of several targets (countBefore).

const leafSize = 16

type kdNode struct {
	lo, hi      int32 // range in tree.idx
	left, right int32 // children, -1 for a leaf
	minX, maxX  float64
	minY, maxY  float64
}

type kdTree struct {
	y   []float64
	idx []int32
	// xy holds the points in tree order, xy[2m], xy[2m+1] = the
	// coordinates of point idx[m], so that a leaf reads contiguous memory.
	xy    []float64
	nodes []kdNode
}

func newKDTree(y []float64) *kdTree {
	n := len(y) / 2
	t := &kdTree{y: y, idx: make([]int32, n)}
	for i := range t.idx {
		t.idx[i] = int32(i)
	}
	t.nodes = make([]kdNode, 0, 2*n/leafSize+2)
	t.build(0, n)
	t.xy = make([]float64, 2*n)
	for m, p := range t.idx {
		t.xy[2*m], t.xy[2*m+1] = y[2*p], y[2*p+1]
	}
	return t
}

// sqDist is the squared map distance of (x, y) from (qx, qy): the one
// expression the neighbour searches and ranks compute map distances with,
// so that a tie compares equal wherever it is met.
func sqDist(x, y, qx, qy float64) float64 {
	dx, dy := x-qx, y-qy
	return dx*dx + dy*dy
}

func (t *kdTree) build(lo, hi int) int32 {
	nd := kdNode{lo: int32(lo), hi: int32(hi), left: -1, right: -1}
	nd.minX, nd.minY = t.y[2*t.idx[lo]], t.y[2*t.idx[lo]+1]
	nd.maxX, nd.maxY = nd.minX, nd.minY
	for _, p := range t.idx[lo:hi] {
		x, y := t.y[2*p], t.y[2*p+1]
		nd.minX, nd.maxX = min(nd.minX, x), max(nd.maxX, x)
		nd.minY, nd.maxY = min(nd.minY, y), max(nd.maxY, y)
	}
	id := int32(len(t.nodes))
	t.nodes = append(t.nodes, nd)
	if hi-lo <= leafSize || (nd.minX == nd.maxX && nd.minY == nd.maxY) {
		return id
	}
	dim := 0
	if nd.maxY-nd.minY > nd.maxX-nd.minX {
		dim = 1
	}
	seg := t.idx[lo:hi]
	sort.Slice(seg, func(a, b int) bool {
		va, vb := t.y[2*seg[a]+int32(dim)], t.y[2*seg[b]+int32(dim)]
		if va != vb {
			return va < vb
		}
		return seg[a] < seg[b]
	})
	mid := (lo + hi) / 2
	l := t.build(lo, mid)
	r := t.build(mid, hi)
	t.nodes[id].left, t.nodes[id].right = l, r
	return id
}

// nbHeap is a bounded max-heap of candidates ordered by (d2, index).
type nbHeap struct {
	d2  []float64
	ix  []int32
	cap int
}

func worse(d1 float64, i1 int32, d2 float64, i2 int32) bool {
	return d1 > d2 || (d1 == d2 && i1 > i2)
}

func (h *nbHeap) reset(k int) {
	h.cap = k
	h.d2 = h.d2[:0]
	h.ix = h.ix[:0]
}

func (h *nbHeap) full() bool { return len(h.d2) == h.cap }

// push offers a candidate; it is kept if the heap has room or it beats the
// current worst.
func (h *nbHeap) push(d float64, i int32) {
	if len(h.d2) < h.cap {
		h.d2 = append(h.d2, d)
		h.ix = append(h.ix, i)
		c := len(h.d2) - 1
		for c > 0 {
			p := (c - 1) / 2
			if !worse(h.d2[c], h.ix[c], h.d2[p], h.ix[p]) {
				break
			}
			h.d2[c], h.d2[p] = h.d2[p], h.d2[c]
			h.ix[c], h.ix[p] = h.ix[p], h.ix[c]
			c = p
		}
		return
	}
	if !worse(h.d2[0], h.ix[0], d, i) {
		return
	}
	h.d2[0], h.ix[0] = d, i
	c, n := 0, len(h.d2)
	for {
		l := 2*c + 1
		if l >= n {
			break
		}
		w := l
		if r := l + 1; r < n && worse(h.d2[r], h.ix[r], h.d2[l], h.ix[l]) {
			w = r
		}
		if !worse(h.d2[w], h.ix[w], h.d2[c], h.ix[c]) {
			break
		}
		h.d2[c], h.d2[w] = h.d2[w], h.d2[c]
		h.ix[c], h.ix[w] = h.ix[w], h.ix[c]
		c = w
	}
}

// sorted writes the heap's indices into dst in ascending (d2, index) order
// by heapsort, destroying the heap.
func (h *nbHeap) sorted(dst []int32) {
	for n := len(h.d2); n > 1; n-- {
		h.d2[0], h.d2[n-1] = h.d2[n-1], h.d2[0]
		h.ix[0], h.ix[n-1] = h.ix[n-1], h.ix[0]
		c := 0
		for {
			l := 2*c + 1
			if l >= n-1 {
				break
			}
			w := l
			if r := l + 1; r < n-1 && worse(h.d2[r], h.ix[r], h.d2[l], h.ix[l]) {
				w = r
			}
			if !worse(h.d2[w], h.ix[w], h.d2[c], h.ix[c]) {
				break
			}
			h.d2[c], h.d2[w] = h.d2[w], h.d2[c]
			h.ix[c], h.ix[w] = h.ix[w], h.ix[c]
			c = w
		}
	}
	copy(dst, h.ix)
}

// query finds the k nearest points to point q (q itself excluded) and
// writes them into dst in ascending (distance, index) order.
func (t *kdTree) query(q int, k int, h *nbHeap, dst []int32) {
	t.nearest(t.y[2*q], t.y[2*q+1], int32(q), h, dst[:k])
}

// nearest writes into dst the len(dst) points nearest to (qx, qy), point
// skip excluded (−1: none), in ascending (distance, index) order.
func (t *kdTree) nearest(qx, qy float64, skip int32, h *nbHeap, dst []int32) {
	h.reset(len(dst))
	var stackBuf [64]int32
	stack := append(stackBuf[:0], 0)
	for len(stack) > 0 {
		id := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		nd := &t.nodes[id]
		if h.full() && boxDist2(nd, qx, qy) > h.d2[0] {
			continue
		}
		if nd.left < 0 {
			xy := t.xy[2*nd.lo : 2*nd.hi]
			for m, p := range t.idx[nd.lo:nd.hi] {
				if p == skip {
					continue
				}
				v := sqDist(xy[2*m], xy[2*m+1], qx, qy)
				if h.full() && !worse(h.d2[0], h.ix[0], v, p) {
					continue
				}
				h.push(v, p)
			}
			continue
		}
		a, b := nd.left, nd.right
		if boxDist2(&t.nodes[b], qx, qy) < boxDist2(&t.nodes[a], qx, qy) {
			a, b = b, a
		}
		// Push the farther child first so the nearer one is visited next.
		stack = append(stack, b, a)
	}
	h.sorted(dst)
}

func boxDist2(nd *kdNode, qx, qy float64) float64 {
	dx := max(nd.minX-qx, 0, qx-nd.maxX)
	dy := max(nd.minY-qy, 0, qy-nd.maxY)
	return dx*dx + dy*dy
}

// boxMaxDist2 is the squared distance from (qx, qy) to the farthest corner
// of nd's box. Rounding is monotone, so for every point p in the box
// boxDist2 ≤ sqDist(p) ≤ boxMaxDist2 holds for the rounded values too:
// |fl(x−qx)| lies between the rounded differences of the box's sides.
func boxMaxDist2(nd *kdNode, qx, qy float64) float64 {
	dx := max(qx-nd.minX, nd.maxX-qx)
	dy := max(qy-nd.minY, nd.maxY-qy)
	return dx*dx + dy*dy
}

// rankFrame is a node of the tree still to visit with the range [a, b) of
// targets whose radius cuts its box.
type rankFrame struct{ node, a, b int32 }

// countBefore counts, for every target t in [first, len(td)), the points l
// of the tree with (sqDist(l), l) < (td[t], tg[t]) — the query point
// itself included — and writes the count into cnt[t]. The targets must be
// sorted by (td, tg). One walk serves all targets: a box entirely inside a
// target's radius adds its point count to that target and every larger
// one (a difference array, diff[t] − diff[end]), a box entirely outside is
// skipped, and only boxes some radius cuts are opened; in a leaf each
// point is placed among the targets still open there. Cost about the
// number of points near the targets' circles, O(N) at worst. diff needs
// len(td)+1 entries and stack is reused scratch.
func (t *kdTree) countBefore(qx, qy float64, td []float64, tg []int32, first int, cnt, diff []int64, stack *[]rankFrame) {
	k := len(td)
	clear(diff[first : k+1])
	st := append((*stack)[:0], rankFrame{0, int32(first), int32(k)})
	for len(st) > 0 {
		f := st[len(st)-1]
		st = st[:len(st)-1]
		nd := &t.nodes[f.node]
		a, b := int(f.a), int(f.b)
		// Targets closer than the whole box: none of its points precede
		// them.
		near := boxDist2(nd, qx, qy)
		for a < b && td[a] < near {
			a++
		}
		if a == b {
			continue
		}
		// Targets farther than the whole box: all its points precede them.
		far := boxMaxDist2(nd, qx, qy)
		s := b
		for s > a && td[s-1] > far {
			s--
		}
		if s < b {
			c := int64(nd.hi - nd.lo)
			diff[s] += c
			diff[b] -= c
		}
		if a == s {
			continue
		}
		if nd.left >= 0 {
			st = append(st, rankFrame{nd.left, int32(a), int32(s)}, rankFrame{nd.right, int32(a), int32(s)})
			continue
		}
		lastD, lastI := td[s-1], tg[s-1]
		xy := t.xy[2*nd.lo : 2*nd.hi]
		var placed int64
		for m, p := range t.idx[nd.lo:nd.hi] {
			v := sqDist(xy[2*m], xy[2*m+1], qx, qy)
			if v > lastD || (v == lastD && p >= lastI) {
				continue // after every open target
			}
			// First open target after (v, p).
			u := a
			for td[u] < v || (td[u] == v && tg[u] <= p) {
				u++
			}
			diff[u]++
			placed++
		}
		diff[s] -= placed
	}
	*stack = st
	var c int64
	for s := first; s < k; s++ {
		c += diff[s]
		cnt[s] = c
	}
}

// mapNeighbors returns the k nearest other points of each query point
// (all points if queries is nil) in the 2-d layout y, row m for query m,
// sorted by ascending distance with ties broken by the smaller index.
func mapNeighbors(y []float64, k int, queries []int, threads int) []int32 {
	t := newKDTree(y)
	nq := len(y) / 2
	if queries != nil {
		nq = len(queries)
	}
	out := make([]int32, nq*k)
	par.Chunks(nq, chunk, threads, func(_, lo, hi int) {
		var h nbHeap
		for m := lo; m < hi; m++ {
			q := m
			if queries != nil {
				q = queries[m]
			}
			t.query(q, k, &h, out[m*k:(m+1)*k])
		}
	})
	return out
}

// chunk is the fixed number of items each parallel task handles; work is
// split the same way whatever the thread count.
const chunk = 32
