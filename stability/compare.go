package stability

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
)

// ErrNoReference reports two sets of runs that have no run-to-run variation
// to measure a change against: no pair of runs within a set, or a set with
// no runs.
var ErrNoReference = errors.New("stability: no run-to-run reference")

// MaxExactRelabelings is the largest number of relabelings CompareSets
// enumerates exactly; beyond it, it draws MonteCarloRelabelings at random.
const MaxExactRelabelings = 50000

// MonteCarloRelabelings is the number of random relabelings CompareSets
// draws (besides the observed labelling) when there are more than
// MaxExactRelabelings.
const MonteCarloRelabelings = 19999

// SetShift compares two sets of runs of one setting — a baseline set A and
// a current set B — by a score computed for every pair of runs, such as
// the Procrustes disparity or the kNN Jaccard overlap. See CompareSets.
type SetShift struct {
	// RunsA and RunsB count the runs of each set.
	RunsA, RunsB int
	// WithinA, WithinB and Across are the mean scores over the pairs of
	// runs within A, within B and across the sets (one run of each), in the
	// score's units; NaN where a set has fewer than two runs.
	WithinA, WithinB, Across float64
	// Shift is how much less alike runs of different sets are than runs of
	// the same set, in the score's units: Across − Within for a
	// dissimilarity and Within − Across for a similarity, where Within is
	// the mean of WithinA and WithinB (or the one that exists). It is 0 on
	// average when both sets are draws of the same random process, and
	// positive when the sets differ.
	Shift float64
	// P is the one-sided permutation p-value of Shift: the share of
	// relabelings of the runs into sets of the same sizes (the observed one
	// included) whose shift is at least the observed one. PMin is the
	// smallest value P can take with these set sizes.
	P, PMin float64
	// Relabelings is the number of labellings P was computed over; Exact
	// says whether that is all of them (else a seeded random sample).
	Relabelings int
	Exact       bool
}

// CompareSets tests whether two sets of runs of one setting differ by more
// than the runs of one set differ among themselves — whether the current
// runs still look like draws of the baseline's random process (same code,
// same data, other seeds) or like something else.
//
// score holds a score for every pair of the n = len(inB) runs as an n×n
// row-major matrix (only the upper triangle is read); inB[i] says whether
// run i belongs to the current set B (else to the baseline set A). If
// similar is true the score grows as runs agree (kNN Jaccard); otherwise it
// grows as they differ (Procrustes disparity).
//
// The statistic is the shift: the mean score of pairs across the sets
// against the mean score of pairs within a set,
//
//	Δ = mean_AB d − (mean_AA d + mean_BB d)/2
//
// with d the score oriented as a dissimilarity (a form of the energy
// distance of Székely & Rizzo; with one run in a set, its within term is
// left out). The reference is the permutation distribution: under the null
// hypothesis the runs are exchangeable — which set a run belongs to says
// nothing about it — so every relabelling of the n runs into sets of sizes
// |A| and |B| is as likely as the observed one, and
//
//	P = #{relabelings with Δ' ≥ Δ} / #relabelings
//
// is an exact p-value whatever the distribution of the runs (several
// distinct arrangements, skewed scores, pairs sharing runs). All
// C(n, |B|) relabelings are enumerated up to MaxExactRelabelings; beyond
// that MonteCarloRelabelings are drawn with a PCG source seeded by seed,
// and P = (1 + #{Δ' ≥ Δ})/(1 + MonteCarloRelabelings), still a valid
// p-value (Phipson & Smyth). The test is one-sided: only runs of the two
// sets being less alike than runs of one set counts.
//
// P cannot be smaller than PMin (1/C(n, |B|), or 2/C(n, |B|) when |A| =
// |B| because the statistic is then symmetric in the sets): with 3 runs in
// each set PMin is 0.1, so few runs cannot give a small p-value however
// large the shift.
//
// It returns an error wrapping ErrNoReference when a set has no runs or
// neither set has two (so no pair of runs shows the run-to-run variation).
// Cost O(R n²) for R relabelings.
//
// References:
//   - R. A. Fisher, The Design of Experiments, Oliver & Boyd, 1935 (§21,
//     the randomisation test).
//   - G. J. Székely and M. L. Rizzo, "Testing for equal distributions in
//     high dimension", InterStat 5, 2004 (the energy statistic).
//   - B. Phipson and G. K. Smyth, "Permutation p-values should never be
//     zero", Statistical Applications in Genetics and Molecular Biology
//     9(1), article 39, 2010.
func CompareSets(score []float64, inB []bool, similar bool, seed uint64) (SetShift, error) {
	n := len(inB)
	if len(score) != n*n {
		panic("stability: pair score matrix size mismatch")
	}
	k := 0
	for _, b := range inB {
		if b {
			k++
		}
	}
	m := n - k
	res := SetShift{RunsA: m, RunsB: k, WithinA: math.NaN(), WithinB: math.NaN(), Across: math.NaN(),
		Shift: math.NaN(), P: math.NaN(), PMin: math.NaN()}
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			if v := score[i*n+j]; math.IsNaN(v) || math.IsInf(v, 0) {
				return res, fmt.Errorf("stability: pair score of runs %d and %d is %v", i, j, v)
			}
		}
	}
	aa, bb, ab := sums(score, n, inB)
	if m >= 2 {
		res.WithinA = aa / float64(m*(m-1)/2)
	}
	if k >= 2 {
		res.WithinB = bb / float64(k*(k-1)/2)
	}
	if m >= 1 && k >= 1 {
		res.Across = ab / float64(m*k)
	}
	if m == 0 || k == 0 || (m < 2 && k < 2) {
		return res, fmt.Errorf("%w: %d and %d runs (a comparison needs a run in each set and two in one of them)", ErrNoReference, m, k)
	}
	sign := 1.0
	if similar {
		sign = -1
	}
	stat := func(aa, bb, ab float64) float64 {
		var within float64
		switch {
		case m >= 2 && k >= 2:
			within = (aa/float64(m*(m-1)/2) + bb/float64(k*(k-1)/2)) / 2
		case m >= 2:
			within = aa / float64(m*(m-1)/2)
		default:
			within = bb / float64(k*(k-1)/2)
		}
		return sign * (ab/float64(m*k) - within)
	}
	obs := stat(aa, bb, ab)
	res.Shift = obs
	// A relabelling counts as at least as extreme when its statistic
	// reaches the observed one up to rounding of the sums.
	tol := 1e-12 * (1 + math.Abs(obs))
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			tol = math.Max(tol, 1e-12*math.Abs(score[i*n+j]))
		}
	}
	total := binomial(n, k)
	res.PMin = 1 / total
	if m == k {
		res.PMin = 2 / total
	}
	lab := make([]bool, n)
	count := func() bool {
		a, b, c := sums(score, n, lab)
		return stat(a, b, c) >= obs-tol
	}
	if total <= MaxExactRelabelings {
		hits, all := 0, 0
		// Enumerate the k-subsets of 0..n-1 in lexicographic order.
		idx := make([]int, k)
		for i := range idx {
			idx[i] = i
		}
		for {
			clear(lab)
			for _, i := range idx {
				lab[i] = true
			}
			all++
			if count() {
				hits++
			}
			i := k - 1
			for i >= 0 && idx[i] == n-k+i {
				i--
			}
			if i < 0 {
				break
			}
			idx[i]++
			for j := i + 1; j < k; j++ {
				idx[j] = idx[j-1] + 1
			}
		}
		res.P, res.Relabelings, res.Exact = float64(hits)/float64(all), all, true
		return res, nil
	}
	rng := rand.New(rand.NewPCG(seed, 0x5e75))
	perm := make([]int, n)
	for i := range perm {
		perm[i] = i
	}
	hits := 1 // the observed labelling
	for r := 0; r < MonteCarloRelabelings; r++ {
		// A uniformly random k-subset: the first k of a partial shuffle.
		for i := 0; i < k; i++ {
			j := i + rng.IntN(n-i)
			perm[i], perm[j] = perm[j], perm[i]
		}
		clear(lab)
		for _, i := range perm[:k] {
			lab[i] = true
		}
		if count() {
			hits++
		}
	}
	res.P = float64(hits) / float64(MonteCarloRelabelings+1)
	res.Relabelings, res.Exact = MonteCarloRelabelings+1, false
	res.PMin = 1 / float64(MonteCarloRelabelings+1)
	return res, nil
}

// sums returns the sums of the upper-triangle scores over pairs within A,
// within B and across, for the labelling inB.
func sums(score []float64, n int, inB []bool) (aa, bb, ab float64) {
	for i := 0; i < n; i++ {
		row := score[i*n:]
		for j := i + 1; j < n; j++ {
			switch {
			case inB[i] != inB[j]:
				ab += row[j]
			case inB[i]:
				bb += row[j]
			default:
				aa += row[j]
			}
		}
	}
	return aa, bb, ab
}

// binomial returns C(n, k) as a float64 (exact up to 2⁵³).
func binomial(n, k int) float64 {
	if k < 0 || k > n {
		return 0
	}
	k = min(k, n-k)
	c := 1.0
	for i := 1; i <= k; i++ {
		c = c * float64(n-k+i) / float64(i)
	}
	return math.Round(c)
}
