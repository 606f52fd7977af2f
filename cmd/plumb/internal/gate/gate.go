package gate

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"plumb/align"
	"plumb/stability"
)

// Options configures Compare. Zero fields take the defaults (Defaults).
type Options struct {
	// Alpha is the family-wise false-alarm rate of the layout tests: the
	// chance that a current study made by the same code from the same data
	// with other seeds fails any of them. If 0, 0.01.
	Alpha float64
	// MinJaccardShift is the smallest fall in kNN Jaccard overlap (across
	// the studies against within a study) that counts as a change. If 0,
	// 0.01.
	MinJaccardShift float64
	// MinDisparityShift is the smallest rise in Procrustes disparity
	// (across against within) that counts as a change. If 0, 0.01.
	MinDisparityShift float64
	// MaxTrustDrop is the largest allowed fall in median trustworthiness.
	// If 0, 0.01.
	MaxTrustDrop float64
	// MaxKLRise is the largest allowed relative rise in median final KL
	// divergence. If 0, 0.05 (5%).
	MaxKLRise float64
	// ExactTolerance is the largest RMS difference, relative to the
	// layout's RMS radius, between two runs that must be identical (same
	// code, data, setting and start). If 0, 1e-9 (rounding).
	ExactTolerance float64
	// K is the neighbourhood size of the Jaccard overlap. If 0, the
	// studies' k.
	K int
	// Moved is how many of the points whose neighbourhoods changed most are
	// listed for a failed setting. If 0, 5.
	Moved int
	// AllowOtherData compares studies whose input fingerprints differ,
	// points matched by id.
	AllowOtherData bool
	// AllowUntested lets settings that cannot be tested (too few runs)
	// pass with a note instead of making the outcome Untested.
	AllowUntested bool
	// Ignore lists parameters (of settings or of the plan) left out when
	// matching settings and comparing plans.
	Ignore []string
	// Seed seeds the random relabelings of large permutation tests.
	Seed uint64
}

// Defaults returns o with every zero field set to its default.
func (o Options) Defaults() Options {
	def := func(v *float64, d float64) {
		if *v == 0 {
			*v = d
		}
	}
	def(&o.Alpha, 0.01)
	def(&o.MinJaccardShift, 0.01)
	def(&o.MinDisparityShift, 0.01)
	def(&o.MaxTrustDrop, 0.01)
	def(&o.MaxKLRise, 0.05)
	def(&o.ExactTolerance, 1e-9)
	if o.Moved == 0 {
		o.Moved = 5
	}
	return o
}

// Outcome is the verdict of a comparison.
type Outcome string

// The outcomes; plumb check exits 0, 1, 3, 2 and 4 respectively.
const (
	Pass Outcome = "pass"
	// Regression: a setting changed beyond run-to-run variation, failed, or
	// is missing from the current study.
	Regression Outcome = "regression"
	// DataChanged: the input fingerprints differ and other data were not
	// allowed.
	DataChanged Outcome = "data-changed"
	// Incomparable: the studies cannot be compared as made (another plan
	// or perturbation, another k, no setting or point in common).
	Incomparable Outcome = "incomparable"
	// Untested: nothing failed, but some setting has too few runs to tell
	// a change from run-to-run variation (and no run that must reproduce
	// the baseline), and that was not allowed.
	Untested Outcome = "untested"
)

// planMatched lists the plan fields that need not be equal: the grid lists
// (settings are matched one by one on their values, the subsample fraction
// included), the seeds (other
// seeds are the point of the test) and the KL trace interval (it changes
// no run). Every other plan field — present or added later, such as a
// subsample fraction — changes what a run sees and must be equal in both
// studies.
var planMatched = map[string]bool{
	"perplexity": true, "learning_rate": true, "exaggeration": true, "exaggeration_iters": true,
	"iters": true, "init": true, "gradient": true, "subsample": true, "seeds": true, "kl_every": true,
}

// Test is one layout test of one setting: the runs' pair scores across
// the studies against within each study.
type Test struct {
	// Score names the pair score: "jaccard" or "disparity".
	Score string
	// Tested is false when the runs cannot reach the significance level
	// (Reason says why); the other fields may still be filled.
	Tested bool
	Reason string
	// Means of the pair score within the baseline, within the current
	// study and across (NaN where undefined), in the score's units.
	WithinBaseline, WithinCurrent, Across float64
	// Shift = how much less alike runs across the studies are than runs
	// within one, in the score's units (stability.SetShift); Margin is the
	// smallest shift that counts.
	Shift, Margin float64
	// P is the permutation p-value, PMin the smallest it could be, Level
	// the per-test significance level after the multiplicity correction.
	P, PMin, Level float64
	Relabelings    int
	Exact          bool
	Failed         bool
}

// Reproduction is the check of runs that must be identical: same data,
// same setting, same start (the same seed, or any seed with PCA
// initialisation).
type Reproduction struct {
	// Pairs counts current runs with a baseline run of the same start;
	// Matched those identical within the tolerance.
	Pairs, Matched int
	// Worst is the largest RMS difference relative to the baseline
	// layout's RMS radius, at WorstSeed (the current run's seed).
	Worst     float64
	WorstSeed uint64
}

// Change is a headline score in both studies (medians over runs).
type Change struct {
	Baseline, Current float64
	// Change is current − baseline (trustworthiness) or the relative
	// change (current − baseline)/|baseline| (KL).
	Change float64
	Failed bool
}

// Moved is a point whose map neighbours changed most: Change is its mean
// kNN Jaccard within the studies minus its mean Jaccard across.
type Moved struct {
	ID     string
	Change float64
}

// SettingResult is the comparison of one matched setting.
type SettingResult struct {
	Label                 string
	BaselineID, CurrentID string
	// Done runs in each study, and points compared (matched by id).
	RunsBaseline, RunsCurrent int
	Points, MissingPoints     int
	// Reproduction is nil when no run must be identical.
	Reproduction *Reproduction
	Jaccard      Test
	Disparity    Test
	Trust        Change
	KL           Change
	Moved        []Moved
	// Failures say in words what failed; Notes what could not be tested.
	Failures []string
	Notes    []string
	// Tested is false when neither a reproduction check nor a layout test
	// applied.
	Tested bool
}

// Pass reports whether the setting has no failure.
func (s *SettingResult) Pass() bool { return len(s.Failures) == 0 }

// Status is "fail", "untested" or "pass".
func (s *SettingResult) Status() string {
	switch {
	case !s.Pass():
		return "fail"
	case !s.Tested:
		return "untested"
	}
	return "pass"
}

// Result is the outcome of Compare.
type Result struct {
	Outcome Outcome
	// Reason explains the outcome in one line.
	Reason            string
	Baseline, Current string
	Options           Options
	// KBaseline and KCurrent are the studies' score k; K the k of the
	// Jaccard overlaps computed here.
	KBaseline, KCurrent, K int
	// Divisor is the Bonferroni divisor after Tarone's count (the level of
	// each layout test is Alpha/Divisor); Testable counts the layout tests
	// that could reach that level.
	Divisor, Testable int
	// Settings in the baseline's order.
	Settings []SettingResult
	// OnlyBaseline and OnlyCurrent name settings found in one study only;
	// a setting missing from the current study is a regression.
	OnlyBaseline, OnlyCurrent []string
	// PlanDiffs lists plan fields that differ (name: baseline vs current).
	PlanDiffs []string
}

// TestDescription states the layout test, its reference and the levels.
func (r *Result) TestDescription() string {
	o := r.Options
	level := fmt.Sprintf("p ≤ %g/%d (Bonferroni; %d test(s) can reach it, Tarone 1990)", o.Alpha, max(r.Divisor, 1), r.Testable)
	return fmt.Sprintf("layout test: for each setting, every pair of runs is scored (kNN Jaccard at k = %d; Procrustes disparity); "+
		"the shift = (mean score across the studies) against (mean within each study), and its reference is the permutation "+
		"distribution over every relabelling of the runs into the two studies (exact up to %d relabelings, else %d random ones). "+
		"A setting fails when %s and the shift is at least "+
		"%g in Jaccard or %g in disparity. Runs with the same start (seed, or PCA) on the same data must reproduce the baseline "+
		"within %g of the layout's RMS radius. Trustworthiness may fall by at most %g; final KL may rise by at most %g%%.",
		r.K, stability.MaxExactRelabelings, stability.MonteCarloRelabelings, level,
		o.MinJaccardShift, o.MinDisparityShift, o.ExactTolerance, o.MaxTrustDrop, 100*o.MaxKLRise)
}

// key is the matching key of a setting: name=value of every parameter not
// ignored, sorted by name.
func key(s *Setting, ignore map[string]bool) string {
	var parts []string
	for _, f := range s.Params {
		if !ignore[f.Name] {
			parts = append(parts, f.Name+"="+f.Value)
		}
	}
	sort.Strings(parts)
	return strings.Join(parts, ",")
}

// label names a setting by the parameters in show; when show is nil, by
// all of them; when it is empty (nothing varies), by its first parameter.
func label(s *Setting, show map[string]bool) string {
	var parts []string
	for _, f := range s.Params {
		if show == nil || show[f.Name] {
			parts = append(parts, f.Name+"="+f.Value)
		}
	}
	if len(parts) == 0 && len(s.Params) > 0 {
		parts = append(parts, s.Params[0].Name+"="+s.Params[0].Value)
	}
	if len(parts) == 0 {
		return s.ID
	}
	return strings.Join(parts, " ")
}

// varying returns the parameters that take more than one value across the
// settings of both studies.
func varying(base, cur *Study) map[string]bool {
	vals := map[string]map[string]bool{}
	for _, st := range []*Study{base, cur} {
		for i := range st.Settings {
			for _, f := range st.Settings[i].Params {
				if vals[f.Name] == nil {
					vals[f.Name] = map[string]bool{}
				}
				vals[f.Name][f.Value] = true
			}
		}
	}
	out := map[string]bool{}
	for name, v := range vals {
		if len(v) > 1 {
			out[name] = true
		}
	}
	return out
}

// Compare checks cur against base. Studies that cannot be compared give a
// Result with Outcome DataChanged or Incomparable and a Reason; errors are
// reserved for unreadable layouts.
func Compare(base, cur *Study, opt Options) (*Result, error) {
	o := opt.Defaults()
	res := &Result{Baseline: base.Dir, Current: cur.Dir, Options: o, KBaseline: base.K, KCurrent: cur.K, Settings: []SettingResult{}}
	ignore := map[string]bool{}
	for _, n := range o.Ignore {
		ignore[n] = true
	}
	sameData := base.Fingerprint == cur.Fingerprint
	if !sameData && !o.AllowOtherData {
		res.Outcome = DataChanged
		res.Reason = fmt.Sprintf("the input data changed: baseline fingerprint %s, current %s (to compare anyway, points matched by id, pass --allow-other-data)",
			short(base.Fingerprint), short(cur.Fingerprint))
		return res, nil
	}
	// Plans: every field that changes what a run sees must agree.
	var names []string
	for n := range base.Plan {
		names = append(names, n)
	}
	for n := range cur.Plan {
		if _, ok := base.Plan[n]; !ok {
			names = append(names, n)
		}
	}
	sort.Strings(names)
	for _, n := range names {
		if planMatched[n] || ignore[n] {
			continue
		}
		if b, c := base.Plan[n], cur.Plan[n]; b != c {
			res.PlanDiffs = append(res.PlanDiffs, fmt.Sprintf("%s: baseline %s, current %s", n, orNone(b), orNone(c)))
		}
	}
	if len(res.PlanDiffs) > 0 {
		res.Outcome = Incomparable
		res.Reason = fmt.Sprintf("the runs were made differently (plan %s); the gate compares like with like (to compare anyway, pass --ignore with the field names)",
			strings.Join(res.PlanDiffs, "; "))
		return res, nil
	}
	if base.K != cur.K {
		res.Outcome = Incomparable
		res.Reason = fmt.Sprintf("the studies were scored with different k (baseline k = %d, current k = %d), so their trustworthiness is not comparable (rescore one: plumb score %s --k %d)",
			base.K, cur.K, cur.Dir, base.K)
		return res, nil
	}
	show := varying(base, cur)
	for n := range ignore {
		delete(show, n)
	}
	curBy := map[string]*Setting{}
	for i := range cur.Settings {
		curBy[key(&cur.Settings[i], ignore)] = &cur.Settings[i]
	}
	matched := map[string]bool{}
	var pairs [][2]*Setting
	for i := range base.Settings {
		b := &base.Settings[i]
		k := key(b, ignore)
		if c, ok := curBy[k]; ok && !matched[k] {
			matched[k] = true
			pairs = append(pairs, [2]*Setting{b, c})
		} else {
			res.OnlyBaseline = append(res.OnlyBaseline, label(b, show))
		}
	}
	for i := range cur.Settings {
		if !matched[key(&cur.Settings[i], ignore)] {
			res.OnlyCurrent = append(res.OnlyCurrent, label(&cur.Settings[i], show))
		}
	}
	if len(pairs) == 0 {
		res.Outcome = Incomparable
		res.Reason = fmt.Sprintf("no setting in common: the baseline has %d setting(s), the current study %d, and none match on every parameter", len(base.Settings), len(cur.Settings))
		if len(base.Settings) > 0 && len(cur.Settings) > 0 {
			res.Reason += fmt.Sprintf(" (for example baseline %q vs current %q; --ignore NAME leaves a parameter out)", label(&base.Settings[0], nil), label(&cur.Settings[0], nil))
		}
		return res, nil
	}
	bi, ci, onlyB, _ := align.MatchByID(base.IDs, cur.IDs)
	if len(bi) < 3 {
		res.Outcome = Incomparable
		res.Reason = fmt.Sprintf("no point id in common: the baseline has %d points, the current study %d", len(base.IDs), len(cur.IDs))
		if len(bi) > 0 {
			res.Reason = fmt.Sprintf("only %d point id(s) in common (at least 3 are needed): the baseline has %d points, the current study %d", len(bi), len(base.IDs), len(cur.IDs))
		}
		return res, nil
	}
	k := o.K
	if k == 0 {
		k = base.K
	}
	if k <= 0 {
		k = stability.DefaultK
	}
	if k >= len(bi) {
		k = len(bi) - 1
	}
	res.K = k
	for i, p := range pairs {
		sr, err := compareSetting(p[0], p[1], bi, ci, len(onlyB), k, o, label(p[0], show), base.IDs, sameData, ignore, o.Seed+uint64(i))
		if err != nil {
			return nil, err
		}
		res.Settings = append(res.Settings, *sr)
	}
	judge(res)
	return res, nil
}

// judge applies the multiplicity correction to the layout tests, decides
// each setting and the outcome.
func judge(res *Result) {
	o := res.Options
	// Tarone (1990): with discrete p-values, only tests whose smallest
	// possible p-value can reach α/K count in the Bonferroni divisor K;
	// the smallest such K.
	var pmins []float64
	for i := range res.Settings {
		s := &res.Settings[i]
		for _, t := range []*Test{&s.Jaccard, &s.Disparity} {
			if t.Reason == "" && !math.IsNaN(t.PMin) {
				pmins = append(pmins, t.PMin)
			}
		}
	}
	K := 1
	for ; K <= len(pmins); K++ {
		c := 0
		for _, p := range pmins {
			if p <= o.Alpha/float64(K)*(1+1e-12) {
				c++
			}
		}
		if c <= K {
			break
		}
	}
	level := o.Alpha / float64(K)
	res.Divisor, res.Testable = K, 0
	for i := range res.Settings {
		s := &res.Settings[i]
		for _, t := range []*Test{&s.Jaccard, &s.Disparity} {
			t.Level = level
			if t.Reason != "" {
				continue
			}
			if t.PMin > level*(1+1e-12) {
				t.Reason = fmt.Sprintf("%d and %d runs: the smallest possible p-value is %.3g, above the level %.3g", s.RunsBaseline, s.RunsCurrent, t.PMin, level)
				continue
			}
			t.Tested = true
			res.Testable++
			if t.P <= level*(1+1e-12) && t.Shift >= t.Margin {
				t.Failed = true
				name, unit := "kNN Jaccard", "lower"
				if t.Score == "disparity" {
					name, unit = "Procrustes disparity", "higher"
				}
				s.Failures = append(s.Failures, fmt.Sprintf("maps changed: %s across the studies is %.4f %s than within them (shift %.4f ≥ %g; permutation p = %.3g ≤ %.3g)",
					name, t.Shift, unit, t.Shift, t.Margin, t.P, level))
			}
		}
		if s.Jaccard.Tested || s.Disparity.Tested || (s.Reproduction != nil && s.Reproduction.Pairs > 0) {
			s.Tested = true
		}
		if !s.Tested && s.Pass() {
			reason := s.Jaccard.Reason
			if reason == "" {
				reason = "no layout test applies"
			}
			s.Notes = append(s.Notes, "not tested for map changes: "+reason)
		}
	}
	failed, untested := 0, 0
	var untestedNames []string
	for i := range res.Settings {
		switch res.Settings[i].Status() {
		case "fail":
			failed++
		case "untested":
			untested++
			untestedNames = append(untestedNames, res.Settings[i].Label)
		}
	}
	switch {
	case failed > 0 || len(res.OnlyBaseline) > 0:
		res.Outcome = Regression
		var parts []string
		if failed > 0 {
			parts = append(parts, fmt.Sprintf("%d of %d setting(s) changed", failed, len(res.Settings)))
		}
		if len(res.OnlyBaseline) > 0 {
			parts = append(parts, fmt.Sprintf("%d baseline setting(s) missing from the current study", len(res.OnlyBaseline)))
		}
		res.Reason = strings.Join(parts, "; ")
	case untested > 0 && !o.AllowUntested:
		res.Outcome = Untested
		res.Reason = fmt.Sprintf("%d of %d setting(s) cannot be tested (%s): too few runs to tell a change from run-to-run variation; "+
			"rerun with the baseline's seeds (then runs must reproduce it exactly) or with more seeds in both studies (≥ 6 each for a few settings), "+
			"or pass --allow-untested", untested, len(res.Settings), strings.Join(untestedNames, "; "))
	default:
		res.Outcome = Pass
		res.Reason = fmt.Sprintf("all %d matched setting(s) within run-to-run variation", len(res.Settings))
		if untested > 0 {
			res.Reason += fmt.Sprintf(" (%d not tested for map changes, allowed)", untested)
		}
	}
}

func compareSetting(b, c *Setting, bi, ci []int, missing, k int, o Options, name string, ids []string, sameData bool, ignore map[string]bool, seed uint64) (*SettingResult, error) {
	nan := math.NaN()
	sr := &SettingResult{Label: name, BaselineID: b.ID, CurrentID: c.ID, RunsBaseline: len(b.Runs), RunsCurrent: len(c.Runs),
		Points: len(bi), MissingPoints: missing, Moved: []Moved{}, Failures: []string{}, Notes: []string{}}
	blank := func(score string, margin float64) Test {
		return Test{Score: score, WithinBaseline: nan, WithinCurrent: nan, Across: nan, Shift: nan, Margin: margin, P: nan, PMin: nan, Level: nan}
	}
	sr.Jaccard, sr.Disparity = blank("jaccard", o.MinJaccardShift), blank("disparity", o.MinDisparityShift)

	// Headline scores: medians over runs.
	med := func(runs []Run, f func(Run) float64) float64 {
		var v []float64
		for _, r := range runs {
			if x := f(r); !math.IsNaN(x) {
				v = append(v, x)
			}
		}
		return stability.Quantile(v, 0.5)
	}
	bt, ct := med(b.Runs, func(r Run) float64 { return r.Trust }), med(c.Runs, func(r Run) float64 { return r.Trust })
	sr.Trust = Change{Baseline: bt, Current: ct, Change: ct - bt}
	if finite(bt) && finite(ct) && bt-ct > o.MaxTrustDrop {
		sr.Trust.Failed = true
		sr.Failures = append(sr.Failures, fmt.Sprintf("trustworthiness fell by %.4f (median %.4f → %.4f; limit %g)", bt-ct, bt, ct, o.MaxTrustDrop))
	}
	bk, ck := med(b.Runs, func(r Run) float64 { return r.KL }), med(c.Runs, func(r Run) float64 { return r.KL })
	sr.KL = Change{Baseline: bk, Current: ck, Change: (ck - bk) / math.Abs(bk)}
	if finite(sr.KL.Change) && sr.KL.Change > o.MaxKLRise {
		sr.KL.Failed = true
		sr.Failures = append(sr.Failures, fmt.Sprintf("final KL rose by %.1f%% (median %.4f → %.4f; limit %g%%)", 100*sr.KL.Change, bk, ck, 100*o.MaxKLRise))
	}

	switch {
	case len(c.Runs) == 0:
		msg := fmt.Sprintf("the current study has no finished runs for this setting (%d failed", c.Failed)
		if c.FailReason != "" {
			msg += ": " + c.FailReason
		}
		sr.Failures = append(sr.Failures, msg+")")
		sr.Tested = true
		return sr, nil
	case len(b.Runs) == 0:
		reason := "the baseline has no finished runs for this setting"
		sr.Jaccard.Reason, sr.Disparity.Reason = reason, reason
		return sr, nil
	}

	// Runs of a subsampled setting embed different points; the layout
	// test compares runs on one point set.
	if f := b.Param("subsample"); f != "" && f != "1" {
		reason := fmt.Sprintf("subsample=%s: runs embed different points, which the layout test does not compare yet", f)
		sr.Jaccard.Reason, sr.Disparity.Reason = reason, reason
		return sr, nil
	}

	// Layouts on the shared points, baseline runs first.
	var lays [][]float64
	for _, set := range []struct {
		runs []Run
		idx  []int
	}{{b.Runs, bi}, {c.Runs, ci}} {
		for _, r := range set.runs {
			y, err := r.Layout()
			if err != nil {
				return nil, err
			}
			lays = append(lays, align.Select(y, set.idx))
		}
	}
	m := len(b.Runs)
	n := len(lays)

	// Runs that must be identical: same data, the same values of every
	// parameter (ignored ones included), the same start.
	if sameData && sameParams(b, c) {
		pca := b.Param("init") == "pca"
		bySeed := map[uint64]int{}
		for i, r := range b.Runs {
			bySeed[r.Seed] = i
		}
		rp := &Reproduction{}
		for j, r := range c.Runs {
			i, ok := bySeed[r.Seed]
			if !ok && pca {
				i, ok = 0, true
			}
			if !ok {
				continue
			}
			rp.Pairs++
			d := relRMS(lays[i], lays[m+j])
			if d <= o.ExactTolerance {
				rp.Matched++
			}
			if d > rp.Worst || rp.Pairs == 1 {
				rp.Worst, rp.WorstSeed = d, r.Seed
			}
		}
		if rp.Pairs > 0 {
			sr.Reproduction = rp
			if rp.Matched < rp.Pairs {
				sr.Failures = append(sr.Failures, fmt.Sprintf("not reproduced: %d of %d run(s) with the same seed and start as a baseline run differ from it (worst: seed %d, RMS difference %.3g of the layout's RMS radius > %g); same code and data give identical layouts",
					rp.Pairs-rp.Matched, rp.Pairs, rp.WorstSeed, rp.Worst, o.ExactTolerance))
			}
		}
	}

	inB := make([]bool, n)
	for i := m; i < n; i++ {
		inB[i] = true
	}
	ag, err := stability.SettingAgreement(lays, k, 0)
	if err != nil && n >= 2 {
		return nil, fmt.Errorf("gate: setting %s: %w", name, err)
	}
	jac := make([]float64, n*n)
	dis := make([]float64, n*n)
	if ag != nil {
		for _, p := range ag.Pairs {
			jac[p.A*n+p.B], dis[p.A*n+p.B] = p.Jaccard, p.Disparity
		}
	}
	for _, t := range []struct {
		test    *Test
		score   []float64
		similar bool
	}{{&sr.Jaccard, jac, true}, {&sr.Disparity, dis, false}} {
		sh, err := stability.CompareSets(t.score, inB, t.similar, seed)
		t.test.WithinBaseline, t.test.WithinCurrent, t.test.Across = sh.WithinA, sh.WithinB, sh.Across
		t.test.Shift, t.test.P, t.test.PMin, t.test.Relabelings, t.test.Exact = sh.Shift, sh.P, sh.PMin, sh.Relabelings, sh.Exact
		if errors.Is(err, stability.ErrNoReference) {
			t.test.Reason = fmt.Sprintf("%d and %d runs: no pair of runs within a study to measure run-to-run variation", m, n-m)
			continue
		}
		if err != nil {
			return nil, fmt.Errorf("gate: setting %s: %w", name, err)
		}
	}
	// The points whose neighbourhoods changed most are listed for settings
	// that may fail (m·n + pairs of neighbour searches; skipped otherwise).
	candidate := func(t Test) bool { return t.Shift >= t.Margin && t.P <= o.Alpha }
	if candidate(sr.Jaccard) || candidate(sr.Disparity) || len(sr.Failures) > 0 {
		mv, err := movedMost(lays, m, k, ids, bi, o.Moved)
		if err != nil {
			return nil, fmt.Errorf("gate: setting %s: %w", name, err)
		}
		sr.Moved = mv
	}
	return sr, nil
}

// sameParams reports whether two settings have the same value for every
// parameter, ignored ones included.
func sameParams(b, c *Setting) bool {
	if len(b.Params) != len(c.Params) {
		return false
	}
	for _, p := range b.Params {
		if c.Param(p.Name) != p.Value {
			return false
		}
	}
	return true
}

// relRMS returns the RMS distance between matching points of two layouts
// (no alignment: runs with the same start share a frame) over the RMS
// radius of a about its centroid.
func relRMS(a, b []float64) float64 {
	m := len(a) / 2
	var cx, cy float64
	for i := 0; i < m; i++ {
		cx += a[2*i]
		cy += a[2*i+1]
	}
	cx /= float64(m)
	cy /= float64(m)
	var ss, dd float64
	for i := 0; i < m; i++ {
		ss += (a[2*i]-cx)*(a[2*i]-cx) + (a[2*i+1]-cy)*(a[2*i+1]-cy)
		dd += (a[2*i]-b[2*i])*(a[2*i]-b[2*i]) + (a[2*i+1]-b[2*i+1])*(a[2*i+1]-b[2*i+1])
	}
	if ss == 0 {
		if dd == 0 {
			return 0
		}
		return math.Inf(1)
	}
	return math.Sqrt(dd / ss)
}

// movedMost returns the points whose map neighbourhoods differ most across
// the studies compared with within them: per point, the mean kNN Jaccard
// over pairs within a study minus the mean over pairs across.
func movedMost(lays [][]float64, m, k int, ids []string, bi []int, top int) ([]Moved, error) {
	n := len(lays)
	pts := len(lays[0]) / 2
	within := make([]float64, pts)
	across := make([]float64, pts)
	var nw, na int
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			cross := (i < m) != (j < m)
			v, err := stability.NeighborJaccardPoints(lays[i], lays[j], k, 0)
			if err != nil {
				return nil, err
			}
			dst := within
			if cross {
				dst, na = across, na+1
			} else {
				nw++
			}
			for p, x := range v {
				dst[p] += x
			}
		}
	}
	if na == 0 {
		return []Moved{}, nil
	}
	all := make([]Moved, pts)
	for p := range all {
		w := 1.0 // with no pair within a study, compare with a perfect overlap
		if nw > 0 {
			w = within[p] / float64(nw)
		}
		all[p] = Moved{ID: ids[bi[p]], Change: w - across[p]/float64(na)}
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].Change > all[j].Change })
	if len(all) > top {
		all = all[:top]
	}
	return all, nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func orNone(s string) string {
	if s == "" {
		return "(none)"
	}
	return s
}

func short(fp string) string {
	if len(fp) > 12 {
		return fp[:12]
	}
	if fp == "" {
		return "(none)"
	}
	return fp
}
