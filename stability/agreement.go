package stability

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"

	"plumb/align"
)

// DefaultPairs is the number of point pairs DistanceCorrelation samples
// when pairs ≤ 0 is passed.
const DefaultPairs = 100000

// NeighborJaccard returns the mean over points of the Jaccard overlap of
// their k nearest neighbours in two layouts of the same points:
//
//	J = 1/N Σ_i |N_k^a(i) ∩ N_k^b(i)| / |N_k^a(i) ∪ N_k^b(i)|
//
// Neighbours are exact, self excluded, ties by smaller index. If k ≤ 0,
// DefaultK (15) is used; requires k < N. J = 1 for layouts that differ by a
// similarity transform (up to rounding of tied distances). Cost O(N k log N).
func NeighborJaccard(a, b []float64, k int) (float64, error) {
	pts, err := NeighborJaccardPoints(a, b, k, 0)
	if err != nil {
		return 0, err
	}
	return mean(pts), nil
}

// NeighborJaccardPoints returns the per-point Jaccard overlaps of
// NeighborJaccard, computed on up to threads goroutines (0 = GOMAXPROCS).
func NeighborJaccardPoints(a, b []float64, k, threads int) ([]float64, error) {
	if k <= 0 {
		k = DefaultK
	}
	if err := checkLayout("layout a", a); err != nil {
		return nil, err
	}
	if err := checkLayout("layout b", b); err != nil {
		return nil, err
	}
	if len(a) != len(b) {
		return nil, fmt.Errorf("stability: layouts have %d and %d points", len(a)/2, len(b)/2)
	}
	n := len(a) / 2
	if k >= n {
		return nil, fmt.Errorf("%w: k = %d needs at least %d points, have %d", ErrTooFewPoints, k, k+1, n)
	}
	na := mapNeighbors(a, k, nil, threads)
	nb := mapNeighbors(b, k, nil, threads)
	return jaccardRows(na, nb, n, k), nil
}

func jaccardRows(na, nb []int32, n, k int) []float64 {
	out := make([]float64, n)
	for i := 0; i < n; i++ {
		c := overlap(na[i*k:(i+1)*k], nb[i*k:(i+1)*k])
		out[i] = float64(c) / float64(2*k-c)
	}
	return out
}

func overlap(r, s []int32) int {
	c := 0
	for _, a := range r {
		for _, b := range s {
			if a == b {
				c++
				break
			}
		}
	}
	return c
}

func mean(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x
	}
	return s / float64(len(v))
}

// Spearman returns Spearman's rank correlation of x and y: the Pearson
// correlation of their ranks, tied values sharing the mean of their ranks
// (as scipy.stats.spearmanr, SciPy 1.10). Errors for unequal lengths,
// fewer than 2 values, NaN/Inf, or a constant input (correlation undefined).
// Cost O(P log P) for P values.
func Spearman(x, y []float64) (float64, error) {
	if len(x) != len(y) {
		return 0, fmt.Errorf("stability: Spearman of %d and %d values", len(x), len(y))
	}
	if len(x) < 2 {
		return 0, fmt.Errorf("stability: Spearman needs at least 2 values, got %d", len(x))
	}
	if err := checkFinite("x", x, 1); err != nil {
		return 0, err
	}
	if err := checkFinite("y", y, 1); err != nil {
		return 0, err
	}
	return rankCorrelation(ranks(x), ranks(y))
}

// rankCorrelation is the Pearson correlation of two rank lists of the same
// length P ≥ 2, each a permutation of 1…P up to tie averaging, so that
// both means are (P+1)/2.
func rankCorrelation(rx, ry []float64) (float64, error) {
	n := float64(len(rx))
	mx, my := (n+1)/2, (n+1)/2
	var sxy, sxx, syy float64
	for i := range rx {
		a, b := rx[i]-mx, ry[i]-my
		sxy += a * b
		sxx += a * a
		syy += b * b
	}
	if sxx == 0 || syy == 0 {
		return 0, fmt.Errorf("stability: Spearman of a constant input is undefined")
	}
	return sxy / math.Sqrt(sxx*syy), nil
}

// ranks returns 1-based ranks with ties given their mean rank. Tied values
// get the same rank whatever their order, so any sort by value serves;
// (value, index) pairs are sorted, which is a total order. Cost O(P log P).
func ranks(v []float64) []float64 {
	type entry struct {
		v float64
		i int
	}
	s := make([]entry, len(v))
	for i, x := range v {
		s[i] = entry{x, i}
	}
	slices.SortFunc(s, func(a, b entry) int {
		switch {
		case a.v < b.v:
			return -1
		case a.v > b.v:
			return 1
		}
		return cmp.Compare(a.i, b.i)
	})
	r := make([]float64, len(v))
	for lo := 0; lo < len(s); {
		hi := lo + 1
		for hi < len(s) && s[hi].v == s[lo].v {
			hi++
		}
		avg := float64(lo+hi+1) / 2 // mean of ranks lo+1 … hi
		for m := lo; m < hi; m++ {
			r[s[m].i] = avg
		}
		lo = hi
	}
	return r
}

// RankCorrelation is a Spearman rank correlation computed over pairs of
// points (see DistanceCorrelation).
type RankCorrelation struct {
	Value float64
	// N is the number of points; Pairs the number of pairs used; All
	// whether that is every unordered pair.
	N, Pairs int
	All      bool
}

// DistanceCorrelation returns the Spearman rank correlation between the
// Euclidean distances of the same point pairs in two spaces: a (N×da) and
// b (N×db). With da = db = 2 it compares two layouts (global arrangement);
// with the input features and a layout it measures how well the map keeps
// large-scale distances.
//
// If pairs ≤ 0, DefaultPairs is used. If pairs ≥ N(N−1)/2 every unordered
// pair is used once; otherwise pairs (i, j), i ≠ j, are drawn uniformly with
// replacement from rand.NewPCG(seed, 2). Cost O(P (da + db) + P log P).
// To compare one set of points with many others, NewDistanceRanks ranks its
// distances once; the result is the same to the bit.
func DistanceCorrelation(a []float64, da int, b []float64, db int, pairs int, seed uint64) (RankCorrelation, error) {
	if err := checkPairPoints(a, da, b, db); err != nil {
		return RankCorrelation{}, err
	}
	if err := checkFinite("b", b, db); err != nil {
		return RankCorrelation{}, err
	}
	r, err := NewDistanceRanks(a, da, pairs, seed)
	if err != nil {
		return RankCorrelation{}, err
	}
	return r.Correlation(b, db)
}

// checkPairPoints checks what DistanceCorrelation requires of a alone and
// of a and b together, in its order.
func checkPairPoints(a []float64, da int, b []float64, db int) error {
	if da < 1 || db < 1 {
		return fmt.Errorf("stability: dimensions %d and %d, want ≥ 1", da, db)
	}
	if len(a)%da != 0 || len(b)%db != 0 || len(a)/da != len(b)/db {
		return fmt.Errorf("stability: %d values of dimension %d and %d of dimension %d are not the same points", len(a), da, len(b), db)
	}
	n := len(a) / da
	if n < 3 {
		return fmt.Errorf("%w: distance correlation needs at least 3 points, have %d", ErrTooFewPoints, n)
	}
	return checkFinite("a", a, da)
}

// DistanceRanks holds a fixed list of point pairs of N points and the ranks
// (ties sharing their mean rank) of the Euclidean distances of those pairs
// in one set of coordinates. It prepares one side of DistanceCorrelation
// once, to compare it with many others: the input features with every
// layout of a study, or each layout with every other one. The pairs are
// those DistanceCorrelation uses for the same N, pairs and seed, and
// every result equals DistanceCorrelation's to the bit. A DistanceRanks is
// not modified after it is made and may be shared between goroutines.
type DistanceRanks struct {
	n, pairs int
	all      bool
	seed     uint64
	// pi, pj list the sampled pairs (nil when all pairs are used, in the
	// order (0,1), (0,2), …, (1,2), …); shared by every DistanceRanks
	// derived with Of.
	pi, pj []int
	ranks  []float64
}

// NewDistanceRanks picks the point pairs as DistanceCorrelation does for
// the N points of a (N×da) — all N(N−1)/2 pairs if pairs reaches that
// number, else pairs drawn with replacement from rand.NewPCG(seed, 2); if
// pairs ≤ 0, DefaultPairs — and ranks their distances in a. Cost
// O(P da + P log P) time; it keeps 24 bytes per pair (8 when all pairs are
// used). Errors as DistanceCorrelation's for a: da < 1, len(a) not a
// multiple of da, N < 3, NaN/Inf values, fewer than 2 pairs, or a distance
// that overflows to +Inf.
func NewDistanceRanks(a []float64, da int, pairs int, seed uint64) (*DistanceRanks, error) {
	if da < 1 {
		return nil, fmt.Errorf("stability: dimension %d, want ≥ 1", da)
	}
	if len(a)%da != 0 {
		return nil, fmt.Errorf("stability: %d values are not points of dimension %d", len(a), da)
	}
	n := len(a) / da
	if n < 3 {
		return nil, fmt.Errorf("%w: distance correlation needs at least 3 points, have %d", ErrTooFewPoints, n)
	}
	if err := checkFinite("a", a, da); err != nil {
		return nil, err
	}
	if pairs <= 0 {
		pairs = DefaultPairs
	}
	total := n * (n - 1) / 2
	r := &DistanceRanks{n: n, seed: seed, all: pairs >= total}
	if r.all {
		pairs = total
	} else {
		r.pi, r.pj = make([]int, pairs), make([]int, pairs)
		rng := rand.New(rand.NewPCG(seed, 2))
		for m := 0; m < pairs; m++ {
			i := rng.IntN(n)
			j := rng.IntN(n - 1)
			if j >= i {
				j++
			}
			r.pi[m], r.pj[m] = i, j
		}
	}
	r.pairs = pairs
	if err := r.rank(a, da, "x"); err != nil {
		return nil, err
	}
	return r, nil
}

// Of returns the ranks of the same pairs' distances in b, the same N
// points in dimension db. It shares r's pairs and keeps 8 bytes per pair;
// cost and errors as NewDistanceRanks, and b must hold N points.
func (r *DistanceRanks) Of(b []float64, db int) (*DistanceRanks, error) {
	if err := r.checkPoints(b, db); err != nil {
		return nil, err
	}
	s := &DistanceRanks{n: r.n, pairs: r.pairs, all: r.all, seed: r.seed, pi: r.pi, pj: r.pj}
	if err := s.rank(b, db, "y"); err != nil {
		return nil, err
	}
	return s, nil
}

// Correlation returns the Spearman rank correlation between the distances
// ranked in r and the distances of the same pairs in b (the same N points
// in dimension db): DistanceCorrelation(a, da, b, db, pairs, seed) for the
// a, da, pairs and seed r was made from. Cost O(P db + P log P).
func (r *DistanceRanks) Correlation(b []float64, db int) (RankCorrelation, error) {
	s, err := r.Of(b, db)
	if err != nil {
		return RankCorrelation{}, err
	}
	return r.Spearman(s)
}

// Spearman returns the Spearman rank correlation between the distances
// ranked in r and in s, which must rank the same pairs (made by Of from
// one another, or with the same N, pairs and seed). With s from r.Of(b,
// db) it equals r.Correlation(b, db). Cost O(P). It errors when either
// side's distances are all equal (correlation undefined).
func (r *DistanceRanks) Spearman(s *DistanceRanks) (RankCorrelation, error) {
	if r.n != s.n || r.pairs != s.pairs || r.all != s.all || (!r.all && r.seed != s.seed) {
		return RankCorrelation{}, fmt.Errorf("stability: distance ranks of different pairs (%d and %d points, %d and %d pairs)", r.n, s.n, r.pairs, s.pairs)
	}
	v, err := rankCorrelation(r.ranks, s.ranks)
	if err != nil {
		return RankCorrelation{}, fmt.Errorf("stability: distance correlation: %w", err)
	}
	return RankCorrelation{Value: v, N: r.n, Pairs: r.pairs, All: r.all}, nil
}

func (r *DistanceRanks) checkPoints(b []float64, db int) error {
	if db < 1 {
		return fmt.Errorf("stability: dimension %d, want ≥ 1", db)
	}
	if len(b)%db != 0 || len(b)/db != r.n {
		return fmt.Errorf("stability: %d values of dimension %d are not the %d points of the distance ranks", len(b), db, r.n)
	}
	return checkFinite("b", b, db)
}

// rank computes the pairs' distances in v (dimension d) and their ranks;
// what names the side in errors as Spearman does ("x" or "y").
func (r *DistanceRanks) rank(v []float64, d int, what string) error {
	dist := make([]float64, r.pairs)
	if r.all {
		m := 0
		for i := 0; i < r.n; i++ {
			for j := i + 1; j < r.n; j++ {
				dist[m] = pairDistance(v, d, i, j)
				m++
			}
		}
	} else {
		for m := range dist {
			dist[m] = pairDistance(v, d, r.pi[m], r.pj[m])
		}
	}
	// Spearman's checks on the distance lists, in its order.
	if r.pairs < 2 {
		return fmt.Errorf("stability: distance correlation: stability: Spearman needs at least 2 values, got %d", r.pairs)
	}
	if err := checkFinite(what, dist, 1); err != nil {
		return fmt.Errorf("stability: distance correlation: %w", err)
	}
	r.ranks = ranks(dist)
	return nil
}

func pairDistance(v []float64, d, i, j int) float64 {
	var s float64
	for c := 0; c < d; c++ {
		t := v[i*d+c] - v[j*d+c]
		s += t * t
	}
	return math.Sqrt(s)
}

// Quantile returns the q-quantile (0 ≤ q ≤ 1) of v by linear interpolation
// between order statistics, definition 7 of Hyndman & Fan (1996), the
// default of numpy.quantile and R's quantile:
//
//	h = (n − 1) q,  Q(q) = v₍⌊h⌋₎ + (h − ⌊h⌋)(v₍⌊h⌋+1₎ − v₍⌊h⌋₎)
//
// with v₍·₎ the sorted values, 0-based. v is not modified. It returns NaN
// for empty v; it panics with "stability: quantile outside [0, 1]" for q
// outside [0, 1].
func Quantile(v []float64, q float64) float64 {
	if !(q >= 0 && q <= 1) {
		panic("stability: quantile outside [0, 1]")
	}
	if len(v) == 0 {
		return math.NaN()
	}
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	return quantileSorted(s, q)
}

func quantileSorted(s []float64, q float64) float64 {
	h := float64(len(s)-1) * q
	lo := int(math.Floor(h))
	if lo >= len(s)-1 {
		return s[len(s)-1]
	}
	return s[lo] + (h-float64(lo))*(s[lo+1]-s[lo])
}

// MedianIQR is the median and interquartile range (Q3 − Q1, quantiles as
// in Quantile) of a score over the runs or pairs of runs of one setting.
// NaN means not available.
type MedianIQR struct {
	Median, IQR float64
}

// Summary describes a set of values by order statistics (quantiles as in
// Quantile): IQR = Q3 − Q1.
type Summary struct {
	Count                    int
	Min, Q1, Median, Q3, Max float64
	IQR                      float64
}

// Summarize returns the Summary of v; it errors on an empty v or NaN.
func Summarize(v []float64) (Summary, error) {
	if len(v) == 0 {
		return Summary{}, fmt.Errorf("stability: summary of no values")
	}
	if err := checkFinite("values", v, 1); err != nil {
		return Summary{}, err
	}
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	q1, q3 := quantileSorted(s, 0.25), quantileSorted(s, 0.75)
	return Summary{Count: len(s), Min: s[0], Q1: q1, Median: quantileSorted(s, 0.5), Q3: q3, Max: s[len(s)-1], IQR: q3 - q1}, nil
}

// PairAgreement is the agreement of runs A and B (indices into the layouts
// of one setting).
type PairAgreement struct {
	A, B      int
	Disparity float64 // align.Disparity(layouts[A], layouts[B])
	Jaccard   float64 // NeighborJaccard(layouts[A], layouts[B], K)
	// DistanceSpearman is DistanceCorrelation(layouts[A], 2, layouts[B], 2,
	// Pairs, Seed) when AgreementOptions.Distances is set, else 0.
	DistanceSpearman float64
}

// Agreement is the seed-to-seed agreement of one setting: every pair of its
// layouts, and the median and IQR over pairs.
type Agreement struct {
	K         int
	Pairs     []PairAgreement // (0,1), (0,2), …, (1,2), … in that order
	Disparity Summary
	Jaccard   Summary
	// DistanceSpearman summarises PairAgreement.DistanceSpearman; Count is
	// 0 when it was not computed. DistancePairs is the number of point
	// pairs each correlation used.
	DistanceSpearman Summary
	DistancePairs    int
}

// AgreementOptions configures SettingAgreementWith.
type AgreementOptions struct {
	// K is the neighbourhood size of the Jaccard overlap. If K is 0,
	// DefaultK (15) is used.
	K int
	// Threads bounds the goroutines (0 = GOMAXPROCS); results do not
	// depend on it.
	Threads int
	// Distances turns on the distance Spearman correlation of every pair,
	// over Pairs point pairs (0 = DefaultPairs) drawn with Seed; every pair
	// of layouts uses the same point pairs.
	Distances bool
	Pairs     int
	Seed      uint64
}

// SettingAgreement compares every pair of S ≥ 2 layouts of the same points
// (typically the runs of one setting with different seeds) by Procrustes
// disparity and map-neighbour Jaccard overlap at k (k ≤ 0 means DefaultK),
// and summarises each by median and interquartile range over the
// S(S−1)/2 pairs. Each layout's neighbours are found once. threads bounds
// the goroutines (0 = GOMAXPROCS); the result does not depend on it.
func SettingAgreement(layouts [][]float64, k, threads int) (*Agreement, error) {
	return SettingAgreementWith(layouts, AgreementOptions{K: k, Threads: threads})
}

// SettingAgreementWith is SettingAgreement with options; with
// opt.Distances it also summarises the distance Spearman correlation of
// every pair of layouts.
func SettingAgreementWith(layouts [][]float64, opt AgreementOptions) (*Agreement, error) {
	k, threads := opt.K, opt.Threads
	if k <= 0 {
		k = DefaultK
	}
	S := len(layouts)
	if S < 2 {
		return nil, fmt.Errorf("stability: agreement needs at least 2 layouts, got %d", S)
	}
	for s, y := range layouts {
		if err := checkLayout(fmt.Sprintf("layout %d", s), y); err != nil {
			return nil, err
		}
		if len(y) != len(layouts[0]) {
			return nil, fmt.Errorf("stability: layout %d has %d points, layout 0 has %d", s, len(y)/2, len(layouts[0])/2)
		}
	}
	n := len(layouts[0]) / 2
	if k >= n {
		return nil, fmt.Errorf("%w: k = %d needs at least %d points, have %d", ErrTooFewPoints, k, k+1, n)
	}
	nbs := make([][]int32, S)
	for s, y := range layouts {
		nbs[s] = mapNeighbors(y, k, nil, threads)
	}
	ag := &Agreement{K: k}
	var dis, jac, sp []float64
	for a := 0; a < S; a++ {
		for b := a + 1; b < S; b++ {
			d, err := align.Disparity(layouts[a], layouts[b])
			if err != nil {
				return nil, fmt.Errorf("stability: layouts %d and %d: %w", a, b, err)
			}
			j := mean(jaccardRows(nbs[a], nbs[b], n, k))
			pa := PairAgreement{A: a, B: b, Disparity: d, Jaccard: j}
			if opt.Distances {
				dc, err := DistanceCorrelation(layouts[a], 2, layouts[b], 2, opt.Pairs, opt.Seed)
				if err != nil {
					return nil, fmt.Errorf("stability: layouts %d and %d: %w", a, b, err)
				}
				pa.DistanceSpearman = dc.Value
				ag.DistancePairs = dc.Pairs
				sp = append(sp, dc.Value)
			}
			ag.Pairs = append(ag.Pairs, pa)
			dis = append(dis, d)
			jac = append(jac, j)
		}
	}
	if opt.Distances {
		var err error
		if ag.DistanceSpearman, err = Summarize(sp); err != nil {
			return nil, err
		}
	}
	var err error
	if ag.Disparity, err = Summarize(dis); err != nil {
		return nil, err
	}
	if ag.Jaccard, err = Summarize(jac); err != nil {
		return nil, err
	}
	return ag, nil
}

// DefaultSpreadThreshold is the spread above which Spread flags a point:
// positions that scatter across seeds by more than a tenth of the layout's
// RMS radius. It is our choice (no published standard); pass another
// threshold to Spread to change it.
const DefaultSpreadThreshold = 0.1

// PointSpread is the per-point spread of one setting's layouts.
type PointSpread struct {
	// Spread[i] = sqrt(1/S Σ_s ‖a_si − c_i‖²) / ρ, where a_si is point i of
	// aligned layout s, c_i the consensus position and ρ the consensus's
	// RMS radius sqrt(1/N Σ_i ‖c_i‖²).
	Spread    []float64
	Flagged   []bool // Spread[i] > Threshold
	Threshold float64
	// NumFlagged counts the flagged points.
	NumFlagged int
}

// Spread computes per-point spread from a generalised Procrustes result
// (align.Generalized of the runs of one setting). Spread measures global
// placement — how far a point lies from its consensus position, which is
// large for points far from the map's centre and for clusters that move as
// a whole — not whether a point changes group; CoAssignment reads that. If threshold ≤ 0,
// DefaultSpreadThreshold is used. Cost O(S N).
func Spread(g *align.GPAResult, threshold float64) (*PointSpread, error) {
	if g == nil || len(g.Aligned) == 0 || g.RMSRadius <= 0 || len(g.Consensus)%2 != 0 {
		return nil, fmt.Errorf("stability: spread needs a generalised Procrustes result with a non-degenerate consensus")
	}
	if threshold <= 0 {
		threshold = DefaultSpreadThreshold
	}
	n := len(g.Consensus) / 2
	S := len(g.Aligned)
	ps := &PointSpread{Spread: make([]float64, n), Flagged: make([]bool, n), Threshold: threshold}
	for s, a := range g.Aligned {
		if len(a) != len(g.Consensus) {
			return nil, fmt.Errorf("stability: aligned layout %d has %d points, consensus %d", s, len(a)/2, n)
		}
	}
	for i := 0; i < n; i++ {
		var ss float64
		for _, a := range g.Aligned {
			dx, dy := a[2*i]-g.Consensus[2*i], a[2*i+1]-g.Consensus[2*i+1]
			ss += dx*dx + dy*dy
		}
		v := math.Sqrt(ss/float64(S)) / g.RMSRadius
		ps.Spread[i] = v
		if v > threshold {
			ps.Flagged[i] = true
			ps.NumFlagged++
		}
	}
	return ps, nil
}

// SpreadOf runs align.Generalized (default tolerance and rounds) on the
// layouts of one setting and returns the per-point spread and the
// generalised Procrustes result it was measured on.
func SpreadOf(layouts [][]float64, threshold float64) (*PointSpread, *align.GPAResult, error) {
	g, err := align.Generalized(layouts, 0, 0)
	if err != nil {
		return nil, nil, fmt.Errorf("stability: spread: %w", err)
	}
	ps, err := Spread(g, threshold)
	return ps, g, err
}
