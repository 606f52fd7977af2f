package gate

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"plumb/align"
	"plumb/cmd/plumb/internal/studyview"
	"plumb/stability"
)

// Thresholds are the tolerances of the gate. Zero fields take the
// defaults, which are our choice (common practice, no source): they are
// loose enough that a rerun of the same plan with the same code passes
// exactly (same inputs and seeds give bit-identical layouts) and tight
// enough that a map that has not converged, or data that changed, fails.
type Thresholds struct {
	// MaxDisparity is the largest Procrustes disparity between the current
	// and the baseline consensus. If 0, 0.05. The limit used is the larger
	// of this and SeedFactor × the baseline's median seed-to-seed disparity.
	MaxDisparity float64
	// MinJaccard is the smallest kNN Jaccard overlap between the two
	// consensus maps. If 0, 0.5. The limit used is the smaller of this and
	// the baseline's median seed-to-seed Jaccard minus 0.1.
	MinJaccard float64
	// SeedFactor scales the baseline's own seed-to-seed disparity (above).
	// If 0, 2.
	SeedFactor float64
	// MaxTrustDrop is the largest allowed fall in median trustworthiness.
	// If 0, 0.01.
	MaxTrustDrop float64
	// MaxStabilityLoss is the largest allowed rise in median seed-to-seed
	// disparity and fall in median seed-to-seed Jaccard. If 0, 0.05.
	MaxStabilityLoss float64
	// MaxKLRise is the largest allowed relative rise in median final KL
	// divergence. If 0, 0.05 (5%).
	MaxKLRise float64
	// K is the neighbourhood size for the Jaccard to baseline. If 0, the
	// current study's k, or 10 if that is unknown.
	K int
	// Moved is how many of the points that moved most are listed per
	// setting. If 0, 5.
	Moved int
}

// Defaults returns t with every zero field set to its default.
func (t Thresholds) Defaults() Thresholds {
	def := func(v *float64, d float64) {
		if *v == 0 {
			*v = d
		}
	}
	def(&t.MaxDisparity, 0.05)
	def(&t.MinJaccard, 0.5)
	def(&t.SeedFactor, 2)
	def(&t.MaxTrustDrop, 0.01)
	def(&t.MaxStabilityLoss, 0.05)
	def(&t.MaxKLRise, 0.05)
	if t.Moved == 0 {
		t.Moved = 5
	}
	return t
}

// Options configures Compare.
type Options struct {
	Thresholds Thresholds
	// AllowOtherData compares studies whose input fingerprints differ
	// (points are still matched by id).
	AllowOtherData bool
	// Ignore lists parameter names left out when matching settings (for
	// example "iters" to compare a short run against a full one).
	Ignore []string
}

// Outcome is the verdict of a comparison.
type Outcome string

// The three outcomes; plumb check exits 0, 1 and 2 respectively.
const (
	Pass         Outcome = "pass"
	Regression   Outcome = "regression"
	Incomparable Outcome = "incomparable"
)

// Moved is one point and how far it moved relative to the baseline.
type Moved struct {
	ID       string  `json:"id"`
	Distance float64 `json:"distance"`
}

// SettingResult is the comparison of one matched setting.
type SettingResult struct {
	// Label names the setting by its parameters; BaselineID and CurrentID
	// are its ids in the two studies.
	Label      string `json:"label"`
	BaselineID string `json:"baseline_id"`
	CurrentID  string `json:"current_id"`
	// Points is the number of points matched by id; MissingPoints the
	// baseline points absent from the current study.
	Points        int `json:"points"`
	MissingPoints int `json:"missing_points"`
	// Disparity and Jaccard compare the two consensus layouts (NaN when
	// one side has no consensus), with the limits used.
	Disparity      float64 `json:"disparity"`
	DisparityLimit float64 `json:"disparity_limit"`
	Jaccard        float64 `json:"jaccard"`
	JaccardLimit   float64 `json:"jaccard_limit"`
	K              int     `json:"k"`
	// Changes lists the headline scores, current − baseline.
	Changes []ScoreChange `json:"changes"`
	// Moved lists the points that moved most, largest first.
	Moved []Moved `json:"moved"`
	// Failures says in words what crossed a threshold; empty when it passed.
	Failures []string `json:"failures"`
}

// ScoreChange is one headline score in both studies.
type ScoreChange struct {
	Score    string  `json:"score"`
	Baseline float64 `json:"baseline"`
	Current  float64 `json:"current"`
	Change   float64 `json:"change"`
	Failed   bool    `json:"failed"`
}

// Pass reports whether the setting is within every threshold.
func (s *SettingResult) Pass() bool { return len(s.Failures) == 0 }

// Result is the outcome of Compare.
type Result struct {
	Outcome Outcome `json:"outcome"`
	// Reason explains an incomparable outcome, or summarises a regression.
	Reason     string     `json:"reason,omitempty"`
	Baseline   string     `json:"baseline"`
	Current    string     `json:"current"`
	Thresholds Thresholds `json:"thresholds"`
	// Settings holds the matched settings in the baseline's order.
	Settings []SettingResult `json:"settings"`
	// OnlyBaseline and OnlyCurrent name the settings found in one study
	// only; a setting missing from the current study is a regression.
	OnlyBaseline []string `json:"only_baseline"`
	OnlyCurrent  []string `json:"only_current"`
}

// key is the matching key of a setting: name=value of every parameter not
// ignored, sorted by name.
func key(s *studyview.Setting, ignore map[string]bool) string {
	var parts []string
	for _, f := range s.Params {
		if !ignore[f.Name] {
			parts = append(parts, f.Name+"="+f.Value)
		}
	}
	sort.Strings(parts)
	return strings.Join(parts, ",")
}

// label names a setting by the parameters in show (all of them when show
// is empty), as name=value pairs in the setting's order.
func label(s *studyview.Setting, ignore, show map[string]bool) string {
	var parts []string
	for _, f := range s.Params {
		if !ignore[f.Name] && (len(show) == 0 || show[f.Name]) {
			parts = append(parts, f.Name+"="+f.Value)
		}
	}
	if len(parts) == 0 {
		return s.ID
	}
	return strings.Join(parts, " ")
}

// varying returns the parameters that take more than one value across the
// settings of both studies; labels name settings by these.
func varying(base, cur *studyview.View, ignore map[string]bool) map[string]bool {
	vals := map[string]map[string]bool{}
	for _, st := range []*studyview.View{base, cur} {
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
		if len(v) > 1 && !ignore[name] {
			out[name] = true
		}
	}
	return out
}

// Compare checks cur against base. Studies that cannot be compared give a
// Result with Outcome Incomparable and a Reason, not an error; errors are
// reserved for broken inputs (for example a consensus layout of the wrong
// length).
func Compare(base, cur *studyview.View, opt Options) (*Result, error) {
	th := opt.Thresholds.Defaults()
	res := &Result{Baseline: base.Dir, Current: cur.Dir, Thresholds: th, Settings: []SettingResult{}}
	if !opt.AllowOtherData && base.Input.Fingerprint != cur.Input.Fingerprint {
		res.Outcome = Incomparable
		res.Reason = fmt.Sprintf("the input data differ: baseline fingerprint %s, current %s (to compare anyway, pass --allow-other-data, Options.AllowOtherData in Go; points are then matched by id)",
			short(base.Input.Fingerprint), short(cur.Input.Fingerprint))
		return res, nil
	}
	ignore := map[string]bool{}
	for _, n := range opt.Ignore {
		ignore[n] = true
	}
	show := varying(base, cur, ignore)
	curBy := map[string]*studyview.Setting{}
	for i := range cur.Settings {
		curBy[key(&cur.Settings[i], ignore)] = &cur.Settings[i]
	}
	matched := map[string]bool{}
	var pairs [][2]*studyview.Setting
	for i := range base.Settings {
		b := &base.Settings[i]
		k := key(b, ignore)
		if c, ok := curBy[k]; ok && !matched[k] {
			matched[k] = true
			pairs = append(pairs, [2]*studyview.Setting{b, c})
		} else {
			res.OnlyBaseline = append(res.OnlyBaseline, label(b, ignore, show))
		}
	}
	for i := range cur.Settings {
		if !matched[key(&cur.Settings[i], ignore)] {
			res.OnlyCurrent = append(res.OnlyCurrent, label(&cur.Settings[i], ignore, show))
		}
	}
	if len(pairs) == 0 {
		res.Outcome = Incomparable
		res.Reason = fmt.Sprintf("no setting in common: the baseline has %d setting(s), the current study %d, and none match on every parameter", len(base.Settings), len(cur.Settings))
		if len(base.Settings) > 0 && len(cur.Settings) > 0 {
			res.Reason += fmt.Sprintf(" (for example baseline %q vs current %q)", label(&base.Settings[0], ignore, nil), label(&cur.Settings[0], ignore, nil))
		}
		return res, nil
	}
	bi, ci, onlyB, _ := align.MatchByID(base.IDs, cur.IDs)
	if len(bi) == 0 {
		res.Outcome = Incomparable
		res.Reason = fmt.Sprintf("no point id in common: the baseline has %d points, the current study %d", len(base.IDs), len(cur.IDs))
		return res, nil
	}
	k := th.K
	if k == 0 {
		k = cur.K
	}
	if k == 0 {
		k = 10
	}
	if k >= len(bi) {
		k = len(bi) - 1
	}
	for _, p := range pairs {
		sr, err := compareSetting(p[0], p[1], bi, ci, len(onlyB), k, th, label(p[0], ignore, show), base.IDs)
		if err != nil {
			return nil, err
		}
		res.Settings = append(res.Settings, *sr)
	}
	failed := 0
	for i := range res.Settings {
		if !res.Settings[i].Pass() {
			failed++
		}
	}
	switch {
	case failed > 0 || len(res.OnlyBaseline) > 0:
		res.Outcome = Regression
		var parts []string
		if failed > 0 {
			parts = append(parts, fmt.Sprintf("%d of %d setting(s) outside tolerance", failed, len(res.Settings)))
		}
		if len(res.OnlyBaseline) > 0 {
			parts = append(parts, fmt.Sprintf("%d baseline setting(s) missing from the current study", len(res.OnlyBaseline)))
		}
		res.Reason = strings.Join(parts, "; ")
	default:
		res.Outcome = Pass
		res.Reason = fmt.Sprintf("all %d matched setting(s) within tolerance", len(res.Settings))
	}
	return res, nil
}

func compareSetting(b, c *studyview.Setting, bi, ci []int, missing, k int, th Thresholds, name string, ids []string) (*SettingResult, error) {
	sr := &SettingResult{Label: name, BaselineID: b.ID, CurrentID: c.ID, Points: len(bi), MissingPoints: missing, K: k,
		Disparity: math.NaN(), Jaccard: math.NaN(), Changes: []ScoreChange{}, Moved: []Moved{}, Failures: []string{}}
	sr.DisparityLimit = th.MaxDisparity
	if d := b.Disparity.Median; finite(d) {
		sr.DisparityLimit = math.Max(sr.DisparityLimit, th.SeedFactor*d)
	}
	sr.JaccardLimit = th.MinJaccard
	if j := b.Jaccard.Median; finite(j) {
		sr.JaccardLimit = math.Min(sr.JaccardLimit, j-0.1)
	}
	switch {
	case len(b.Consensus) == 0:
		sr.Failures = append(sr.Failures, "the baseline has no finished runs for this setting")
	case len(c.Consensus) == 0:
		sr.Failures = append(sr.Failures, "the current study has no finished runs for this setting")
	default:
		bl := align.Select(b.Consensus, bi)
		cl := align.Select(c.Consensus, ci)
		aligned, _, err := align.Procrustes(bl, cl, true)
		if err != nil {
			return nil, fmt.Errorf("gate: setting %s: %w", sr.Label, err)
		}
		if sr.Disparity, err = align.Disparity(bl, cl); err != nil {
			return nil, fmt.Errorf("gate: setting %s: %w", sr.Label, err)
		}
		if sr.Jaccard, err = stability.NeighborJaccard(bl, aligned, k); err != nil {
			return nil, fmt.Errorf("gate: setting %s: %w", sr.Label, err)
		}
		if sr.Disparity > sr.DisparityLimit {
			sr.Failures = append(sr.Failures, fmt.Sprintf("disparity to baseline %.4f > %.4f", sr.Disparity, sr.DisparityLimit))
		}
		if sr.Jaccard < sr.JaccardLimit {
			sr.Failures = append(sr.Failures, fmt.Sprintf("kNN Jaccard to baseline %.4f < %.4f", sr.Jaccard, sr.JaccardLimit))
		}
		sr.Moved = moved(bl, aligned, bi, ids, th.Moved)
	}
	add := func(name string, bv, cv float64, bad bool, why string) {
		ch := ScoreChange{Score: name, Baseline: bv, Current: cv, Change: cv - bv}
		if finite(bv) && finite(cv) && bad {
			ch.Failed = true
			sr.Failures = append(sr.Failures, why)
		}
		sr.Changes = append(sr.Changes, ch)
	}
	bt, ct := b.Trustworthiness.Median, c.Trustworthiness.Median
	add("trustworthiness", bt, ct, ct < bt-th.MaxTrustDrop,
		fmt.Sprintf("trustworthiness fell by %.4f (> %g)", bt-ct, th.MaxTrustDrop))
	bd, cd := b.Disparity.Median, c.Disparity.Median
	add("seed disparity", bd, cd, cd > bd+th.MaxStabilityLoss,
		fmt.Sprintf("seed-to-seed disparity rose by %.4f (> %g)", cd-bd, th.MaxStabilityLoss))
	bj, cj := b.Jaccard.Median, c.Jaccard.Median
	add("seed Jaccard", bj, cj, cj < bj-th.MaxStabilityLoss,
		fmt.Sprintf("seed-to-seed Jaccard fell by %.4f (> %g)", bj-cj, th.MaxStabilityLoss))
	bk, ck := b.KL.Median, c.KL.Median
	add("final KL", bk, ck, ck > bk*(1+th.MaxKLRise) && ck-bk > 1e-12,
		fmt.Sprintf("final KL rose by %.1f%% (> %g%%)", 100*(ck-bk)/math.Abs(bk), 100*th.MaxKLRise))
	return sr, nil
}

// moved returns the n points farthest from their baseline position after
// alignment, in units of the baseline's RMS radius about its centroid.
func moved(base, aligned []float64, bi []int, ids []string, n int) []Moved {
	m := len(base) / 2
	var cx, cy float64
	for i := 0; i < m; i++ {
		cx += base[2*i]
		cy += base[2*i+1]
	}
	cx /= float64(m)
	cy /= float64(m)
	var ss float64
	for i := 0; i < m; i++ {
		ss += (base[2*i]-cx)*(base[2*i]-cx) + (base[2*i+1]-cy)*(base[2*i+1]-cy)
	}
	rms := math.Sqrt(ss / float64(m))
	if rms == 0 {
		rms = 1
	}
	all := make([]Moved, m)
	for i := 0; i < m; i++ {
		all[i] = Moved{ID: ids[bi[i]], Distance: math.Hypot(aligned[2*i]-base[2*i], aligned[2*i+1]-base[2*i+1]) / rms}
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].Distance > all[j].Distance })
	if len(all) > n {
		all = all[:n]
	}
	return all
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func short(fp string) string {
	if len(fp) > 12 {
		return fp[:12]
	}
	if fp == "" {
		return "(none)"
	}
	return fp
}
