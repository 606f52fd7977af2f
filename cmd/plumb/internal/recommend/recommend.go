package recommend

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"plumb/stability"
)

// Setting is one row of the score table the rule reads: one setting of a
// study, summarised over its finished runs (medians and interquartile
// ranges across runs or pairs of runs, as in scores/settings.parquet).
type Setting struct {
	ID         string
	Perplexity float64
	// Runs is the number of finished runs behind the scores.
	Runs int
	// Varied names what differed between the setting's runs: "seed",
	// "subsample", "seed+subsample", or "" when nothing did (pca
	// initialisation on the whole data: the runs can only be identical,
	// so their stability is not measured).
	Varied string
	// RNXAUC is the median and IQR over runs of the area under the R_NX(K)
	// curve on a log-K axis (stability.RNXCurve.AUC; column rnx_auc).
	RNXAUC stability.MedianIQR
	// Disparity and Jaccard are the median and IQR over pairs of runs of
	// the Procrustes disparity and the map-neighbour Jaccard overlap; NaN
	// when not measured.
	Disparity, Jaccard stability.MedianIQR
	// Arrangements is the number of distinct arrangements the runs fall
	// into (stability.Arrange); 0 when not measured.
	Arrangements int
	// KL is the median and IQR over runs of the final KL divergence. The
	// rule compares it only between settings of the same perplexity.
	KL stability.MedianIQR
}

// Measured reports whether the setting's stability was measured: at least
// two runs and something varied between them.
func (s Setting) Measured() bool {
	return s.Varied != "" && s.Runs >= 2 && finite(s.Disparity.Median) && finite(s.Jaccard.Median) && s.Arrangements >= 1
}

// Rule holds the tolerances of the recommendation rule. Zero fields take
// the defaults, which are our choice (common practice, no source).
type Rule struct {
	// AUCTolerance: settings whose median R_NX AUC is within this of the
	// best count as equally faithful. If 0, 0.01 is used: about twice the
	// largest seed-to-seed IQR of the AUC measured on the digits grid of
	// TestPerplexityGridDigits (0.0047, 3 seeds) and an eighth of the span
	// across its perplexities 5–300 (0.454–0.537); our choice.
	AUCTolerance float64
	// DisparityTolerance: among equally faithful settings measured under
	// the same perturbation, those whose median disparity is within this of
	// the lowest count as equally stable. If 0, 0.01.
	DisparityTolerance float64
	// JaccardTolerance: among those, settings whose median Jaccard is
	// within this of the highest count as equally stable. If 0, 0.02.
	JaccardTolerance float64
	// KLTolerance: among the remaining settings of one perplexity, those
	// whose median KL is within this fraction of the lowest are kept. If
	// 0, 0.01 (1%).
	KLTolerance float64
}

func (r Rule) withDefaults() Rule {
	if r.AUCTolerance == 0 {
		r.AUCTolerance = 0.01
	}
	if r.DisparityTolerance == 0 {
		r.DisparityTolerance = 0.01
	}
	if r.JaccardTolerance == 0 {
		r.JaccardTolerance = 0.02
	}
	if r.KLTolerance == 0 {
		r.KLTolerance = 0.01
	}
	return r
}

// Steps of the rule, as Recommendation.DecidedBy names them.
const (
	StepFaithfulness = "faithfulness"
	StepMeasured     = "stability measured"
	StepArrangements = "arrangements"
	StepDisparity    = "disparity"
	StepJaccard      = "jaccard"
	StepKL           = "kl"
	StepAUC          = "auc"
	StepOrder        = "order"
)

// References lists the sources of the rule's scores.
var References = []string{
	"J. A. Lee and M. Verleysen, \"Quality assessment of dimensionality reduction: rank-based criteria\", Neurocomputing 72, 2009.",
	"J. A. Lee, D. H. Peluffo-Ordóñez and M. Verleysen, \"Multi-scale similarities in stochastic neighbour embedding: reducing dimensionality while preserving both local and global structure\", Neurocomputing 169, 2015.",
	"P. H. Schönemann, \"A generalized solution of the orthogonal Procrustes problem\", Psychometrika 31, 1966.",
	"P. J. Rousseeuw, \"Silhouettes: a graphical aid to the interpretation and validation of cluster analysis\", J. Computational and Applied Mathematics 20, 1987.",
	"L. van der Maaten and G. Hinton, \"Visualizing Data using t-SNE\", JMLR 9, 2008.",
}

// Words states the rule in plain English with its tolerances filled in,
// for the report and methods.md.
func (r Rule) Words() string {
	r = r.withDefaults()
	return fmt.Sprintf("Every setting with at least one finished run and a defined faithfulness score takes part. "+
		"(1) Faithfulness first: keep the settings whose median R_NX AUC — the area under the rank-based quality curve R_NX(K) "+
		"over all neighbourhood sizes K on a logarithmic K axis (Lee & Verleysen 2009; Lee, Peluffo-Ordóñez & Verleysen 2015), "+
		"which weighs every scale alike so that neither the smallest nor the largest perplexity wins by construction — is within %g of the best. "+
		"(2) Stability is compared only where it was measured and only between settings measured under the same perturbation "+
		"(what varied between the runs: seed, subsample, or both). If any kept setting has measured stability, the settings whose stability was not measured "+
		"(fewer than two runs, or runs that could only be identical, such as PCA starts on the whole data) drop out here: an unmeasured stability never wins. "+
		"Then, within each kind of perturbation: (3) keep the settings whose runs fall into the fewest distinct arrangements; "+
		"(4) keep those whose median Procrustes disparity between runs is within %g of the lowest; "+
		"(5) keep those whose median map-neighbour Jaccard overlap is within %g of the highest. "+
		"(6) KL divergence is compared only between settings of the same perplexity (KL against different affinities P is not comparable): "+
		"keep those whose median final KL is within %g%% of the lowest at their perplexity. "+
		"(7) Pick the highest median R_NX AUC; an exact tie goes to the first setting id in sort order. "+
		"The runner-up is what the same rule picks once the chosen setting is set aside; the report names the step that separated them and the margin on that step's score. "+
		"A setting counts as indistinguishable from the chosen one when its median R_NX AUC is within %g of the chosen one's or the ranges median ± IQR/2 overlap, "+
		"and, if both were measured under the same perturbation, the same holds for the median disparity (tolerance %g).",
		r.AUCTolerance, r.DisparityTolerance, r.JaccardTolerance, 100*r.KLTolerance, r.AUCTolerance, r.DisparityTolerance)
}

// Exclusion names a setting left out of the rule and why.
type Exclusion struct {
	ID, Reason string
}

// Recommendation is the outcome of the rule on a score table.
type Recommendation struct {
	Rule Rule
	// Chosen is the picked setting; RunnerUp is nil when only one setting
	// took part.
	Chosen, RunnerUp *Setting
	// DecidedBy names the step that separated the chosen setting from the
	// runner-up (one of the Step constants); Margin is the runner-up's
	// distance on that step's score (AUC, arrangements, disparity,
	// Jaccard, or relative KL; 0 for StepMeasured and StepOrder), and Why
	// says it in a sentence.
	DecidedBy string
	Margin    float64
	Why       string
	// Ranking lists every setting id in the order the rule ranks them.
	Ranking []string
	// StabilityMeasured is false when the chosen setting's stability was
	// not measured: the pick then rests on faithfulness alone.
	StabilityMeasured bool
	// Indistinguishable lists the ids of the settings that cannot be told
	// apart from the chosen one: their median R_NX AUC is within the
	// tolerance of the chosen one's or the ranges median ± IQR/2 overlap,
	// and, when both were measured under the same perturbation, the same
	// holds for the median disparity.
	Indistinguishable []string
	// Excluded lists the settings that did not take part.
	Excluded []Exclusion
}

// ErrNoSetting is returned by Recommend when no setting can take part.
var ErrNoSetting = errors.New("recommend: no setting has a finished run with a defined faithfulness score, so none can be recommended")

// Recommend applies the rule (see Rule.Words) to the settings. The input
// slice is not modified.
func Recommend(settings []Setting, rule Rule) (*Recommendation, error) {
	rule = rule.withDefaults()
	rec := &Recommendation{Rule: rule}
	var pool []Setting
	for _, s := range settings {
		switch {
		case s.Runs < 1:
			rec.Excluded = append(rec.Excluded, Exclusion{s.ID, "no finished run"})
		case !finite(s.RNXAUC.Median):
			rec.Excluded = append(rec.Excluded, Exclusion{s.ID, "R_NX AUC not available"})
		default:
			pool = append(pool, s)
		}
	}
	if len(pool) == 0 {
		return nil, ErrNoSetting
	}
	sort.SliceStable(pool, func(i, j int) bool { return pool[i].ID < pool[j].ID })
	rest := slices.Clone(pool)
	var first *pass
	for len(rest) > 0 {
		p := rule.apply(rest)
		if first == nil {
			first = p
		}
		rec.Ranking = append(rec.Ranking, rest[p.winner].ID)
		rest = slices.Delete(rest, p.winner, p.winner+1)
	}
	chosen := find(pool, rec.Ranking[0])
	rec.Chosen = &chosen
	rec.StabilityMeasured = chosen.Measured()
	if len(rec.Ranking) > 1 {
		ru := find(pool, rec.Ranking[1])
		rec.RunnerUp = &ru
		rec.DecidedBy, rec.Margin, rec.Why = first.reason(ru, chosen, rule)
	}
	for _, s := range pool {
		if s.ID == chosen.ID || !near(s.RNXAUC.Median, s.RNXAUC.IQR, chosen.RNXAUC.Median, chosen.RNXAUC.IQR, rule.AUCTolerance) {
			continue
		}
		if s.Measured() && chosen.Measured() && s.Varied == chosen.Varied &&
			!near(s.Disparity.Median, s.Disparity.IQR, chosen.Disparity.Median, chosen.Disparity.IQR, rule.DisparityTolerance) {
			continue
		}
		rec.Indistinguishable = append(rec.Indistinguishable, s.ID)
	}
	return rec, nil
}

func find(ss []Setting, id string) Setting {
	for _, s := range ss {
		if s.ID == id {
			return s
		}
	}
	panic("recommend: setting vanished")
}

// near reports whether two medians are within tol or their ranges
// median ± IQR/2 overlap (a missing IQR counts as 0).
func near(a, aIQR, b, bIQR, tol float64) bool {
	if math.Abs(a-b) <= tol {
		return true
	}
	if !finite(aIQR) {
		aIQR = 0
	}
	if !finite(bIQR) {
		bIQR = 0
	}
	return a-aIQR/2 <= b+bIQR/2 && b-bIQR/2 <= a+aIQR/2
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// pass records one application of the rule: the step at which each
// setting dropped out, and the reference value of that step.
type pass struct {
	winner  int
	dropped map[string]string  // id → step
	ref     map[string]float64 // id → the best value it was compared with
	bestAUC float64
}

func (r Rule) apply(ss []Setting) *pass {
	p := &pass{dropped: map[string]string{}, ref: map[string]float64{}}
	alive := func(s Setting) bool { _, out := p.dropped[s.ID]; return !out }
	drop := func(s Setting, step string, ref float64) {
		p.dropped[s.ID], p.ref[s.ID] = step, ref
	}
	// (1) Faithfulness.
	p.bestAUC = math.Inf(-1)
	for _, s := range ss {
		p.bestAUC = math.Max(p.bestAUC, s.RNXAUC.Median)
	}
	for _, s := range ss {
		if s.RNXAUC.Median < p.bestAUC-r.AUCTolerance {
			drop(s, StepFaithfulness, p.bestAUC)
		}
	}
	// (2) Stability counts only where measured.
	anyMeasured := false
	for _, s := range ss {
		if alive(s) && s.Measured() {
			anyMeasured = true
		}
	}
	if anyMeasured {
		for _, s := range ss {
			if alive(s) && !s.Measured() {
				drop(s, StepMeasured, 0)
			}
		}
	}
	// (3)–(5) within each kind of perturbation.
	kinds := map[string]bool{}
	for _, s := range ss {
		if alive(s) && s.Measured() {
			kinds[s.Varied] = true
		}
	}
	for kind := range kinds {
		group := func() []Setting {
			var g []Setting
			for _, s := range ss {
				if alive(s) && s.Measured() && s.Varied == kind {
					g = append(g, s)
				}
			}
			return g
		}
		fewest := math.MaxInt
		for _, s := range group() {
			fewest = min(fewest, s.Arrangements)
		}
		for _, s := range group() {
			if s.Arrangements > fewest {
				drop(s, StepArrangements, float64(fewest))
			}
		}
		lowest := math.Inf(1)
		for _, s := range group() {
			lowest = math.Min(lowest, s.Disparity.Median)
		}
		for _, s := range group() {
			if s.Disparity.Median > lowest+r.DisparityTolerance {
				drop(s, StepDisparity, lowest)
			}
		}
		highest := math.Inf(-1)
		for _, s := range group() {
			highest = math.Max(highest, s.Jaccard.Median)
		}
		for _, s := range group() {
			if s.Jaccard.Median < highest-r.JaccardTolerance {
				drop(s, StepJaccard, highest)
			}
		}
	}
	// (6) KL within one perplexity.
	lowKL := map[float64]float64{}
	for _, s := range ss {
		if alive(s) && finite(s.KL.Median) {
			if v, ok := lowKL[s.Perplexity]; !ok || s.KL.Median < v {
				lowKL[s.Perplexity] = s.KL.Median
			}
		}
	}
	for _, s := range ss {
		if !alive(s) {
			continue
		}
		low, ok := lowKL[s.Perplexity]
		if ok && (!finite(s.KL.Median) || s.KL.Median > low*(1+r.KLTolerance)) {
			drop(s, StepKL, low)
		}
	}
	// (7) Highest AUC; ss is sorted by id, so a strict > keeps the first.
	p.winner = -1
	for i, s := range ss {
		if alive(s) && (p.winner < 0 || s.RNXAUC.Median > ss[p.winner].RNXAUC.Median) {
			p.winner = i
		}
	}
	for i, s := range ss {
		if alive(s) && i != p.winner {
			if s.RNXAUC.Median < ss[p.winner].RNXAUC.Median {
				drop(s, StepAUC, ss[p.winner].RNXAUC.Median)
			} else {
				drop(s, StepOrder, 0)
			}
		}
	}
	return p
}

// reason explains at which step the runner-up dropped out of p.
func (p *pass) reason(ru, chosen Setting, r Rule) (step string, margin float64, why string) {
	step = p.dropped[ru.ID]
	ref := p.ref[ru.ID]
	switch step {
	case StepFaithfulness:
		margin = ref - ru.RNXAUC.Median
		why = fmt.Sprintf("its median R_NX AUC (%.4f) is %.4f below the best (%.4f), more than the tolerance %g", ru.RNXAUC.Median, margin, ref, r.AUCTolerance)
	case StepMeasured:
		why = fmt.Sprintf("it is as faithful, but its stability was not measured (%s), and an unmeasured stability never wins", unmeasured(ru))
	case StepArrangements:
		margin = float64(ru.Arrangements) - ref
		why = fmt.Sprintf("it is as faithful, but its runs fall into %d distinct arrangements against %g for the most consistent setting measured under the same perturbation (%s)", ru.Arrangements, ref, ru.Varied)
	case StepDisparity:
		margin = ru.Disparity.Median - ref
		why = fmt.Sprintf("it is as faithful, but its median disparity (%.4f) is %.4f above the lowest under the same perturbation (%s: %.4f), more than the tolerance %g", ru.Disparity.Median, margin, ru.Varied, ref, r.DisparityTolerance)
	case StepJaccard:
		margin = ref - ru.Jaccard.Median
		why = fmt.Sprintf("it is as faithful and as low in disparity, but its median Jaccard (%.4f) is %.4f below the highest under the same perturbation (%s: %.4f), more than the tolerance %g", ru.Jaccard.Median, margin, ru.Varied, ref, r.JaccardTolerance)
	case StepKL:
		if finite(ru.KL.Median) {
			margin = ru.KL.Median/ref - 1
		}
		why = fmt.Sprintf("it ties on faithfulness and stability, but its median KL divergence (%.4f) is %.1f%% above the lowest at the same perplexity %g (%.4f)", ru.KL.Median, 100*margin, ru.Perplexity, ref)
	case StepAUC:
		margin = ref - ru.RNXAUC.Median
		why = fmt.Sprintf("it ties within the tolerances on every step, and its median R_NX AUC (%.4f) is %.4f below the chosen setting's (%.4f)", ru.RNXAUC.Median, margin, ref)
	default:
		why = "it ties on every step, R_NX AUC included; the chosen setting comes first in id order"
	}
	_ = chosen
	return step, margin, why
}

func unmeasured(s Setting) string {
	var parts []string
	if s.Varied == "" {
		parts = append(parts, "nothing varied between its runs")
	}
	if s.Runs < 2 {
		parts = append(parts, fmt.Sprintf("%d finished run", s.Runs))
	}
	if len(parts) == 0 {
		parts = append(parts, "agreement scores missing")
	}
	return strings.Join(parts, ", ")
}
