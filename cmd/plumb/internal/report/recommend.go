package report

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"plumb/internal/words"
)

// Candidate is one row of the score table the recommendation rule reads:
// medians and interquartile ranges across seeds.
type Candidate struct {
	ID string
	// Runs is the number of finished runs behind the scores.
	Runs                                int
	Trustworthiness, TrustworthinessIQR float64
	Disparity, DispIQR                  float64
	Jaccard, JaccardIQR                 float64
	KL, KLIQR                           float64
}

// Rule holds the tolerances of the recommendation rule. Zero fields take
// the defaults below, which are our choice (common practice, no source):
// a trustworthiness difference under 0.01 is within the seed-to-seed noise
// of typical maps, and so are disparity differences under 0.01 and Jaccard
// differences under 0.02.
type Rule struct {
	// TrustTolerance: settings whose median trustworthiness is within this
	// of the best count as equally faithful. If 0, 0.01 is used.
	TrustTolerance float64
	// DisparityTolerance: among those, settings whose median disparity is
	// within this of the lowest count as equally stable. If 0, 0.01.
	DisparityTolerance float64
	// JaccardTolerance: among those, settings whose median Jaccard is
	// within this of the highest count as equally stable. If 0, 0.02.
	JaccardTolerance float64
}

func (r Rule) withDefaults() Rule {
	if r.TrustTolerance == 0 {
		r.TrustTolerance = 0.01
	}
	if r.DisparityTolerance == 0 {
		r.DisparityTolerance = 0.01
	}
	if r.JaccardTolerance == 0 {
		r.JaccardTolerance = 0.02
	}
	return r
}

// Words states the rule in plain English with its tolerances filled in.
func (r Rule) Words() string {
	r = r.withDefaults()
	return fmt.Sprintf("Only settings with at least two finished runs and defined scores take part. "+
		"(1) Faithfulness first: keep the settings whose median trustworthiness is within %g of the best. "+
		"(2) Then stability: among those, keep the settings whose median seed-to-seed Procrustes disparity is within %g of the lowest. "+
		"(3) Among those, keep the settings whose median seed-to-seed kNN Jaccard overlap is within %g of the highest. "+
		"(4) Pick the one with the lowest median final KL divergence; an exact tie goes to the first setting id in sort order. "+
		"The runner-up is what the same rule picks once the chosen setting is set aside. "+
		"A setting counts as indistinguishable from the chosen one when, on both trustworthiness and disparity, "+
		"its median is within the tolerance of the chosen one's or the two ranges median ± IQR/2 overlap.",
		r.TrustTolerance, r.DisparityTolerance, r.JaccardTolerance)
}

// Exclusion names a candidate left out of the rule and why.
type Exclusion struct {
	ID, Reason string
}

// Recommendation is the outcome of the rule on a score table.
type Recommendation struct {
	Rule Rule
	// Chosen is the picked setting; RunnerUp is nil when only one setting
	// took part.
	Chosen, RunnerUp *Candidate
	// DecidedBy names the step of the rule that separated the chosen
	// setting from the runner-up: "trustworthiness", "disparity",
	// "jaccard", "kl" or "order".
	DecidedBy string
	// Why says in a sentence why the runner-up was not chosen.
	Why string
	// Ranking lists every candidate id in the order the rule ranks them.
	Ranking []string
	// Indistinguishable lists the ids of the settings that cannot be told
	// apart from the chosen one (see Rule.Words).
	Indistinguishable []string
	// Excluded lists the candidates that did not take part.
	Excluded []Exclusion
}

// ErrNoCandidate is returned by Recommend when no setting can take part.
var ErrNoCandidate = errors.New("report: no setting has two finished runs with defined scores, so none can be recommended")

// Recommend applies the rule (see Rule.Words) to the candidates. The input
// slice is not modified.
func Recommend(cands []Candidate, rule Rule) (*Recommendation, error) {
	rule = rule.withDefaults()
	rec := &Recommendation{Rule: rule}
	var pool []Candidate
	for _, c := range cands {
		switch {
		case c.Runs < 2:
			rec.Excluded = append(rec.Excluded, Exclusion{c.ID, fmt.Sprintf("%s finished; agreement across seeds needs two", words.Count(c.Runs, "run"))})
		case !finite(c.Trustworthiness):
			rec.Excluded = append(rec.Excluded, Exclusion{c.ID, "trustworthiness not available"})
		case !finite(c.Disparity) || !finite(c.Jaccard):
			rec.Excluded = append(rec.Excluded, Exclusion{c.ID, "seed-to-seed agreement not available"})
		default:
			if !finite(c.KL) {
				c.KL = math.Inf(1)
			}
			pool = append(pool, c)
		}
	}
	if len(pool) == 0 {
		return nil, ErrNoCandidate
	}
	sort.SliceStable(pool, func(i, j int) bool { return pool[i].ID < pool[j].ID })

	rest := append([]Candidate(nil), pool...)
	var first *pick
	for len(rest) > 0 {
		p := rule.pick(rest)
		if first == nil {
			first = &p
		}
		rec.Ranking = append(rec.Ranking, rest[p.winner].ID)
		rest = append(rest[:p.winner:p.winner], rest[p.winner+1:]...)
	}
	chosen := findCandidate(pool, rec.Ranking[0])
	rec.Chosen = &chosen
	if len(rec.Ranking) > 1 {
		ru := findCandidate(pool, rec.Ranking[1])
		rec.RunnerUp = &ru
		rec.DecidedBy, rec.Why = first.reason(ru, rule, chosen)
	}
	for _, c := range pool {
		if c.ID == chosen.ID {
			continue
		}
		if indistinguishable(c.Trustworthiness, c.TrustworthinessIQR, chosen.Trustworthiness, chosen.TrustworthinessIQR, rule.TrustTolerance) &&
			indistinguishable(c.Disparity, c.DispIQR, chosen.Disparity, chosen.DispIQR, rule.DisparityTolerance) {
			rec.Indistinguishable = append(rec.Indistinguishable, c.ID)
		}
	}
	return rec, nil
}

func findCandidate(cs []Candidate, id string) Candidate {
	for _, c := range cs {
		if c.ID == id {
			return c
		}
	}
	panic("report: candidate vanished")
}

// indistinguishable reports whether two medians are within tol or their ranges
// median ± IQR/2 overlap.
func indistinguishable(a, aIQR, b, bIQR, tol float64) bool {
	if math.Abs(a-b) <= tol {
		return true
	}
	ai, bi := nz(aIQR)/2, nz(bIQR)/2
	return a-ai <= b+bi && b-bi <= a+ai
}

func nz(x float64) float64 {
	if !finite(x) {
		return 0
	}
	return x
}

// pick records one application of the rule: the sets kept at each step.
type pick struct {
	winner              int
	faithful, stable    map[string]bool
	agreeing            map[string]bool
	bestT, bestD, bestJ float64
}

func (r Rule) pick(cs []Candidate) pick {
	p := pick{faithful: map[string]bool{}, stable: map[string]bool{}, agreeing: map[string]bool{}}
	p.bestT = math.Inf(-1)
	for _, c := range cs {
		p.bestT = math.Max(p.bestT, c.Trustworthiness)
	}
	p.bestD = math.Inf(1)
	for _, c := range cs {
		if c.Trustworthiness >= p.bestT-r.TrustTolerance {
			p.faithful[c.ID] = true
			p.bestD = math.Min(p.bestD, c.Disparity)
		}
	}
	p.bestJ = math.Inf(-1)
	for _, c := range cs {
		if p.faithful[c.ID] && c.Disparity <= p.bestD+r.DisparityTolerance {
			p.stable[c.ID] = true
			p.bestJ = math.Max(p.bestJ, c.Jaccard)
		}
	}
	p.winner = -1
	for i, c := range cs {
		if p.stable[c.ID] && c.Jaccard >= p.bestJ-r.JaccardTolerance {
			p.agreeing[c.ID] = true
			// cs is sorted by id, so a strict < keeps the first on a tie.
			if p.winner < 0 || c.KL < cs[p.winner].KL {
				p.winner = i
			}
		}
	}
	return p
}

// reason explains at which step the candidate id dropped out of p.
func (p *pick) reason(ru Candidate, r Rule, chosen Candidate) (step, why string) {
	id := ru.ID
	switch {
	case !p.faithful[id]:
		return "trustworthiness", fmt.Sprintf("its median trustworthiness is more than %g below the best (%.4f)", r.TrustTolerance, p.bestT)
	case !p.stable[id]:
		return "disparity", fmt.Sprintf("it is as faithful, but its median disparity is more than %g above the lowest among the faithful settings (%.4f)", r.DisparityTolerance, p.bestD)
	case !p.agreeing[id]:
		return "jaccard", fmt.Sprintf("it is as faithful and its disparity is as low, but its median Jaccard is more than %g below the highest (%.4f)", r.JaccardTolerance, p.bestJ)
	case ru.KL == chosen.KL:
		return "order", "it ties on every step, KL divergence included; the chosen setting comes first in id order"
	default:
		return "kl", fmt.Sprintf("it ties on faithfulness and stability within the tolerances, but its median KL divergence (%.4f) is higher than the chosen setting's (%.4f)", ru.KL, chosen.KL)
	}
}
