package stability

import (
	"fmt"
	"math"
	"math/rand/v2"
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
	rx, ry := ranks(x), ranks(y)
	n := float64(len(x))
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

// ranks returns 1-based ranks with ties given their mean rank.
func ranks(v []float64) []float64 {
	idx := make([]int, len(v))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return v[idx[a]] < v[idx[b]] })
	r := make([]float64, len(v))
	for lo := 0; lo < len(idx); {
		hi := lo + 1
		for hi < len(idx) && v[idx[hi]] == v[idx[lo]] {
			hi++
		}
		avg := float64(lo+hi+1) / 2 // mean of ranks lo+1 … hi
		for m := lo; m < hi; m++ {
			r[idx[m]] = avg
		}
		lo = hi
	}
	return r
}

// PairScore is a score computed over pairs of points.
type PairScore struct {
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
func DistanceCorrelation(a []float64, da int, b []float64, db int, pairs int, seed uint64) (PairScore, error) {
	if da < 1 || db < 1 {
		return PairScore{}, fmt.Errorf("stability: dimensions %d and %d, want ≥ 1", da, db)
	}
	if len(a)%da != 0 || len(b)%db != 0 || len(a)/da != len(b)/db {
		return PairScore{}, fmt.Errorf("stability: %d values of dimension %d and %d of dimension %d are not the same points", len(a), da, len(b), db)
	}
	n := len(a) / da
	if n < 3 {
		return PairScore{}, fmt.Errorf("%w: distance correlation needs at least 3 points, have %d", ErrTooFewPoints, n)
	}
	if err := checkFinite("a", a, da); err != nil {
		return PairScore{}, err
	}
	if err := checkFinite("b", b, db); err != nil {
		return PairScore{}, err
	}
	if pairs <= 0 {
		pairs = DefaultPairs
	}
	total := n * (n - 1) / 2
	all := pairs >= total
	if all {
		pairs = total
	}
	dista, distb := make([]float64, pairs), make([]float64, pairs)
	dist := func(v []float64, d, i, j int) float64 {
		var s float64
		for c := 0; c < d; c++ {
			t := v[i*d+c] - v[j*d+c]
			s += t * t
		}
		return math.Sqrt(s)
	}
	if all {
		m := 0
		for i := 0; i < n; i++ {
			for j := i + 1; j < n; j++ {
				dista[m], distb[m] = dist(a, da, i, j), dist(b, db, i, j)
				m++
			}
		}
	} else {
		rng := rand.New(rand.NewPCG(seed, 2))
		for m := 0; m < pairs; m++ {
			i := rng.IntN(n)
			j := rng.IntN(n - 1)
			if j >= i {
				j++
			}
			dista[m], distb[m] = dist(a, da, i, j), dist(b, db, i, j)
		}
	}
	r, err := Spearman(dista, distb)
	if err != nil {
		return PairScore{}, fmt.Errorf("stability: distance correlation: %w", err)
	}
	return PairScore{Value: r, N: n, Pairs: pairs, All: all}, nil
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
// (align.Generalized of the runs of one setting). If threshold ≤ 0,
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
