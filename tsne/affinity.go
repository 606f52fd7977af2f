package tsne

import (
	"fmt"
	"math"
	"slices"

	"plumb/internal/par"
)

// Perplexity calibration constants, as in common reference code
// (van der Maaten's bhtsne and scikit-learn 1.2.1's _binary_search_perplexity
// use the same tolerance; scikit-learn stops after 100 steps).
const (
	// PerplexityTolerance is the largest accepted |H_i − ln(perplexity)|,
	// in nats.
	PerplexityTolerance = 1e-5
	// PerplexitySteps bounds the bisection steps per point.
	PerplexitySteps = 100
	// ExactAffinitiesMaxN is the largest n ExactAffinities accepts. The
	// dense P holds n(n−1) entries (12 bytes each): about 300 MB at 5000.
	ExactAffinitiesMaxN = 5000
)

// affChunk is the number of points a worker calibrates at a time.
const affChunk = 32

// Conditional holds the row-wise conditional affinities of t-SNE
// (van der Maaten & Hinton 2008) over each point's K nearest neighbours:
//
//	p_j|i = exp(−β_i d_ij²) / Σ_k exp(−β_i d_ik²)
//
// where j and k run over the neighbours of i, d is the Euclidean distance
// and β_i (the precision of a Gaussian on squared distances, β = 1/(2σ²))
// is chosen so that the entropy of row i,
//
//	H_i = −Σ_j p_j|i ln p_j|i,
//
// equals ln(perplexity) within PerplexityTolerance.
type Conditional struct {
	N, K int
	// Index holds the N*K neighbour indices; row i is Index[i*K:(i+1)*K].
	Index []int32
	// P holds the matching p_j|i; each row sums to 1.
	P []float64
	// Beta holds β_i for each point.
	Beta []float64
	// Unconverged counts the points whose bisection stopped after
	// PerplexitySteps without reaching the tolerance. That happens when
	// the target is out of reach — more than perplexity neighbours tied at
	// the smallest distance (e.g. duplicate points), or all neighbour
	// distances equal; such rows are still valid distributions, uniform
	// over the tied neighbours — or when the needed β lies outside about
	// [2⁻⁹⁹, 2⁹⁹] because squared distances are extremely small or large
	// (standardise such data).
	Unconverged int
}

// ConditionalAffinities calibrates β_i for every point by bisection so that
// the entropy of p_·|i equals ln(perplexity), using the first
// k = NeighborCount(nb.N, perplexity) neighbours of each row (nb may hold
// more, e.g. computed once for the largest perplexity of a sweep).
//
// The search follows common reference code (scikit-learn 1.2.1's
// _binary_search_perplexity): start at β = 1; while no bracket is known,
// double β if the entropy is too high and halve it if too low; once
// bracketed, bisect; stop when |H − ln(perplexity)| ≤ PerplexityTolerance
// or after PerplexitySteps steps (the last evaluated β and row are kept).
// Squared distances are shifted by the row's smallest before
// exponentiating,
//
//	p_j|i = exp(−β_i (d_ij² − d_i,min²)) / Σ_k exp(−β_i (d_ik² − d_i,min²)),
//
// which leaves p unchanged mathematically but keeps the largest term at 1,
// so the normaliser never underflows or divides by zero — with duplicate
// points or all distances equal the row becomes uniform over the tied
// neighbours. (scikit-learn instead floors the normaliser at 1e-8, which
// gives an all-zero row when every exp(−β d²) underflows.)
//
// Points are calibrated in parallel on threads goroutines (threads < 1
// means runtime.GOMAXPROCS(0)); each row is independent, so the result is
// bit-identical for any thread count. Cost O(n·k·steps); steps averaged
// 24 on the digits and 19 on 50-dimensional clusters at perplexity 30.
// scikit-learn takes the perplexity as a float32, so the two agree
// to rounding only for perplexities a float32 holds exactly (5, 7.5, 10,
// 30, 50, …); otherwise β differs by up to the tolerance.
//
// Errors: perplexity below 1 or not finite, more neighbours needed than nb
// holds, perplexity above the number of neighbours available (n − 1), or a
// malformed nb (bad lengths, index out of range, a point listed as its own
// neighbour or twice in a row, a negative or non-finite distance).
func ConditionalAffinities(nb *Neighbors, perplexity float64, threads int) (*Conditional, error) {
	return affConditional(nb, perplexity, threads, false)
}

// affConditional implements ConditionalAffinities. With share set and
// nb.K equal to the k needed, the result's Index is nb.Index itself (for
// Affinities, which only reads it and drops the Conditional), saving
// 4·n·k bytes.
func affConditional(nb *Neighbors, perplexity float64, threads int, share bool) (*Conditional, error) {
	if nb == nil {
		return nil, fmt.Errorf("tsne: affinities: nil neighbours")
	}
	n := nb.N
	if !(perplexity >= 1) || math.IsInf(perplexity, 0) {
		return nil, fmt.Errorf("tsne: perplexity %g, want a finite value of at least 1", perplexity)
	}
	if n < 2 {
		return nil, fmt.Errorf("tsne: affinities need at least 2 points, got n = %d", n)
	}
	if perplexity > float64(n-1) {
		return nil, fmt.Errorf("tsne: perplexity %g exceeds n − 1 = %d, the number of other points", perplexity, n-1)
	}
	k := NeighborCount(n, perplexity)
	if k > nb.K {
		return nil, fmt.Errorf("tsne: perplexity %g needs %d neighbours per point, have %d", perplexity, k, nb.K)
	}
	if len(nb.Index) != n*nb.K || len(nb.Dist) != n*nb.K {
		return nil, fmt.Errorf("tsne: neighbours have %d indices and %d distances, want N·K = %d", len(nb.Index), len(nb.Dist), n*nb.K)
	}
	if uint64(n)*uint64(k) > math.MaxUint32 {
		return nil, fmt.Errorf("tsne: %d points × %d neighbours exceed 2³² entries", n, k)
	}
	c := &Conditional{N: n, K: k, P: make([]float64, n*k), Beta: make([]float64, n)}
	shared := share && k == nb.K
	if shared {
		c.Index = nb.Index
	} else {
		c.Index = make([]int32, n*k)
	}
	logPerp := math.Log(perplexity)
	workers := par.Workers(n, affChunk, threads)
	type work struct {
		sq     []float64
		seen   []int32 // seen[j] == i+1 when j is already in row i
		err    error
		unconv int
	}
	ws := make([]work, workers)
	par.Chunks(n, affChunk, threads, func(w, lo, hi int) {
		wk := &ws[w]
		if wk.sq == nil {
			wk.sq = make([]float64, k)
			wk.seen = make([]int32, n)
		}
		for i := lo; i < hi && wk.err == nil; i++ {
			idx := nb.Index[i*nb.K : i*nb.K+k]
			dist := nb.Dist[i*nb.K : i*nb.K+k]
			for col, j := range idx {
				switch {
				case j < 0 || int(j) >= n:
					wk.err = fmt.Errorf("tsne: neighbour row %d, column %d: index %d out of range [0, %d)", i, col, j, n)
				case int(j) == i:
					wk.err = fmt.Errorf("tsne: neighbour row %d, column %d: point lists itself", i, col)
				case wk.seen[j] == int32(i+1):
					wk.err = fmt.Errorf("tsne: neighbour row %d, column %d: point %d listed twice", i, col, j)
				case !(dist[col] >= 0) || math.IsInf(dist[col], 0):
					wk.err = fmt.Errorf("tsne: neighbour row %d, column %d: distance %v", i, col, dist[col])
				}
				if wk.err != nil {
					return
				}
				wk.seen[j] = int32(i + 1)
				wk.sq[col] = dist[col] * dist[col]
			}
			if !shared {
				copy(c.Index[i*k:(i+1)*k], idx)
			}
			beta, _, ok := affCalibrate(c.P[i*k:(i+1)*k], wk.sq, logPerp)
			c.Beta[i] = beta
			if !ok {
				wk.unconv++
			}
		}
	})
	// Report the error of the lowest-numbered row among those found, so the
	// message does not depend on scheduling: rows are checked in order
	// within a chunk, but chunks race; rerun the check serially to pick one.
	for w := range ws {
		if ws[w].err != nil {
			return nil, affFirstBadRow(nb, k)
		}
		c.Unconverged += ws[w].unconv
	}
	return c, nil
}

// affFirstBadRow repeats the neighbour checks serially and returns the
// error for the first offending entry.
func affFirstBadRow(nb *Neighbors, k int) error {
	n := nb.N
	seen := make([]int32, n)
	for i := 0; i < n; i++ {
		for c := 0; c < k; c++ {
			j, d := nb.Index[i*nb.K+c], nb.Dist[i*nb.K+c]
			switch {
			case j < 0 || int(j) >= n:
				return fmt.Errorf("tsne: neighbour row %d, column %d: index %d out of range [0, %d)", i, c, j, n)
			case int(j) == i:
				return fmt.Errorf("tsne: neighbour row %d, column %d: point lists itself", i, c)
			case seen[j] == int32(i+1):
				return fmt.Errorf("tsne: neighbour row %d, column %d: point %d listed twice", i, c, j)
			case !(d >= 0) || math.IsInf(d, 0):
				return fmt.Errorf("tsne: neighbour row %d, column %d: distance %v", i, c, d)
			}
			seen[j] = int32(i + 1)
		}
	}
	return fmt.Errorf("tsne: malformed neighbours")
}

// affGaussianRow fills p with the normalised Gaussian similarities of one
// point at precision beta over the squared distances sq, shifted by their
// minimum sqMin:
//
//	p_j = exp(−β (sq_j − sqMin)) / Σ_k exp(−β (sq_k − sqMin))
//
// and returns the row's entropy in nats, computed as
//
//	H = ln Σ_k exp(−β (sq_k − sqMin)) + β Σ_j (sq_j − sqMin) p_j
//
// (the same identity reference code uses, −Σ p ln p written without
// logarithms of tiny p). The sum is at least 1, so nothing divides by zero.
func affGaussianRow(p, sq []float64, sqMin, beta float64) float64 {
	sum := 0.0
	for j, s := range sq {
		e := math.Exp(-beta * (s - sqMin))
		p[j] = e
		sum += e
	}
	inv := 1 / sum
	weighted := 0.0
	for j, s := range sq {
		p[j] *= inv
		weighted += (s - sqMin) * p[j]
	}
	return math.Log(sum) + beta*weighted
}

// affCalibrate runs the bisection on β for one point (see
// ConditionalAffinities), writing the row into p. It returns the final β,
// the row's entropy and whether the tolerance was met.
func affCalibrate(p, sq []float64, logPerp float64) (beta, entropy float64, ok bool) {
	sqMin := math.Inf(1)
	for _, s := range sq {
		sqMin = min(sqMin, s)
	}
	beta = 1
	lo, hi := math.Inf(-1), math.Inf(1)
	for step := 0; step < PerplexitySteps; step++ {
		entropy = affGaussianRow(p, sq, sqMin, beta)
		diff := entropy - logPerp
		if math.Abs(diff) <= PerplexityTolerance {
			return beta, entropy, true
		}
		if step == PerplexitySteps-1 {
			break // keep the β that produced p
		}
		if diff > 0 {
			lo = beta
			if math.IsInf(hi, 1) {
				beta *= 2
			} else {
				beta = (beta + hi) / 2
			}
		} else {
			hi = beta
			if math.IsInf(lo, -1) {
				beta /= 2
			} else {
				beta = (beta + lo) / 2
			}
		}
	}
	return beta, entropy, false
}

// Affinities returns the joint affinities P of t-SNE over the k-nearest-
// neighbour graph, k = NeighborCount(nb.N, perplexity) (van der Maaten
// 2014): the conditional affinities of ConditionalAffinities, symmetrised,
//
//	p_ij = (p_j|i + p_i|j) / (2n),
//
// as a CSR Sparse with sorted columns whose values sum to 1. Row i holds
// j when j is among i's k neighbours or i among j's, so rows have between
// k and n − 1 entries. See ConditionalAffinities for the calibration,
// threads and errors; the result is bit-identical for any thread count.
func Affinities(nb *Neighbors, perplexity float64, threads int) (*Sparse, error) {
	c, err := affConditional(nb, perplexity, threads, true)
	if err != nil {
		return nil, err
	}
	return c.Joint(threads), nil
}

// Joint symmetrises the conditional affinities into the joint P,
//
//	p_ij = (p_j|i + p_i|j) / (2n),
//
// where p_j|i is 0 when j is not a listed neighbour of i. The result is a
// CSR Sparse with ascending columns, no diagonal, values summing to 1 (up
// to rounding). Cost O(n·k log k) time; besides the result (12 bytes per
// entry, between n·k and 2·n·k entries) it needs 4·n·k + 8·n bytes of
// working memory. Rows are built in
// parallel on threads goroutines (< 1 means runtime.GOMAXPROCS(0)) with a
// bit-identical result for any thread count. It panics if N·K ≥ 2³²
// (ConditionalAffinities refuses such sizes).
func (c *Conditional) Joint(threads int) *Sparse {
	n, k := c.N, c.K
	if uint64(n)*uint64(k) > math.MaxUint32 {
		panic("tsne: Joint: more than 2³² neighbour entries")
	}
	// In-edges (the transpose) as flat positions t into Index/P, row t/k;
	// ascending, so the sources of each list are ascending too.
	inPtr := make([]int, n+1)
	for _, j := range c.Index {
		inPtr[j+1]++
	}
	for j := 0; j < n; j++ {
		inPtr[j+1] += inPtr[j]
	}
	inPos := make([]uint32, n*k)
	{
		fill := make([]int, n)
		copy(fill, inPtr[:n])
		for t, j := range c.Index {
			inPos[fill[j]] = uint32(t)
			fill[j]++
		}
	}
	// Per-worker scratch: the row's out-edges sorted by column, and its
	// in-edges' sources and values.
	type scratch struct {
		keys []uint64 // column<<32 | position in the row, sorted
		ca   []int32
		va   []float64
		cb   []int32
		vb   []float64
	}
	ws := make([]scratch, par.Workers(n, affChunk, threads))
	load := func(w, i int, values bool) *scratch {
		sc := &ws[w]
		if sc.keys == nil {
			sc.keys = make([]uint64, k)
			sc.ca, sc.va = make([]int32, k), make([]float64, k)
		}
		row := c.Index[i*k : (i+1)*k]
		for t, j := range row {
			sc.keys[t] = uint64(uint32(j))<<32 | uint64(t)
		}
		slices.Sort(sc.keys)
		for t, key := range sc.keys {
			sc.ca[t] = int32(key >> 32)
			if values {
				sc.va[t] = c.P[i*k+int(uint32(key))]
			}
		}
		sc.cb, sc.vb = sc.cb[:0], sc.vb[:0]
		for _, pos := range inPos[inPtr[i]:inPtr[i+1]] {
			sc.cb = append(sc.cb, int32(int(pos)/k))
			if values {
				sc.vb = append(sc.vb, c.P[pos])
			}
		}
		return sc
	}
	// Row sizes of the union, then the merge itself.
	rowPtr := make([]int, n+1)
	par.Chunks(n, affChunk, threads, func(w, lo, hi int) {
		for i := lo; i < hi; i++ {
			sc := load(w, i, false)
			rowPtr[i+1] = affMergeRow(sc.ca, nil, sc.cb, nil, nil, nil, 0)
		}
	})
	for i := 0; i < n; i++ {
		rowPtr[i+1] += rowPtr[i]
	}
	p := &Sparse{N: n, RowPtr: rowPtr, Col: make([]int32, rowPtr[n]), Val: make([]float64, rowPtr[n])}
	scale := 1 / (2 * float64(n))
	par.Chunks(n, affChunk, threads, func(w, lo, hi int) {
		for i := lo; i < hi; i++ {
			sc := load(w, i, true)
			a, b := rowPtr[i], rowPtr[i+1]
			affMergeRow(sc.ca, sc.va, sc.cb, sc.vb, p.Col[a:b], p.Val[a:b], scale)
		}
	})
	return p
}

// affMergeRow merges two ascending column lists, writing the union with
// (va + vb)·scale into col/val when they are non-nil, and returns the size
// of the union.
func affMergeRow(ca []int32, va []float64, cb []int32, vb []float64, col []int32, val []float64, scale float64) int {
	write := col != nil
	a, b, m := 0, 0, 0
	for a < len(ca) || b < len(cb) {
		var j int32
		var v float64
		switch {
		case b == len(cb) || (a < len(ca) && ca[a] < cb[b]):
			j = ca[a]
			if write {
				v = va[a]
			}
			a++
		case a == len(ca) || cb[b] < ca[a]:
			j = cb[b]
			if write {
				v = vb[b]
			}
			b++
		default: // equal columns: i and j list each other
			j = ca[a]
			if write {
				v = va[a] + vb[b]
			}
			a++
			b++
		}
		if write {
			col[m], val[m] = j, v*scale
		}
		m++
	}
	return m
}

// ExactAffinities returns the joint affinities P of t-SNE over every pair
// of points, as scikit-learn's method='exact' computes them (van der
// Maaten & Hinton 2008): each p_·|i is calibrated as in
// ConditionalAffinities but over all n − 1 other points, with squared
// Euclidean distances computed directly from x (n points of d features,
// flat row-major), then
//
//	p_ij = (p_j|i + p_i|j) / (2n).
//
// The result is stored as a Sparse with every off-diagonal entry
// (n − 1 per row, ascending columns), values summing to 1. Cost O(n²·d)
// for the distances plus O(n²·steps) for the calibration; memory 12·n²
// bytes. Rows run in parallel on threads goroutines (< 1 means
// runtime.GOMAXPROCS(0)), bit-identical for any thread count.
//
// Errors: n > ExactAffinitiesMaxN (use ExactNeighbors and Affinities),
// the input errors of ExactNeighbors, and the perplexity errors of
// ConditionalAffinities.
func ExactAffinities(x []float64, n, d int, perplexity float64, threads int) (*Sparse, error) {
	if n > ExactAffinitiesMaxN {
		return nil, fmt.Errorf("tsne: exact affinities limited to n ≤ %d, got n = %d (use neighbour-based affinities)", ExactAffinitiesMaxN, n)
	}
	if err := nbCheckInput(x, n, d, 1); err != nil {
		return nil, err
	}
	if !(perplexity >= 1) || math.IsInf(perplexity, 0) {
		return nil, fmt.Errorf("tsne: perplexity %g, want a finite value of at least 1", perplexity)
	}
	if perplexity > float64(n-1) {
		return nil, fmt.Errorf("tsne: perplexity %g exceeds n − 1 = %d, the number of other points", perplexity, n-1)
	}
	m := n - 1
	p := &Sparse{N: n, RowPtr: make([]int, n+1), Col: make([]int32, n*m), Val: make([]float64, n*m)}
	for i := 0; i <= n; i++ {
		p.RowPtr[i] = i * m
	}
	logPerp := math.Log(perplexity)
	workers := par.Workers(n, affChunk, threads)
	sqs := make([][]float64, workers)
	par.Chunks(n, affChunk, threads, func(w, lo, hi int) {
		if sqs[w] == nil {
			sqs[w] = make([]float64, m)
		}
		sq := sqs[w]
		for i := lo; i < hi; i++ {
			xi := x[i*d : (i+1)*d]
			col := p.Col[i*m : (i+1)*m]
			t := 0
			for j := 0; j < n; j++ {
				if j == i {
					continue
				}
				col[t] = int32(j)
				sq[t] = nbSqDist(xi, x[j*d:(j+1)*d], math.Inf(1))
				t++
			}
			affCalibrate(p.Val[i*m:(i+1)*m], sq, logPerp)
		}
	})
	// Symmetrise in place. Row i owns the pairs (i, j > i): it reads and
	// writes only entries (i, j) and (j, i) with j > i, which no other row
	// touches, so the rows can run in parallel.
	scale := 1 / (2 * float64(n))
	pos := func(i, j int) int { // position of column j in row i
		if j > i {
			return i*m + j - 1
		}
		return i*m + j
	}
	par.Chunks(n, affChunk, threads, func(_, lo, hi int) {
		for i := lo; i < hi; i++ {
			for j := i + 1; j < n; j++ {
				a, b := pos(i, j), pos(j, i)
				v := (p.Val[a] + p.Val[b]) * scale
				p.Val[a], p.Val[b] = v, v
			}
		}
	})
	return p, nil
}
