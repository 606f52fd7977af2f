package stability

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"plumb/internal/par"
)

// Default sizes for the faithfulness scores.
const (
	// DefaultExactLimit is the largest N scored exactly (every point a
	// query). Exact scoring costs O(N²·D); at N = 20 000, D = 50 that is
	// 2·10¹⁰ multiply-adds, seconds on two cores.
	DefaultExactLimit = 20000
	// DefaultSamples is the number of query points sampled above the exact
	// limit. The score is then the mean over a uniform sample of points of
	// the per-point term, an unbiased estimate of the exact score; its
	// standard error is about sd(per-point term)/√DefaultSamples.
	DefaultSamples = 5000
	// DefaultK is the neighbourhood size used where k ≤ 0 is passed to
	// NeighborJaccard.
	DefaultK = 15
)

// ErrTooFewPoints reports a neighbourhood size too large for the data.
var ErrTooFewPoints = errors.New("stability: too few points for k")

// Options tunes the faithfulness scores. The zero value scores exactly up to
// DefaultExactLimit points on all cores.
type Options struct {
	// Threads bounds the goroutines used. If Threads is 0,
	// runtime.GOMAXPROCS(0) is used. Results do not depend on it.
	Threads int
	// ExactLimit is the largest N scored over every point. If ExactLimit is
	// 0, DefaultExactLimit is used; a negative value always samples.
	ExactLimit int
	// Samples is the number of query points drawn (uniformly, without
	// replacement) when N exceeds the exact limit. If Samples is 0,
	// DefaultSamples is used.
	Samples int
	// Seed seeds the query sample (PCG, stream 1).
	Seed uint64
	// InputNeighbors optionally gives the exact input-space neighbours of
	// every point, row i = InputNeighbors[i*InputK:(i+1)*InputK], self
	// excluded, ascending distance, ties by smaller index — the layout of
	// tsne.Neighbors.Index from an exact search. When present with
	// InputK ≥ k, continuity and kNN recall use its first k columns instead
	// of searching the input, and trustworthiness reads the input rank of a
	// map neighbour from its position in the row, computing a query's input
	// distances only if one of its map neighbours is missing from the row.
	// Results are identical to the search when the list is exact; a list
	// from an approximate search gives approximate scores.
	InputNeighbors []int32
	InputK         int
}

// Score is a faithfulness score with the sample it was computed on.
type Score struct {
	Value float64
	K     int
	// N is the number of points; Queries is the number of query points the
	// score averages over (Queries == N when exact).
	N, Queries int
}

// Exact reports whether every point was a query point.
func (s Score) Exact() bool { return s.Queries == s.N }

// Faithfulness holds the scores of one layout against its input, all at the
// same k and on the same query points.
type Faithfulness struct {
	Trustworthiness, Continuity, KNNRecall Score
}

type which struct{ trust, cont, recall bool }

// Trustworthiness returns T(k) of the layout y (N×2) for input x (N×d)
// (Venna & Kaski 2001), computed exactly as scikit-learn 1.2.1's
// sklearn.manifold.trustworthiness:
//
//	T(k) = 1 − 2/(N k (2N − 3k − 1)) Σ_i Σ_{j ∈ N_k^map(i)} max(0, r(i,j) − k)
//
// where N_k^map(i) are the k nearest other points of i in the map and
// r(i,j) ∈ 1…N−1 is j's rank among the other points by input distance
// (Euclidean). Ties in input distance are ranked by the smaller index first
// (a stable sort), which is what scikit-learn's np.argsort gives whenever
// the input has no tied distances (with ties, numpy's default quicksort
// orders them arbitrarily; on the raw digits data the two differ by at
// most 9e-6). scikit-learn fills the diagonal of the distance matrix with
// +Inf, so a point ranks itself last and never among its own neighbours —
// the same as excluding it. Map-neighbour ties are also broken by the
// smaller index. Requires 1 ≤ k < N/2 (scikit-learn's condition, under
// which T ∈ [0, 1]). T = 1 when every map neighbour is among the k nearest
// input neighbours; a layout unrelated to the input scores about 0.5.
//
// N > DefaultExactLimit samples query points; use TrustworthinessWith to
// control this and to see the sample size. Cost O(Q·N·d), Q query points.
func Trustworthiness(x []float64, d int, y []float64, k int) (float64, error) {
	s, err := TrustworthinessWith(x, d, y, k, Options{})
	return s.Value, err
}

// TrustworthinessWith is Trustworthiness with options; see Options. With
// Q query points the sum over i runs over the sample and N k is replaced
// by Q k in the normalisation.
func TrustworthinessWith(x []float64, d int, y []float64, k int, opt Options) (Score, error) {
	f, err := faithfulness(x, d, y, k, opt, which{trust: true})
	return f.Trustworthiness, err
}

// Continuity returns C(k) of the layout y for input x (Kaski et al. 2003):
// trustworthiness with the roles of input and map exchanged,
//
//	C(k) = 1 − 2/(N k (2N − 3k − 1)) Σ_i Σ_{j ∈ N_k^in(i)} max(0, r̂(i,j) − k)
//
// where N_k^in(i) are the k nearest other points of i in the input and
// r̂(i,j) is j's rank by map distance (ties by smaller index). It equals
// scikit-learn 1.2.1's trustworthiness(y, x, n_neighbors=k) when neither
// space has tied distances. Requires 1 ≤ k < N/2. Penalises points that
// are close in the input but torn apart in the map.
//
// Cost O(Q·N·d) to find the input neighbours (none with an InputNeighbors
// list) plus the map ranks, which a 2-d k-d tree of the layout counts
// without computing every map distance: a neighbour among i's k nearest
// in the map costs nothing, another about the points near its circle
// around i: little for a faithful layout, O(N) per query at worst.
func Continuity(x []float64, d int, y []float64, k int) (float64, error) {
	s, err := ContinuityWith(x, d, y, k, Options{})
	return s.Value, err
}

// ContinuityWith is Continuity with options; see Options.
func ContinuityWith(x []float64, d int, y []float64, k int, opt Options) (Score, error) {
	f, err := faithfulness(x, d, y, k, opt, which{cont: true})
	return f.Continuity, err
}

// KNNRecall returns the share of input-space neighbours kept in the map:
//
//	recall(k) = 1/(N k) Σ_i |N_k^in(i) ∩ N_k^map(i)|
//
// with both neighbour sets exact, self excluded, ties by smaller index.
// Requires 1 ≤ k < N/2.
func KNNRecall(x []float64, d int, y []float64, k int) (float64, error) {
	s, err := KNNRecallWith(x, d, y, k, Options{})
	return s.Value, err
}

// KNNRecallWith is KNNRecall with options; see Options.
func KNNRecallWith(x []float64, d int, y []float64, k int, opt Options) (Score, error) {
	f, err := faithfulness(x, d, y, k, opt, which{recall: true})
	return f.KNNRecall, err
}

// FaithfulnessAt computes trustworthiness, continuity and kNN recall in one
// pass over the query points, sharing the distance computations. It is
// FaithfulnessBatch with one layout.
func FaithfulnessAt(x []float64, d int, y []float64, k int, opt Options) (Faithfulness, error) {
	return faithfulness(x, d, y, k, opt, which{true, true, true})
}

// FaithfulnessBatch returns FaithfulnessAt of each layout in ys against the
// same input x (N×d), bit for bit, at a fraction of the cost: every layout
// is scored on the same query points, and a query point's input distances
// (a row of N, O(N·d) to compute, the dominant cost of FaithfulnessAt) are
// computed at most once for the whole batch and used by every layout that
// needs them; the trustworthiness ranks of all those layouts' map
// neighbours are then counted in one O(N log(L·k)) pass over the row.
// Continuity ranks input neighbours by map distance with each layout's
// k-d tree, counting only the points near the neighbours' circles: little
// for a neighbour kept close, O(N) at worst (a layout unrelated to its
// input). Every layout must hold the same N points (2 values per point).
// An empty ys gives an empty result.
//
// Cost O(Q·N·d + Q·N·log(L·k)) plus the continuity counts, at most
// O(L·Q·N), for L layouts and Q query points, against O(L·Q·N·d) for L
// calls of FaithfulnessAt; with an InputNeighbors list a query point's
// distances are computed only if some layout needs them. Besides the
// layouts it holds a 2-d k-d tree per layout (about 28 bytes per point),
// and per thread four rows of N values (five if a caller's neighbour list
// repeats a point or names the query itself), 32·L·k neighbour indices
// and L·k (distance, index) pairs. Results do not depend on Threads.
// Defaults as in Options.
func FaithfulnessBatch(x []float64, d int, ys [][]float64, k int, opt Options) ([]Faithfulness, error) {
	return faithfulnessBatch(x, d, ys, k, opt, which{true, true, true}, true)
}

func checkFinite(what string, v []float64, width int) error {
	for i, f := range v {
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return fmt.Errorf("stability: %s row %d column %d is %v", what, i/width, i%width, f)
		}
	}
	return nil
}

func checkLayout(what string, y []float64) error {
	if len(y)%2 != 0 {
		return fmt.Errorf("stability: %s has odd length %d (want 2 values per point)", what, len(y))
	}
	return checkFinite(what, y, 2)
}

func checkK(k, n int) error {
	if k < 1 {
		return fmt.Errorf("stability: k = %d, want k ≥ 1", k)
	}
	if 2*k >= n {
		return fmt.Errorf("%w: k = %d needs more than %d points, have %d (k < N/2)", ErrTooFewPoints, k, 2*k, n)
	}
	return nil
}

// sampleQueries returns nil (every point) or a sorted uniform sample.
func sampleQueries(n int, opt Options) []int {
	limit := opt.ExactLimit
	if limit == 0 {
		limit = DefaultExactLimit
	}
	if n <= limit {
		return nil
	}
	q := opt.Samples
	if q <= 0 {
		q = DefaultSamples
	}
	if q >= n {
		return nil
	}
	rng := rand.New(rand.NewPCG(opt.Seed, 1))
	perm := make([]int, n)
	for i := range perm {
		perm[i] = i
	}
	for i := 0; i < q; i++ {
		j := i + rng.IntN(n-i)
		perm[i], perm[j] = perm[j], perm[i]
	}
	s := perm[:q:q]
	slices.Sort(s)
	return s
}

func faithfulness(x []float64, d int, y []float64, k int, opt Options, w which) (Faithfulness, error) {
	f, err := faithfulnessBatch(x, d, [][]float64{y}, k, opt, w, false)
	if err != nil {
		return Faithfulness{}, err
	}
	return f[0], nil
}

// faithfulnessBatch scores every layout of ys on the same query points.
// numbered names the layouts by position in error messages.
//
// Work is split into fixed chunks of query points. Within a chunk, each
// layout first answers what the input neighbour list allows; the queries
// that some layout still needs input distances for are then taken in
// groups of four, their distance rows computed once and used by every
// layout that needs them (trustworthiness), and, without a list, to find
// the input neighbours once for all layouts (continuity, kNN recall). The
// per-query penalties are the same code as for a single layout; they are
// integers, summed per layout and chunk and then over chunks in order, so
// the scores do not depend on the batch or on the thread count.
func faithfulnessBatch(x []float64, d int, ys [][]float64, k int, opt Options, w which, numbered bool) ([]Faithfulness, error) {
	if len(ys) == 0 {
		return []Faithfulness{}, nil
	}
	n, err := checkBatch(x, d, ys, numbered)
	if err != nil {
		return nil, err
	}
	if err := checkK(k, n); err != nil {
		return nil, err
	}
	var inNb []int32
	inK := 0
	if opt.InputNeighbors != nil && opt.InputK >= k {
		if len(opt.InputNeighbors) != n*opt.InputK {
			return nil, fmt.Errorf("stability: input neighbour list has %d entries, want %d × %d", len(opt.InputNeighbors), n, opt.InputK)
		}
		for _, j := range opt.InputNeighbors {
			if j < 0 || int(j) >= n {
				return nil, fmt.Errorf("stability: input neighbour index %d out of range [0, %d)", j, n)
			}
		}
		inNb, inK = opt.InputNeighbors, opt.InputK
	}
	queries := sampleQueries(n, opt)
	nq := n
	if queries != nil {
		nq = len(queries)
	}
	nl := len(ys)
	var trees []*kdTree
	if w.trust || w.recall || w.cont {
		trees = make([]*kdTree, nl)
		par.Each(nl, opt.Threads, func(l int) { trees[l] = newKDTree(ys[l]) })
	}
	// Sums per layout and chunk of queries, [l*nChunks+c]; each chunk is
	// handled by one worker, which alone writes its entries.
	nChunks := (nq + chunk - 1) / chunk
	trustSum := make([]int64, nl*nChunks)
	contSum := make([]int64, nl*nChunks)
	hitSum := make([]int64, nl*nChunks)
	needDX := w.trust || ((w.cont || w.recall) && inNb == nil)
	searchIn := inNb == nil && (w.cont || w.recall)
	type scratch struct {
		dx [group][]float64
		// dy holds one query's map distances when contPenalty falls back
		// to them; allocated on first use.
		dy []float64
		h  nbHeap
		rk *ranker
		tr sharedRanks
		// mapRows holds the map neighbours of the chunk's queries, layout
		// by layout: row m of layout l at (l*chunk+m)*k.
		mapRows []int32
		// inRows holds the input neighbours found by search, row m at m*k.
		inRows []int32
		// need[m*nl+l] reports that layout l needs the input distances of
		// query m for its trustworthiness.
		need []bool
		// pending lists the chunk's queries that need input distances.
		pending []int
	}
	pool := make([]*scratch, par.Workers(nq, chunk, opt.Threads))
	par.Chunks(nq, chunk, opt.Threads, func(wk, lo, hi int) {
		if pool[wk] == nil {
			sc := &scratch{rk: newRanker(k), need: make([]bool, chunk*nl)}
			if needDX {
				for g := range sc.dx {
					sc.dx[g] = make([]float64, n)
				}
			}
			if trees != nil {
				sc.mapRows = make([]int32, chunk*nl*k)
			}
			if searchIn {
				sc.inRows = make([]int32, chunk*k)
			}
			pool[wk] = sc
		}
		sc := pool[wk]
		dx, rk, tr, h := &sc.dx, sc.rk, &sc.tr, &sc.h
		c := lo / chunk
		query := func(m int) int {
			if queries != nil {
				return queries[m]
			}
			return m
		}
		for l, t := range trees {
			for m := lo; m < hi; m++ {
				o := (l*chunk + m - lo) * k
				t.query(query(m), k, h, sc.mapRows[o:o+k])
			}
		}
		mapRow := func(l, m int) []int32 {
			if trees == nil {
				return nil
			}
			o := (l*chunk + m - lo) * k
			return sc.mapRows[o : o+k]
		}
		need := sc.need[:(hi-lo)*nl]
		pending := sc.pending[:0]
		if inNb == nil {
			for m := lo; m < hi; m++ {
				pending = append(pending, m)
			}
			for s := range need {
				need[s] = w.trust
			}
		} else {
			// First pass: everything the input neighbour list answers
			// alone, layout by layout.
			for s := range need {
				need[s] = false
			}
			for l, y := range ys {
				var tpen, cpen, hits int64
				for m := lo; m < hi; m++ {
					i := query(m)
					row := inNb[i*inK : (i+1)*inK]
					if w.cont {
						cpen += contPenalty(rk, trees[l], y, i, row[:k], mapRow(l, m), &sc.dy)
					}
					if w.recall {
						hits += int64(overlap(row[:k], mapRow(l, m)))
					}
					if w.trust {
						if pen, ok := listPenalty(row, mapRow(l, m), k); ok {
							tpen += pen
						} else {
							need[(m-lo)*nl+l] = true
						}
					}
				}
				trustSum[l*nChunks+c] += tpen
				contSum[l*nChunks+c] += cpen
				hitSum[l*nChunks+c] += hits
			}
			for m := lo; m < hi; m++ {
				if slices.Contains(need[(m-lo)*nl:(m-lo+1)*nl], true) {
					pending = append(pending, m)
				}
			}
		}
		sc.pending = pending
		// Second pass: queries that need their input distances, in groups;
		// each row serves every layout.
		for g0 := 0; g0 < len(pending); g0 += group {
			g1 := min(g0+group, len(pending))
			var qs [group]int
			for g := g0; g < g1; g++ {
				qs[g-g0] = query(pending[g])
			}
			if g1-g0 == group {
				inputDistances4(dx, x, d, &qs)
			} else {
				for g := g0; g < g1; g++ {
					inputDistances(dx[g-g0], x, d, qs[g-g0])
				}
			}
			for g := g0; g < g1; g++ {
				m, i, dxi := pending[g], qs[g-g0], dx[g-g0]
				if w.trust {
					// The map neighbours of every layout that needs this
					// query, ranked together in one pass over its row.
					tr.reset()
					for l := range nl {
						if need[(m-lo)*nl+l] {
							tr.add(dxi, mapRow(l, m))
						}
					}
					tr.rank(dxi, i)
					for l := range nl {
						if need[(m-lo)*nl+l] {
							trustSum[l*nChunks+c] += tr.penalty(dxi, mapRow(l, m), k)
						}
					}
				}
				if searchIn {
					selectK(dxi, i, k, h, sc.inRows[(m-lo)*k:(m-lo+1)*k])
				}
			}
		}
		// Third pass, without a list: continuity and recall against the
		// input neighbours just found, layout by layout.
		if searchIn {
			for l, y := range ys {
				var cpen, hits int64
				for m := lo; m < hi; m++ {
					i := query(m)
					inRow := sc.inRows[(m-lo)*k : (m-lo+1)*k]
					if w.cont {
						cpen += contPenalty(rk, trees[l], y, i, inRow, mapRow(l, m), &sc.dy)
					}
					if w.recall {
						hits += int64(overlap(inRow, mapRow(l, m)))
					}
				}
				contSum[l*nChunks+c] += cpen
				hitSum[l*nChunks+c] += hits
			}
		}
	})
	norm := 2.0 / (float64(nq) * float64(k) * (2*float64(n) - 3*float64(k) - 1))
	mk := func(v float64) Score { return Score{Value: v, K: k, N: n, Queries: nq} }
	out := make([]Faithfulness, nl)
	for l := range out {
		part := func(s []int64) int64 { return sum64(s[l*nChunks : (l+1)*nChunks]) }
		f := &out[l]
		if w.trust {
			f.Trustworthiness = mk(1 - float64(part(trustSum))*norm)
		}
		if w.cont {
			f.Continuity = mk(1 - float64(part(contSum))*norm)
		}
		if w.recall {
			f.KNNRecall = mk(float64(part(hitSum)) / (float64(nq) * float64(k)))
		}
	}
	return out, nil
}

// contPenalty is the continuity penalty of query i in layout y (tree t,
// map neighbours mapRow) for its input neighbours targets: by the tree,
// or, for a neighbour list that repeats a point or names i, from all map
// distances (written into *dy, allocated on first use).
func contPenalty(rk *ranker, t *kdTree, y []float64, i int, targets, mapRow []int32, dy *[]float64) int64 {
	if pen, ok := rk.mapPenalty(t, i, targets, mapRow); ok {
		return pen
	}
	if *dy == nil {
		*dy = make([]float64, len(y)/2)
	}
	mapDistances(*dy, y, i)
	return rk.penalty(*dy, i, targets)
}

// sharedRanks ranks the map neighbours of one query point in several
// layouts by input distance, all in one pass over the query's row of input
// distances: r(i,j) = 1 + #{l ≠ i : (dist_l, l) < (dist_j, j)}, as penalty
// computes it for one layout, whose O(N) pass it replaces by one per
// query. Map neighbours are distinct and never i, so the ranks are the
// same.
type sharedRanks struct {
	key  []rankKey
	hist []int64
	kd   []float64 // key[t].d
}

type rankKey struct {
	d float64
	j int32
}

func (a rankKey) less(b rankKey) bool { return a.d < b.d || (a.d == b.d && a.j < b.j) }

// cmpRankKey orders keys by (d, j), for the slices functions.
func cmpRankKey(a, b rankKey) int {
	if a.less(b) {
		return -1
	}
	if b.less(a) {
		return 1
	}
	return 0
}

func (r *sharedRanks) reset() { r.key = r.key[:0] }

// add adds the points of row to the set to rank.
func (r *sharedRanks) add(dist []float64, row []int32) {
	for _, j := range row {
		r.key = append(r.key, rankKey{dist[j], j})
	}
}

// rank sorts and deduplicates the set and counts, for each member, the
// points other than i before it; the count of key[t] is then
// Σ_{u ≤ t} hist[u]. Each point before the last member is placed among
// the members by binary search; cost O(N log M) at worst for M members.
func (r *sharedRanks) rank(dist []float64, i int) {
	slices.SortFunc(r.key, cmpRankKey)
	r.key = slices.CompactFunc(r.key, func(a, b rankKey) bool { return a.j == b.j })
	key := r.key
	mk := len(key)
	if cap(r.hist) < mk+1 {
		r.hist = make([]int64, mk+1)
		r.kd = make([]float64, mk)
	}
	hist := r.hist[:mk+1]
	clear(hist)
	kd := r.kd[:mk]
	for t, e := range key {
		kd[t] = e.d
	}
	last := key[mk-1]
	for l, v := range dist {
		li := int32(l)
		if v > last.d || (v == last.d && li >= last.j) || l == i {
			continue
		}
		// p = number of members at or before (v, l); l counts for the
		// members from p on. First the members nearer than v, by a
		// binary search without branches on the data, then the members
		// at distance v with a smaller index.
		base, size := 0, mk
		for size > 1 {
			half := size >> 1
			if kd[base+half-1] < v {
				base += half
			}
			size -= half
		}
		if kd[base] < v {
			base++
		}
		for base < mk && kd[base] == v && key[base].j <= li {
			base++
		}
		hist[base]++
	}
	var c int64
	for t := range key {
		c += hist[t]
		hist[t] = c
	}
}

// penalty returns Σ_j max(0, r(i,j) − k) over row, whose points were added
// before rank.
func (r *sharedRanks) penalty(dist []float64, row []int32, k int) int64 {
	var pen int64
	for _, j := range row {
		t, _ := slices.BinarySearchFunc(r.key, rankKey{dist[j], j}, cmpRankKey)
		if rank := 1 + r.hist[t]; rank > int64(k) {
			pen += rank - int64(k)
		}
	}
	return pen
}

// listPenalty returns Σ_j max(0, r(i,j) − k) over the map neighbours j of
// i when every one of them appears in i's exact input neighbour row (rank
// = position + 1); ok is false otherwise.
func listPenalty(row, mapRow []int32, k int) (pen int64, ok bool) {
	for _, j := range mapRow {
		p := -1
		for s, c := range row {
			if c == j {
				p = s
				break
			}
		}
		if p < 0 {
			return 0, false
		}
		if r := p + 1; r > k {
			pen += int64(r - k)
		}
	}
	return pen, true
}

func sum64(v []int64) int64 {
	var s int64
	for _, a := range v {
		s += a
	}
	return s
}

// inputDistances writes the squared Euclidean distances from point i to
// every point into dst.
func inputDistances(dst, x []float64, d, i int) {
	xi := x[i*d : (i+1)*d]
	for l := range dst {
		xl := x[l*d : (l+1)*d : (l+1)*d]
		var s0, s1, s2, s3 float64
		c := 0
		for ; c+3 < d; c += 4 {
			a0 := xi[c] - xl[c]
			a1 := xi[c+1] - xl[c+1]
			a2 := xi[c+2] - xl[c+2]
			a3 := xi[c+3] - xl[c+3]
			s0 += a0 * a0
			s1 += a1 * a1
			s2 += a2 * a2
			s3 += a3 * a3
		}
		for ; c < d; c++ {
			a := xi[c] - xl[c]
			s0 += a * a
		}
		dst[l] = (s0 + s1) + (s2 + s3)
	}
}

// group is the number of query points whose input distances are computed
// together, so that each row of x is read once per group.
const group = 4

// inputDistances4 is inputDistances for four query points at once. Each
// distance is accumulated in the same order as inputDistances, so the
// results are bit-identical.
func inputDistances4(dst *[group][]float64, x []float64, d int, q *[group]int) {
	x0 := x[q[0]*d : (q[0]+1)*d : (q[0]+1)*d]
	x1 := x[q[1]*d : (q[1]+1)*d : (q[1]+1)*d]
	x2 := x[q[2]*d : (q[2]+1)*d : (q[2]+1)*d]
	x3 := x[q[3]*d : (q[3]+1)*d : (q[3]+1)*d]
	d0, d1, d2, d3 := dst[0], dst[1], dst[2], dst[3]
	for l := range d0 {
		xl := x[l*d : (l+1)*d : (l+1)*d]
		xl = xl[:len(x0)]
		var a0, a1, a2, a3 float64 // query 0, lanes 0-3
		var b0, b1, b2, b3 float64
		var c0, c1, c2, c3 float64
		var e0, e1, e2, e3 float64
		c := 0
		for ; c+3 < d; c += 4 {
			v0, v1, v2, v3 := xl[c], xl[c+1], xl[c+2], xl[c+3]
			t0, t1, t2, t3 := x0[c]-v0, x0[c+1]-v1, x0[c+2]-v2, x0[c+3]-v3
			a0 += t0 * t0
			a1 += t1 * t1
			a2 += t2 * t2
			a3 += t3 * t3
			t0, t1, t2, t3 = x1[c]-v0, x1[c+1]-v1, x1[c+2]-v2, x1[c+3]-v3
			b0 += t0 * t0
			b1 += t1 * t1
			b2 += t2 * t2
			b3 += t3 * t3
			t0, t1, t2, t3 = x2[c]-v0, x2[c+1]-v1, x2[c+2]-v2, x2[c+3]-v3
			c0 += t0 * t0
			c1 += t1 * t1
			c2 += t2 * t2
			c3 += t3 * t3
			t0, t1, t2, t3 = x3[c]-v0, x3[c+1]-v1, x3[c+2]-v2, x3[c+3]-v3
			e0 += t0 * t0
			e1 += t1 * t1
			e2 += t2 * t2
			e3 += t3 * t3
		}
		for ; c < d; c++ {
			v := xl[c]
			t := x0[c] - v
			a0 += t * t
			t = x1[c] - v
			b0 += t * t
			t = x2[c] - v
			c0 += t * t
			t = x3[c] - v
			e0 += t * t
		}
		d0[l] = (a0 + a1) + (a2 + a3)
		d1[l] = (b0 + b1) + (b2 + b3)
		d2[l] = (c0 + c1) + (c2 + c3)
		d3[l] = (e0 + e1) + (e2 + e3)
	}
}

func mapDistances(dst, y []float64, i int) {
	qx, qy := y[2*i], y[2*i+1]
	for l := range dst {
		dst[l] = sqDist(y[2*l], y[2*l+1], qx, qy)
	}
}

// selectK writes the k smallest (dist, index) entries of dist, skipping i,
// into dst in ascending order.
func selectK(dist []float64, i, k int, h *nbHeap, dst []int32) {
	h.reset(k)
	for l, v := range dist {
		if l == i {
			continue
		}
		if h.full() && !worse(h.d2[0], h.ix[0], v, int32(l)) {
			continue
		}
		h.push(v, int32(l))
	}
	h.sorted(dst)
}

// ranker computes Σ_j max(0, r(i,j) − k) for a set of k target points,
// where r(i,j) = 1 + #{l ≠ i : (dist_l, l) < (dist_j, j)}.
type ranker struct {
	k    int
	tgt  []int32
	td   []float64
	hist []int64
	// cnt and stack are scratch for mapPenalty.
	cnt   []int64
	stack []rankFrame
}

func newRanker(k int) *ranker {
	return &ranker{k: k, tgt: make([]int32, k), td: make([]float64, k), hist: make([]int64, k+1), cnt: make([]int64, k)}
}

// mapPenalty is penalty for the map distances of the layout t was built
// on, without computing them all: Σ_j max(0, r̂(i,j) − k) over the targets
// j, r̂ the rank by map distance, given mapRow, the k nearest other points
// of i in that map. A target at or before the last of mapRow in (distance,
// index) order has rank at most k and costs nothing; the ranks of the
// others are counted with the tree (kdTree.countBefore), touching only the
// points near their circles. The result equals penalty's, ties included.
// ok is false, and nothing is computed, when the targets repeat a point or
// contain i (possible only in a caller's neighbour list); use penalty then.
func (r *ranker) mapPenalty(t *kdTree, i int, targets, mapRow []int32) (pen int64, ok bool) {
	k := r.k
	tg, td := r.tgt, r.td
	y := t.y
	qx, qy := y[2*i], y[2*i+1]
	for s, j := range targets {
		if int(j) == i {
			return 0, false
		}
		v := sqDist(y[2*j], y[2*j+1], qx, qy)
		m := s
		for ; m > 0 && (td[m-1] > v || (td[m-1] == v && tg[m-1] > j)); m-- {
			td[m], tg[m] = td[m-1], tg[m-1]
		}
		if m > 0 && tg[m-1] == j {
			return 0, false
		}
		td[m], tg[m] = v, j
	}
	// With distinct targets other than i, r̂ of target t is 1 plus the
	// number of points other than i before it: the targets before it
	// included, as penalty counts them (its t).
	last := mapRow[k-1]
	lastD := sqDist(y[2*last], y[2*last+1], qx, qy)
	first := 0
	for first < k && (td[first] < lastD || (td[first] == lastD && tg[first] <= last)) {
		first++
	}
	if first == k {
		return 0, true
	}
	t.countBefore(qx, qy, td, tg, first, r.cnt, r.hist, &r.stack)
	for s := first; s < k; s++ {
		rank := 1 + r.cnt[s]
		if td[s] > 0 || tg[s] > int32(i) {
			rank-- // i itself, at distance 0, was counted
		}
		if rank > int64(k) {
			pen += rank - int64(k)
		}
	}
	return pen, true
}

// penalty sorts the targets by (dist, index); for every other point l it
// counts, by binary search, how many targets precede l, and accumulates a
// histogram; target t (0-based in sorted order) then has rank
// 1 + t + Σ_{p ≤ t} hist[p]. Cost O(N log k).
func (r *ranker) penalty(dist []float64, i int, targets []int32) int64 {
	k := r.k
	tg, td := r.tgt, r.td
	// Insertion sort by (dist, index): k is small and this allocates nothing.
	for s, j := range targets {
		v := dist[j]
		m := s
		for ; m > 0 && (td[m-1] > v || (td[m-1] == v && tg[m-1] > j)); m-- {
			td[m], tg[m] = td[m-1], tg[m-1]
		}
		td[m], tg[m] = v, j
	}
	hist := r.hist
	for p := range hist {
		hist[p] = 0
	}
	maxD, maxI := td[k-1], tg[k-1]
	for l, v := range dist {
		// Most points come after every target: one comparison.
		if v > maxD || (v == maxD && int32(l) > maxI) || l == i {
			continue
		}
		li := int32(l)
		// p = number of targets strictly before (v, l).
		p, q := 0, k
		for p < q {
			m := int(uint(p+q) >> 1)
			if td[m] < v || (td[m] == v && tg[m] < li) {
				p = m + 1
			} else {
				q = m
			}
		}
		if p < k && tg[p] == li {
			continue // a target itself; counted by t below
		}
		hist[p]++
	}
	var pen, before int64
	for t := 0; t < k; t++ {
		before += hist[t]
		rank := int64(1+t) + before
		if rank > int64(k) {
			pen += rank - int64(k)
		}
	}
	return pen
}

// checkBatch checks a batch of layouts of the same points and their input
// (n points, d features, row-major) and returns n. numbered names a bad
// layout by its index.
func checkBatch(x []float64, d int, ys [][]float64, numbered bool) (int, error) {
	for l, y := range ys {
		name := "layout"
		if numbered {
			name = fmt.Sprintf("layout %d", l)
		}
		if err := checkLayout(name, y); err != nil {
			return 0, err
		}
		if len(y) != len(ys[0]) {
			return 0, fmt.Errorf("stability: layout %d has %d points, layout 0 has %d", l, len(y)/2, len(ys[0])/2)
		}
	}
	n := len(ys[0]) / 2
	if d < 1 {
		return 0, fmt.Errorf("stability: input dimension %d, want ≥ 1", d)
	}
	if len(x) != n*d {
		return 0, fmt.Errorf("stability: input has %d values, want %d points × %d = %d", len(x), n, d, n*d)
	}
	if err := checkFinite("input", x, d); err != nil {
		return 0, err
	}
	return n, nil
}
