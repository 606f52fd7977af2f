package stability

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"plumb/internal/par"
)

// RNXOptions tunes RNX and RNXBatch. The zero value ranks every point up to
// DefaultExactLimit points and averages over at most DefaultSamples query
// points.
type RNXOptions struct {
	// Threads bounds the goroutines used. If Threads is 0,
	// runtime.GOMAXPROCS(0) is used. Results do not depend on it.
	Threads int
	// Points is the largest number of points ranked. Above it a fixed
	// uniform sample of Points points (drawn with Seed, PCG stream 3)
	// stands for the data: ranks are counted among the sample, so K on the
	// sample corresponds to about K·N/Points neighbours in the whole data.
	// If Points is 0, DefaultExactLimit (20 000) is used; a negative value
	// ranks every point however many.
	Points int
	// Queries is the largest number of query points the curve averages
	// over. When the ranked points are more, a fixed uniform sample of
	// Queries of them (Seed, PCG stream 4) are the queries, each still
	// ranked against every ranked point: every K keeps its meaning and the
	// curve is an unbiased estimate of the exact one. If Queries is 0,
	// DefaultSamples (5 000) is used; a negative value makes every point a
	// query.
	Queries int
	// Seed seeds both samples. Layouts scored with the same Seed (in one
	// batch or not) use the same points and queries, so differences
	// between them are paired.
	Seed uint64
}

// RNXCurve is the rank-based quality curve of one layout (Lee & Verleysen
// 2009; Lee, Peluffo-Ordóñez & Verleysen 2015). Slices are indexed by K−1
// for K = 1…N−2.
type RNXCurve struct {
	// N is the number of points ranked (the sample size when the data
	// were sampled); Total the number of points in the data; Queries the
	// number of query points averaged over (N when exact).
	N, Total, Queries int
	// QNX[K−1] is the share of K-ary neighbourhoods kept:
	// Q_NX(K) = 1/(K·Queries) Σ_i |N_K^in(i) ∩ N_K^map(i)|.
	QNX []float64
	// BNX[K−1] is (mild intrusions − mild extrusions)/(K·Queries) within
	// the K×K block of the co-ranking matrix: positive when points inside
	// both neighbourhoods rank nearer in the map than in the input.
	BNX []float64
	// RNX[K−1] = ((N−1)·Q_NX(K) − K)/(N−1−K): Q_NX rescaled so that a
	// random layout scores 0 on average and a perfect one 1.
	RNX []float64
	// AUC is the area under R_NX(K) on a logarithmic K axis,
	// Σ_K R_NX(K)/K / Σ_K 1/K over K = 1…N−2.
	AUC float64
}

// Exact reports whether every point was ranked and every point a query.
func (c *RNXCurve) Exact() bool { return c.N == c.Total && c.Queries == c.N }

// RNX returns the rank-based quality curve R_NX(K) of the layout y (N×2)
// for the input x (N×d) at every K = 1…N−2, with Q_NX, B_NX and the area
// under R_NX on a log-K axis. With ρ_ij the rank of j among the other
// points by input distance and r_ij its rank by map distance (Euclidean,
// self excluded, ties ranked by the smaller index first), the co-ranking
// matrix counts Q_kl = |{(i, j) : ρ_ij = k, r_ij = l}| and
//
//	Q_NX(K) = 1/(K N) Σ_{k ≤ K} Σ_{l ≤ K} Q_kl
//	B_NX(K) = 1/(K N) Σ_{k ≤ K} Σ_{l ≤ K} sign(k − l) Q_kl
//	R_NX(K) = ((N − 1) Q_NX(K) − K) / (N − 1 − K)
//	AUC     = Σ_{K=1}^{N−2} R_NX(K)/K  /  Σ_{K=1}^{N−2} 1/K
//
// Q_NX(K) is the mean kNN recall at K; a random layout has expected
// Q_NX(K) = K/(N−1), so R_NX removes that baseline. The 1/K weights give
// every scale (each factor of 2 in K) about the same weight, so the AUC
// rewards neither the most local nor the most global layout by
// construction (Lee et al. 2015). B_NX is intrusions minus extrusions
// (sign as we read Lee & Verleysen 2009, §4: positive = intrusive).
//
// Sampling (see RNXOptions): up to 20 000 points are ranked, and the curve
// averages over up to 5 000 query points, each ranked against all of them.
// Requires N ≥ 4 ranked points.
//
// Cost O(N·d + N log N) per query for the input ranks, plus O(N) per query
// and layout for the map ranks (a radix sort of the row's distances):
// O(Q·N·(d + log N)) in all, Q query points. Use RNXBatch to share the
// input ranks between layouts.
//
// References: J. A. Lee and M. Verleysen, "Quality assessment of
// dimensionality reduction: rank-based criteria", Neurocomputing 72,
// 2009; J. A. Lee, D. H. Peluffo-Ordóñez and M. Verleysen, "Multi-scale
// similarities in stochastic neighbour embedding: reducing dimensionality
// while preserving both local and global structure", Neurocomputing 169,
// 2015.
func RNX(x []float64, d int, y []float64, opt RNXOptions) (*RNXCurve, error) {
	c, err := rnxBatch(x, d, [][]float64{y}, opt, false)
	if err != nil {
		return nil, err
	}
	return c[0], nil
}

// RNXBatch returns RNX of each layout in ys against the same input x, with
// the same results as separate calls, computing each query point's input
// distances and ranks once for the whole batch. Every layout must hold the
// same N points. An empty ys gives an empty result. Memory: per thread,
// O(N) scratch plus two counts of N for each layout.
func RNXBatch(x []float64, d int, ys [][]float64, opt RNXOptions) ([]*RNXCurve, error) {
	return rnxBatch(x, d, ys, opt, true)
}

// samplePoints returns nil (all n) or a sorted uniform sample of m of n
// points, drawn by a partial Fisher–Yates shuffle from PCG(seed, stream).
func samplePoints(n, m int, seed, stream uint64) []int {
	if m < 0 || m >= n {
		return nil
	}
	rng := rand.New(rand.NewPCG(seed, stream))
	perm := make([]int, n)
	for i := range perm {
		perm[i] = i
	}
	for i := 0; i < m; i++ {
		j := i + rng.IntN(n-i)
		perm[i], perm[j] = perm[j], perm[i]
	}
	s := perm[:m:m]
	slices.Sort(s)
	return s
}

func rnxBatch(x []float64, d int, ys [][]float64, opt RNXOptions, numbered bool) ([]*RNXCurve, error) {
	if len(ys) == 0 {
		return []*RNXCurve{}, nil
	}
	total, err := checkBatch(x, d, ys, numbered)
	if err != nil {
		return nil, err
	}
	limit := opt.Points
	if limit == 0 {
		limit = DefaultExactLimit
	}
	pts := samplePoints(total, limit, opt.Seed, 3)
	n := total
	xs, lys := x, ys
	if pts != nil {
		n = len(pts)
		xs = make([]float64, n*d)
		for m, i := range pts {
			copy(xs[m*d:(m+1)*d], x[i*d:(i+1)*d])
		}
		lys = make([][]float64, len(ys))
		for l, y := range ys {
			s := make([]float64, 2*n)
			for m, i := range pts {
				s[2*m], s[2*m+1] = y[2*i], y[2*i+1]
			}
			lys[l] = s
		}
	}
	if n < 4 {
		return nil, fmt.Errorf("%w: R_NX needs at least 4 points, have %d", ErrTooFewPoints, n)
	}
	nq := opt.Queries
	if nq == 0 {
		nq = DefaultSamples
	}
	queries := samplePoints(n, nq, opt.Seed, 4)
	nq = n
	if queries != nil {
		nq = len(queries)
	}
	nl := len(lys)
	type scratch struct {
		dist []float64
		keys []uint64
		tmp  []uint64
		rin  []int32
		// cnt[2(l·n+m)] counts the pairs with max(ρ, r) = m of layout
		// l, cnt[2(l·n+m)+1] their intrusions minus extrusions.
		cnt []int64
	}
	nw := par.Workers(nq, chunk, opt.Threads)
	pool := make([]*scratch, nw)
	par.Chunks(nq, chunk, opt.Threads, func(w, lo, hi int) {
		if pool[w] == nil {
			pool[w] = &scratch{
				dist: make([]float64, n), keys: make([]uint64, n-1), tmp: make([]uint64, n-1),
				rin: make([]int32, n), cnt: make([]int64, 2*nl*n),
			}
		}
		sc := pool[w]
		for q := lo; q < hi; q++ {
			i := q
			if queries != nil {
				i = queries[q]
			}
			inputDistances(sc.dist, xs, d, i)
			sortRow(sc.keys, sc.tmp, sc.dist, i)
			for p, key := range sc.keys {
				sc.rin[uint32(key)] = int32(p + 1)
			}
			for l, y := range lys {
				mapDistances(sc.dist, y, i)
				sortRow(sc.keys, sc.tmp, sc.dist, i)
				cnt := sc.cnt[2*l*n : 2*(l+1)*n]
				rin := sc.rin
				for p, key := range sc.keys {
					r := int32(p + 1)
					rho := rin[uint32(key)]
					// The pair counts for K ≥ max(ρ, r); sign(ρ − r) is +1
					// for an intrusion (nearer in the map), −1 for an
					// extrusion. Branch-free: the comparison is random.
					m := max(rho, r)
					diff := rho - r
					sgn := int64(diff>>31) | int64(uint32(-diff)>>31)
					cnt[2*m]++
					cnt[2*m+1] += sgn
				}
			}
		}
	})
	// Integer sums: the result does not depend on which worker counted what.
	out := make([]*RNXCurve, nl)
	var harm float64
	for k := 1; k <= n-2; k++ {
		harm += 1 / float64(k)
	}
	for l := range out {
		c := &RNXCurve{N: n, Total: total, Queries: nq,
			QNX: make([]float64, n-2), BNX: make([]float64, n-2), RNX: make([]float64, n-2)}
		var hit, sgn int64
		var area float64
		for k := 1; k <= n-2; k++ {
			for _, sc := range pool {
				if sc != nil {
					hit += sc.cnt[2*(l*n+k)]
					sgn += sc.cnt[2*(l*n+k)+1]
				}
			}
			kq := float64(k) * float64(nq)
			c.QNX[k-1] = float64(hit) / kq
			c.BNX[k-1] = float64(sgn) / kq
			c.RNX[k-1] = (float64(n-1)*c.QNX[k-1] - float64(k)) / float64(n-1-k)
			area += c.RNX[k-1] / float64(k)
		}
		c.AUC = area / harm
		out[l] = c
	}
	return out, nil
}

// sortRow writes into keys the points other than i in ascending (dist,
// index) order, each as an index in the low 32 bits (the high bits are
// scratch). It is exact for any float64 distances ≥ 0: a stable radix sort
// on the distances rounded to float32 (rounding is monotone, so it never
// reverses two distances), then an insertion sort by (float64 distance,
// index) of each run that rounded to the same float32 — runs of one or
// two points but for exact ties, which are already in index order. Cost
// O(N) plus the runs. tmp is scratch of the same length as keys.
func sortRow(keys, tmp []uint64, dist []float64, i int) {
	m := 0
	for j, v := range dist {
		if j == i {
			continue
		}
		keys[m] = uint64(math.Float32bits(float32(v)))<<32 | uint64(j)
		m++
	}
	// Three stable counting passes over bits 32–42, 43–53, 54–63.
	var count [3][2048]int32
	for _, k := range keys {
		h := k >> 32
		count[0][h&2047]++
		count[1][(h>>11)&2047]++
		count[2][h>>22]++
	}
	src, dst := keys, tmp
	for pass := 0; pass < 3; pass++ {
		c := &count[pass]
		shift := 32 + 11*uint(pass)
		if c[(src[0]>>shift)&2047] == int32(len(src)) {
			continue // every key has this digit: the pass would not move anything
		}
		var sum int32
		for b := range c {
			c[b], sum = sum, sum+c[b]
		}
		for _, k := range src {
			b := (k >> shift) & 2047
			dst[c[b]] = k
			c[b]++
		}
		src, dst = dst, src
	}
	if &src[0] != &keys[0] {
		copy(keys, src)
	}
	// Runs of equal float32 keys: order by the exact distance, then index.
	for a := 0; a < len(keys); {
		b := a + 1
		for b < len(keys) && keys[b]>>32 == keys[a]>>32 {
			b++
		}
		if b-a > 1 {
			run := keys[a:b]
			for s := 1; s < len(run); s++ {
				k := run[s]
				v, j := dist[uint32(k)], uint32(k)
				t := s
				for t > 0 {
					pv, pj := dist[uint32(run[t-1])], uint32(run[t-1])
					if pv < v || (pv == v && pj < j) {
						break
					}
					run[t] = run[t-1]
					t--
				}
				run[t] = k
			}
		}
		a = b
	}
}
