package tsne

import (
	"math"
	"runtime"
	"slices"

	"plumb/internal/par"
)

// ApproxMinN is the smallest n for which ApproxNeighbors runs NN-descent;
// below it the exact search is about as fast and is used instead.
const ApproxMinN = 2000

// ApproxNeighbors returns approximate k nearest neighbours of every point
// of x (n points of d features, flat row-major) under the Euclidean
// distance, the point itself excluded, in the same form as ExactNeighbors:
// rows sorted by ascending exact (float64) distance, ties by the smaller
// index.
//
// The search is NN-descent (Dong, Charikar & Li 2011) started from a
// forest of random-projection trees (Dasgupta & Freund 2008): each point
// first takes its nearest points among the members of its leaf in every
// tree, then repeatedly tries the neighbours of its neighbours (forward and
// reverse, with a sampled candidate list of at most min(k, 40) "new" and
// as many "old" entries per point per round, as in the paper's local join)
// until fewer than 1% of the n·k list entries change in a round (the
// paper's early termination by update rate, δ = 0.01) or 12 rounds have
// run. The candidate search works on a float32 copy of x (half
// the memory traffic, eight features per AVX2 instruction); the distances
// of the final lists are recomputed in float64 from x, so every reported
// distance is exact and only membership is approximate.
//
// Memory is O(n·k + n·d); nothing is n×n. Time is about O(n·k·c·d) per
// round for c candidates, near-linear in n in practice.
//
// The result depends only on x, k and seed: the trees use their own
// seeded streams, candidate sampling uses a hash of (seed, round, i, j),
// and the rounds are split into fixed batches whose updates are applied
// per destination point in a fixed order, so any thread count gives the
// same bits (threads < 1 means runtime.GOMAXPROCS(0)).
//
// For n < ApproxMinN, or k ≥ n/4, the exact search (ExactNeighbors) is
// returned instead. Errors as for ExactNeighbors.
//
// References:
//
//	W. Dong, M. Charikar, K. Li, "Efficient k-nearest neighbor graph
//	construction for generic similarity measures", WWW 2011.
//	S. Dasgupta, Y. Freund, "Random projection trees and low dimensional
//	manifolds", STOC 2008.
func ApproxNeighbors(x []float64, n, d, k int, seed uint64, threads int) (*Neighbors, error) {
	if err := nbCheckInput(x, n, d, k); err != nil {
		return nil, err
	}
	if n < ApproxMinN || 4*k >= n {
		return ExactNeighbors(x, n, d, k, threads)
	}
	if threads < 1 {
		threads = runtime.GOMAXPROCS(0)
	}
	s := newNNDState(n, d, k, seed, threads)
	s.initFromForest(x)
	for round := 0; round < nndMaxRounds; round++ {
		changes := s.round(round)
		if nndTrace != nil {
			nndTrace(round, changes)
		}
		if nndRoundHook != nil {
			nndRoundHook(s, round, changes)
		}
		if changes < int64(nndDelta*float64(n*k)) {
			break
		}
	}
	s.release()
	return s.output(x), nil
}

// release drops the workspaces the output does not need (candidate lists,
// priorities, update buffers, list distances and flags: about 1.3 GB at
// n = 1,000,000, k = 90), so they can be collected before the output is
// allocated.
func (s *nndState) release() {
	s.newC, s.oldC, s.newPr, s.oldPr, s.newCnt, s.oldCnt = nil, nil, nil, nil, nil, nil
	s.upd, s.dis, s.isNew, s.x = nil, nil, nil, nil
}

// nndTrace, when set (by tests), is told each round's change count.
var nndTrace func(round int, changes int64)

// nndDelta is the stopping rate: the rounds end when fewer than
// nndDelta·n·k list entries change in one (Dong, Charikar & Li 2011, δ;
// the recall by round behind 0.01 is in internal/scripts/bench/README.md).
var nndDelta = 0.01

// nndRoundHook, when set (by measurement tests), sees the state after each
// round.
var nndRoundHook func(s *nndState, round int, changes int64)

const (
	nndMaxRounds = 12

	nndTask    = 256  // points per task
	nndBatch   = 4096 // points per local-join batch (updates applied after each)
	nndBuckets = 16   // destination ranges for applying updates
)

// nndState is the working state of one NN-descent run. Each point's list
// is a max-heap of (distance, index) of size k with the largest at the top.
type nndState struct {
	n, d, k, threads int
	seed             uint64
	x                []float32 // rows in the order of the first tree's leaves
	order            []int32   // order[i] is the input row of internal point i
	idx              []int32
	dis              []float32
	isNew            []bool
	// Candidate lists per point, maxCand slots each, bounded max-heaps on
	// a hash priority.
	maxCand        int
	newC, oldC     []int32
	newPr, oldPr   []uint64
	newCnt, oldCnt []int32
	// Update buffers per join task and destination bucket.
	upd [][nndBuckets][]nndUpdate
}

type nndUpdate struct {
	to, from int32
	d        float32
}

func newNNDState(n, d, k int, seed uint64, threads int) *nndState {
	s := &nndState{n: n, d: d, k: k, threads: threads, seed: seed}
	s.idx = make([]int32, n*k)
	s.dis = make([]float32, n*k)
	s.isNew = make([]bool, n*k)
	for i := range s.idx {
		s.idx[i] = -1
		s.dis[i] = float32(math.Inf(1))
	}
	s.maxCand = min(k, 40)
	s.newC = make([]int32, n*s.maxCand)
	s.oldC = make([]int32, n*s.maxCand)
	s.newPr = make([]uint64, n*s.maxCand)
	s.oldPr = make([]uint64, n*s.maxCand)
	s.newCnt = make([]int32, n)
	s.oldCnt = make([]int32, n)
	s.upd = make([][nndBuckets][]nndUpdate, (nndBatch+nndTask-1)/nndTask)
	return s
}

// nndHash mixes its arguments with the SplitMix64 finaliser (Steele, Lea &
// Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014).
func nndHash(a, b, c, e uint64) uint64 {
	z := a*0x9e3779b97f4a7c15 ^ b*0xbf58476d1ce4e5b9 ^ c*0x94d049bb133111eb ^ e*0xd6e8feb86659fd93
	z ^= z >> 30
	z *= 0xbf58476d1ce4e5b9
	z ^= z >> 27
	z *= 0x94d049bb133111eb
	z ^= z >> 31
	return z
}

// nndDist is the squared Euclidean distance of two float32 rows.
func nndDist(a, b []float32) float32 {
	b = b[:len(a)]
	if useAVX2 {
		return sqDist32AVX2(a, b)
	}
	return sqDist32Generic(a, b)
}

// sqDist32Generic is the Go twin of sqDist32AVX2: eight lanes over whole
// blocks of eight features, the remaining features added to lane 0, and
// the reduction ((s0 + s4) + (s2 + s6)) + ((s1 + s5) + (s3 + s7)).
func sqDist32Generic(a, b []float32) float32 {
	b = b[:len(a)]
	var s0, s1, s2, s3, s4, s5, s6, s7 float32
	i := 0
	for ; i+8 <= len(a); i += 8 {
		p, q := a[i:i+8:i+8], b[i:i+8:i+8]
		d0, d1, d2, d3 := p[0]-q[0], p[1]-q[1], p[2]-q[2], p[3]-q[3]
		d4, d5, d6, d7 := p[4]-q[4], p[5]-q[5], p[6]-q[6], p[7]-q[7]
		s0 += d0 * d0
		s1 += d1 * d1
		s2 += d2 * d2
		s3 += d3 * d3
		s4 += d4 * d4
		s5 += d5 * d5
		s6 += d6 * d6
		s7 += d7 * d7
	}
	for ; i < len(a); i++ {
		d := a[i] - b[i]
		s0 += d * d
	}
	return ((s0 + s4) + (s2 + s6)) + ((s1 + s5) + (s3 + s7))
}

func (s *nndState) row(i int32) []float32 { return s.x[int(i)*s.d : int(i+1)*s.d] }

// push offers j at squared distance dd to point i's list and reports
// whether the list changed. Order is by (distance, index), a strict total
// order, so the final list does not depend on the order of offers.
func (s *nndState) push(i int, j int32, dd float32) bool {
	k := s.k
	base := i * k
	idx := s.idx[base : base+k : base+k]
	dis := s.dis[base : base+k : base+k]
	if dd > dis[0] || (dd == dis[0] && j >= idx[0]) {
		return false
	}
	for _, v := range idx {
		if v == j {
			return false
		}
	}
	flag := s.isNew[base : base+k : base+k]
	// Replace the top and sift down.
	p := 0
	for {
		c := 2*p + 1
		if c >= k {
			break
		}
		if c+1 < k && nndAbove(dis[c+1], idx[c+1], dis[c], idx[c]) {
			c++
		}
		if !nndAbove(dis[c], idx[c], dd, j) {
			break
		}
		dis[p], idx[p], flag[p] = dis[c], idx[c], flag[c]
		p = c
	}
	dis[p], idx[p], flag[p] = dd, j, true
	return true
}

// nndAbove reports whether (da, ia) comes after (db, ib) in the order by
// distance then index (empty slots, index −1 at +Inf, come last).
func nndAbove(da float32, ia int32, db float32, ib int32) bool {
	if da != db {
		return da > db
	}
	if ia < 0 || ib < 0 {
		return ia < 0 && ib >= 0
	}
	return ia > ib
}

// initFromForest builds a forest of random-projection trees, renumbers the
// points in the leaf order of the first tree (so that near points are near
// in memory), and fills every list from the leaves, topping up any short
// list with hashed random points.
func (s *nndState) initFromForest(x64 []float64) {
	n, k, d := s.n, s.k, s.d
	x := make([]float32, n*d)
	for i, v := range x64 {
		x[i] = float32(v)
	}
	ntrees := nndTrees(n)
	leafSize := max(k, 32)
	trees := make([]rptTree, ntrees)
	par.Each(ntrees, s.threads, func(t int) {
		trees[t] = rptBuild(x, n, d, leafSize, s.seed, t)
	})
	s.order = trees[0].perm
	inv := make([]int32, n)
	for i, o := range s.order {
		inv[o] = int32(i)
	}
	s.x = make([]float32, n*d)
	for i, o := range s.order {
		copy(s.x[i*d:(i+1)*d], x[int(o)*d:int(o+1)*d])
	}
	x = nil
	// Leaf by leaf, tree after tree: the leaves of one tree are disjoint,
	// so a task owns the lists of its leaf's members, and each pair's
	// distance is computed once from the members' rows gathered into one
	// buffer (at 1M points, fetching the rows point by point made the
	// start and the first round take 136 s; 72 s this way). The lists do not
	// depend on the order of the offers (push orders by distance, then
	// index), so they are the same as point by point.
	type leafBuf struct {
		ids  []int32
		rows []float32
	}
	bufs := make(chan *leafBuf, s.threads)
	for w := 0; w < s.threads; w++ {
		bufs <- &leafBuf{}
	}
	for _, tr := range trees {
		par.Each(len(tr.start)-1, s.threads, func(l int) {
			b := <-bufs
			defer func() { bufs <- b }()
			members := tr.perm[tr.start[l]:tr.start[l+1]]
			b.ids, b.rows = b.ids[:0], b.rows[:0]
			for _, jo := range members {
				j := inv[jo]
				b.ids = append(b.ids, j)
				b.rows = append(b.rows, s.row(j)...)
			}
			for a, i := range b.ids {
				xi := b.rows[a*d : (a+1)*d]
				for c := a + 1; c < len(b.ids); c++ {
					dd := nndDist(xi, b.rows[c*d:(c+1)*d])
					s.push(int(i), b.ids[c], dd)
					s.push(int(b.ids[c]), i, dd)
				}
			}
		})
	}
	par.Each((n+nndTask-1)/nndTask, s.threads, func(t int) {
		lo, hi := t*nndTask, min((t+1)*nndTask, n)
		for i := lo; i < hi; i++ {
			xi := s.row(int32(i))
			for c := uint64(0); s.idx[i*k] < 0; c++ {
				j := int32(nndHash(s.seed, uint64(i), c, 1) % uint64(n))
				if int(j) != i {
					s.push(i, j, nndDist(xi, s.row(j)))
				}
			}
		}
	})
}

// nndTrees is the number of random-projection trees for n points:
// 5 + ⌊n^¼ / 4⌋, capped at 12 (a smaller forest than in common practice,
// since NN-descent refines the start).
func nndTrees(n int) int {
	return min(12, 5+int(math.Pow(float64(n), 0.25)/4))
}

// candPush offers j with priority pr to a bounded candidate heap (largest
// priority on top) of point i.
func (s *nndState) candPush(c []int32, pr []uint64, cnt []int32, i int, j int32, p uint64) {
	m := s.maxCand
	base := i * m
	cc := c[base : base+m : base+m]
	pp := pr[base : base+m : base+m]
	nc := int(cnt[i])
	if nc == m && p >= pp[0] {
		return
	}
	for _, v := range cc[:nc] {
		if v == j {
			return
		}
	}
	if nc < m {
		// Sift up.
		q := nc
		for q > 0 {
			par := (q - 1) / 2
			if pp[par] >= p {
				break
			}
			cc[q], pp[q] = cc[par], pp[par]
			q = par
		}
		cc[q], pp[q] = j, p
		cnt[i]++
		return
	}
	q := 0
	for {
		ch := 2*q + 1
		if ch >= m {
			break
		}
		if ch+1 < m && pp[ch+1] > pp[ch] {
			ch++
		}
		if pp[ch] <= p {
			break
		}
		cc[q], pp[q] = cc[ch], pp[ch]
		q = ch
	}
	cc[q], pp[q] = j, p
}

// round runs one NN-descent round and returns the number of list changes.
func (s *nndState) round(r int) int64 {
	n, k := s.n, s.k
	clear(s.newCnt)
	clear(s.oldCnt)
	// Candidate lists: each of nndBuckets tasks owns a range of points and
	// scans every list entry (i → j) for ends in its range, so each
	// candidate heap is filled by one goroutine in a fixed order.
	per := (n + nndBuckets - 1) / nndBuckets
	par.Each(nndBuckets, s.threads, func(b int) {
		lo, hi := b*per, min((b+1)*per, n)
		for i := 0; i < n; i++ {
			own := i >= lo && i < hi
			for e := i * k; e < (i+1)*k; e++ {
				j := s.idx[e]
				if j < 0 || !(own || (int(j) >= lo && int(j) < hi)) {
					continue
				}
				p := nndHash(s.seed, uint64(r)+2, uint64(min(i, int(j))), uint64(max(i, int(j))))
				c, pr, cnt := s.oldC, s.oldPr, s.oldCnt
				if s.isNew[e] {
					c, pr, cnt = s.newC, s.newPr, s.newCnt
				}
				if own {
					s.candPush(c, pr, cnt, i, j, p)
				}
				if int(j) >= lo && int(j) < hi {
					s.candPush(c, pr, cnt, int(j), int32(i), p)
				}
			}
		}
	})
	// Entries sampled as new candidates become old.
	m := s.maxCand
	par.Each((n+nndTask-1)/nndTask, s.threads, func(t int) {
		lo, hi := t*nndTask, min((t+1)*nndTask, n)
		for i := lo; i < hi; i++ {
			cand := s.newC[i*m : i*m+int(s.newCnt[i])]
			for e := i * k; e < (i+1)*k; e++ {
				if s.isNew[e] && slices.Contains(cand, s.idx[e]) {
					s.isNew[e] = false
				}
			}
		}
	})
	// Local join in fixed batches; within a batch the tasks read the lists
	// as they were at the batch start and queue updates by destination.
	var changes int64
	per = (n + nndBuckets - 1) / nndBuckets
	var bucketChanges [nndBuckets]int64
	for b0 := 0; b0 < n; b0 += nndBatch {
		b1 := min(b0+nndBatch, n)
		ntask := (b1 - b0 + nndTask - 1) / nndTask
		par.Each(ntask, s.threads, func(t int) {
			buf := &s.upd[t]
			for q := range buf {
				buf[q] = buf[q][:0]
			}
			lo, hi := b0+t*nndTask, min(b0+(t+1)*nndTask, b1)
			for v := lo; v < hi; v++ {
				nw := s.newC[v*m : v*m+int(s.newCnt[v])]
				ol := s.oldC[v*m : v*m+int(s.oldCnt[v])]
				for a, p := range nw {
					xp := s.row(p)
					for _, q := range nw[a+1:] {
						s.offer(buf, per, p, q, nndDist(xp, s.row(q)))
					}
					for _, q := range ol {
						if q != p {
							s.offer(buf, per, p, q, nndDist(xp, s.row(q)))
						}
					}
				}
			}
		})
		par.Each(nndBuckets, s.threads, func(q int) {
			var c int64
			for t := 0; t < ntask; t++ {
				for _, u := range s.upd[t][q] {
					if s.push(int(u.to), u.from, u.d) {
						c++
					}
				}
			}
			bucketChanges[q] = c
		})
		for _, c := range bucketChanges {
			changes += c
		}
	}
	return changes
}

// offer queues the pair (p, q) at squared distance dd for whichever of the
// two lists it would enter, judged against the lists at the batch start.
func (s *nndState) offer(buf *[nndBuckets][]nndUpdate, per int, p, q int32, dd float32) {
	k := s.k
	if dd <= s.dis[int(p)*k] {
		b := int(p) / per
		buf[b] = append(buf[b], nndUpdate{to: p, from: q, d: dd})
	}
	if dd <= s.dis[int(q)*k] {
		b := int(q) / per
		buf[b] = append(buf[b], nndUpdate{to: q, from: p, d: dd})
	}
}

// output sorts every list by exact float64 distance (ties by index).
func (s *nndState) output(x []float64) *Neighbors {
	n, k, d := s.n, s.k, s.d
	nb := &Neighbors{N: n, K: k, Index: make([]int32, n*k), Dist: make([]float64, n*k)}
	type pair struct {
		sq float64
		j  int32
	}
	par.Each((n+nndTask-1)/nndTask, s.threads, func(t int) {
		lo, hi := t*nndTask, min((t+1)*nndTask, n)
		rows := make([]pair, k)
		for i := lo; i < hi; i++ {
			o := int(s.order[i])
			xi := x[o*d : (o+1)*d]
			for e := 0; e < k; e++ {
				j := s.order[s.idx[i*k+e]]
				xj := x[int(j)*d : int(j+1)*d]
				// Same summation as ExactNeighbors, so shared neighbours
				// get bit-identical distances.
				rows[e] = pair{nbSqDist(xi, xj, math.Inf(1)), j}
			}
			slices.SortFunc(rows, func(a, b pair) int {
				switch {
				case a.sq < b.sq:
					return -1
				case a.sq > b.sq:
					return 1
				}
				return int(a.j - b.j)
			})
			for e, p := range rows {
				nb.Index[o*k+e] = p.j
				nb.Dist[o*k+e] = math.Sqrt(p.sq)
			}
		}
	})
	return nb
}
