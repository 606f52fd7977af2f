package stability

import (
	"cmp"
	"fmt"
	"math"
	"slices"
)

// DefaultArrangementSilhouette is the mean silhouette width a split of
// the runs must reach for Arrange to report it: 0.5, the lower bound of "a
// reasonable structure has been found" in Kaufman & Rousseeuw (1990, ch. 2:
// 0.71–1.00 strong, 0.51–0.70 reasonable, 0.26–0.50 weak and possibly
// artificial, ≤ 0.25 none; from memory).
const DefaultArrangementSilhouette = 0.5

// Arrangements is how the runs of one setting fall into distinct
// arrangements (maps that differ from each other by more than the runs of
// each differ among themselves).
type Arrangements struct {
	// Groups lists the runs (indices into the disparity matrix, ascending)
	// of each arrangement, the largest first, ties by first run.
	Groups [][]int
	// Sizes[g] = len(Groups[g]).
	Sizes []int
	// Silhouette is the mean silhouette width of the reported split (0
	// when the runs form one group); Gap the smallest Procrustes distance
	// between runs of different groups divided by the largest within a
	// group (> 1 for every reported split; 0 for one group, +Inf when the
	// runs of each group are identical).
	Silhouette, Gap float64
	// Bimodal reports that the pair scores fall into two modes: pairs
	// within an arrangement and pairs across, every one of the first
	// below every one of the second. It is true exactly when there are
	// two or more groups.
	Bimodal bool
	// Determined is false when there are fewer than three runs: with one
	// pair there is nothing to compare a disparity with, and the runs are
	// reported as one group.
	Determined bool
}

// Arrange groups S runs by their pairwise Procrustes disparities
// (disparity[a][b], symmetric, zero diagonal, as align.Disparity gives),
// and reports how many distinct arrangements they fall into.
//
// Method: on the Procrustes distances δ_ab = √disparity_ab, every level of
// single-linkage clustering (the connected components of the graph with
// an edge wherever δ_ab ≤ t, for each t among the δ) is a candidate
// split. A candidate counts only if it leaves a clean gap — every distance
// between runs of different groups exceeds every distance within a group,
// so the grouping is unambiguous — and at least one group holds two or
// more runs. Each is scored by its mean silhouette width (Rousseeuw 1987)
//
//	s(a) = (b(a) − a(a)) / max(a(a), b(a))
//
// a(a) the mean δ from run a to the other runs of its group, b(a) the
// smallest mean δ to the runs of another group, s = 0 for a run alone in
// its group (Rousseeuw's convention). The candidate with the largest mean
// width is reported if that width reaches minSilhouette (if ≤ 0,
// DefaultArrangementSilhouette); otherwise the runs form one arrangement.
// A group of one run is a map no other run reproduced: a rare arrangement
// or an unusually noisy run, which one run cannot tell apart.
//
// Cost O(S³) for S runs (S − 1 merges, each scored in O(S²)), trivial for
// the tens of seeds a setting has. Errors for a matrix that is not square, symmetric with zero
// diagonal, or holds a negative or non-finite value.
//
// References: P. J. Rousseeuw, "Silhouettes: a graphical aid to the
// interpretation and validation of cluster analysis", J. Computational and
// Applied Mathematics 20, 1987; L. Kaufman and P. J. Rousseeuw, Finding
// Groups in Data, Wiley, 1990; P. H. A. Sneath, "The application of
// computers to taxonomy", J. General Microbiology 17, 1957 (single
// linkage).
func Arrange(disparity [][]float64, minSilhouette float64) (*Arrangements, error) {
	if err := checkDisparity(disparity); err != nil {
		return nil, err
	}
	if minSilhouette <= 0 {
		minSilhouette = DefaultArrangementSilhouette
	}
	s := len(disparity)
	one := &Arrangements{Groups: [][]int{seq(s)}, Sizes: []int{s}, Determined: s >= 3}
	if s < 3 {
		return one, nil
	}
	dist := func(a, b int) float64 { return math.Sqrt(disparity[a][b]) }
	type edge struct {
		d    float64
		a, b int
	}
	var edges []edge
	for a := 0; a < s; a++ {
		for b := a + 1; b < s; b++ {
			edges = append(edges, edge{dist(a, b), a, b})
		}
	}
	slices.SortStableFunc(edges, func(x, y edge) int { return cmp.Compare(x.d, y.d) })
	best := one
	parent := seq(s)
	find := func(a int) int {
		for parent[a] != a {
			parent[a] = parent[parent[a]]
			a = parent[a]
		}
		return a
	}
	// Single linkage, one level per distinct distance: join every pair at
	// that distance, and look at the partition only if it changed.
	for e := 0; e < len(edges); {
		merged := false
		for t := edges[e].d; e < len(edges) && edges[e].d == t; e++ {
			if ra, rb := find(edges[e].a), find(edges[e].b); ra != rb {
				parent[ra] = rb
				merged = true
			}
		}
		if !merged {
			continue
		}
		within, between := -1.0, math.Inf(1)
		for a := 0; a < s; a++ {
			for b := a + 1; b < s; b++ {
				if find(a) == find(b) {
					within = max(within, dist(a, b))
				} else {
					between = min(between, dist(a, b))
				}
			}
		}
		if within < 0 || math.IsInf(between, 1) || !(between > within) {
			continue // all singletons, one group, or no clean gap
		}
		label := make([]int, s)
		for a := range label {
			label[a] = find(a)
		}
		sil := silhouette(label, dist)
		if sil < minSilhouette || (best.Silhouette > 0 && sil <= best.Silhouette) {
			continue
		}
		byRoot := map[int][]int{}
		var roots []int
		for a := 0; a < s; a++ {
			r := label[a]
			if _, ok := byRoot[r]; !ok {
				roots = append(roots, r)
			}
			byRoot[r] = append(byRoot[r], a)
		}
		ar := &Arrangements{Silhouette: sil, Gap: math.Inf(1), Bimodal: true, Determined: true}
		if within > 0 {
			ar.Gap = between / within
		}
		for _, r := range roots {
			ar.Groups = append(ar.Groups, byRoot[r])
		}
		slices.SortStableFunc(ar.Groups, func(x, y []int) int { return len(y) - len(x) })
		for _, g := range ar.Groups {
			ar.Sizes = append(ar.Sizes, len(g))
		}
		best = ar
	}
	return best, nil
}

// silhouette returns the mean silhouette width of the grouping label
// under the distance dist (Rousseeuw 1987; 0 for a run alone).
func silhouette(label []int, dist func(a, b int) float64) float64 {
	s := len(label)
	var total float64
	for a := 0; a < s; a++ {
		sum := map[int]float64{}
		cnt := map[int]int{}
		for b := 0; b < s; b++ {
			if b != a {
				sum[label[b]] += dist(a, b)
				cnt[label[b]]++
			}
		}
		if cnt[label[a]] == 0 {
			continue
		}
		in := sum[label[a]] / float64(cnt[label[a]])
		out := math.Inf(1)
		for g, c := range cnt {
			if g != label[a] {
				out = min(out, sum[g]/float64(c))
			}
		}
		if m := max(in, out); m > 0 {
			total += (out - in) / m
		}
	}
	return total / float64(s)
}

func seq(n int) []int {
	s := make([]int, n)
	for i := range s {
		s[i] = i
	}
	return s
}

func checkDisparity(m [][]float64) error {
	s := len(m)
	if s == 0 {
		return fmt.Errorf("stability: disparity matrix has no runs")
	}
	for a, row := range m {
		if len(row) != s {
			return fmt.Errorf("stability: disparity matrix row %d has %d values, want %d", a, len(row), s)
		}
		for b, v := range row {
			switch {
			case math.IsNaN(v) || math.IsInf(v, 0) || v < 0:
				return fmt.Errorf("stability: disparity of runs %d and %d is %v, want a finite value ≥ 0", a, b, v)
			case a == b && v != 0:
				return fmt.Errorf("stability: disparity of run %d with itself is %v, want 0", a, v)
			case m[b][a] != v:
				return fmt.Errorf("stability: disparity matrix is not symmetric: runs %d and %d give %v and %v", a, b, v, m[b][a])
			}
		}
	}
	return nil
}

// DisparityMatrix builds the S×S disparity matrix of S runs from the pairs
// of an Agreement (SettingAgreement of the same runs).
func DisparityMatrix(ag *Agreement, runs int) ([][]float64, error) {
	m := make([][]float64, runs)
	for a := range m {
		m[a] = make([]float64, runs)
	}
	if len(ag.Pairs) != runs*(runs-1)/2 {
		return nil, fmt.Errorf("stability: agreement has %d pairs, %d runs need %d", len(ag.Pairs), runs, runs*(runs-1)/2)
	}
	for _, p := range ag.Pairs {
		if p.A < 0 || p.B < 0 || p.A >= runs || p.B >= runs || p.A == p.B {
			return nil, fmt.Errorf("stability: agreement pair (%d, %d) outside %d runs", p.A, p.B, runs)
		}
		m[p.A][p.B], m[p.B][p.A] = p.Disparity, p.Disparity
	}
	return m, nil
}

// Medoid returns the run with the least total disparity to the other runs
// (the map the others are, in sum, closest to); ties go to the first run
// in matrix order (seed order). Unlike a consensus, the medoid is a map
// that a run produced. Errors as Arrange's for a bad matrix.
func Medoid(disparity [][]float64) (int, error) {
	if err := checkDisparity(disparity); err != nil {
		return 0, err
	}
	best, bestSum := 0, math.Inf(1)
	for a, row := range disparity {
		var sum float64
		for _, v := range row {
			sum += v
		}
		if sum < bestSum {
			best, bestSum = a, sum
		}
	}
	return best, nil
}

// DefaultConsensusDisparity is the largest pairwise disparity at which
// ConsensusAgrees lets an averaged consensus stand beside the medoid map.
// Disparity is the residual share of the layouts' variance after the best
// similarity fit, so runs that scatter independently around a common map
// with RMS offset σ (as a fraction of the map's RMS radius) have pairwise
// disparity about 2σ². 0.02 = 2·0.1²: on average every run lies within a
// tenth of the radius of the consensus — the same tenth beyond which Spread
// flags a point (DefaultSpreadThreshold; our choice, no published
// standard).
const DefaultConsensusDisparity = 0.02

// ConsensusAgrees reports whether an average of the runs (a generalised
// Procrustes consensus) may be shown beside the medoid run: only when
// something varied between the runs (varied is true; identical runs
// measure nothing), there are at least two, they form one arrangement
// (Arrange with DefaultArrangementSilhouette), and every pairwise disparity is
// at most limit (if limit ≤ 0, DefaultConsensusDisparity). Otherwise the
// average mixes maps that disagree and may show shapes no run produced;
// reason says why in a phrase. Errors as Arrange's for a bad matrix.
func ConsensusAgrees(disparity [][]float64, varied bool, limit float64) (ok bool, reason string, err error) {
	ar, err := Arrange(disparity, 0)
	if err != nil {
		return false, "", err
	}
	if limit <= 0 {
		limit = DefaultConsensusDisparity
	}
	switch {
	case !varied:
		return false, "nothing varied between the runs", nil
	case len(disparity) < 2:
		return false, "fewer than two runs", nil
	case len(ar.Groups) > 1:
		return false, fmt.Sprintf("the runs fall into %d distinct arrangements", len(ar.Groups)), nil
	}
	worst := 0.0
	for a, row := range disparity {
		for b := a + 1; b < len(row); b++ {
			worst = max(worst, row[b])
		}
	}
	if worst > limit {
		return false, fmt.Sprintf("the largest disparity between two runs, %.3g, exceeds %g", worst, limit), nil
	}
	return true, "", nil
}

// Minimum seeds. If a setting's runs fall into an arrangement with
// probability p, s independent seeds all miss it with probability
// (1 − p)^s; to see it at least once with probability 1 − α takes
//
//	s ≥ ln α / ln(1 − p)
//
// seeds. The defaults, our own choice, ask to see with 95% probability
// any arrangement that at least one run in four falls into: 11 seeds
// (3 seeds miss such an arrangement 42% of the time, 5 seeds 24%).
const (
	DefaultRareArrangement = 0.25
	DefaultMissRisk        = 0.05
)

// MissProbability returns (1 − p)^seeds, the probability that seeds
// independent runs all miss an arrangement that a run falls into with
// probability p. It panics for p outside [0, 1] or seeds < 0.
func MissProbability(p float64, seeds int) float64 {
	if !(p >= 0 && p <= 1) || seeds < 0 {
		panic("stability: MissProbability needs 0 ≤ p ≤ 1 and seeds ≥ 0")
	}
	return math.Pow(1-p, float64(seeds))
}

// SeedsNeeded returns the fewest seeds s with MissProbability(p, s) ≤
// alpha: ⌈ln α / ln(1 − p)⌉ (at least 1). If p or alpha is 0 the defaults
// are used. It panics for p or alpha outside (0, 1).
func SeedsNeeded(p, alpha float64) int {
	if p == 0 {
		p = DefaultRareArrangement
	}
	if alpha == 0 {
		alpha = DefaultMissRisk
	}
	if !(p > 0 && p < 1 && alpha > 0 && alpha < 1) {
		panic("stability: SeedsNeeded needs 0 < p < 1 and 0 < alpha < 1")
	}
	s := int(math.Ceil(math.Log(alpha)/math.Log(1-p) - 1e-9))
	return max(1, s)
}

// SeedWarning returns a one-sentence warning when seeds runs are too few
// for a stability reading to mean much (fewer than SeedsNeeded with the
// defaults), and "" otherwise.
func SeedWarning(seeds int) string {
	need := SeedsNeeded(0, 0)
	if seeds >= need {
		return ""
	}
	return fmt.Sprintf("only %d seeds: an arrangement that one run in %d falls into is missed with probability %.0f%%; %d seeds bring that under %.0f%%",
		seeds, int(math.Round(1/DefaultRareArrangement)), 100*MissProbability(DefaultRareArrangement, seeds), need, 100*DefaultMissRisk)
}
