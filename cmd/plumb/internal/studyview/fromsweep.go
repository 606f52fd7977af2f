package studyview

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"plumb/stability"
	"plumb/sweep"
)

// NotScoredError reports a study whose score tables are missing.
type NotScoredError struct{ Dir string }

// Error says which study lacks its scores.
func (e *NotScoredError) Error() string { return e.Dir + " has no score tables" }

// Hint suggests the command that makes them.
func (e *NotScoredError) Hint() string { return "run: plumb score " + e.Dir }

func ff(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func lrText(v float64) string {
	if v == 0 {
		return "auto"
	}
	return ff(v)
}

// FromSweep adapts a study opened with sweep.Open to the read model:
// plan, input, the score tables, the consensus layouts and, for finished
// runs, the KL traces (a missing trace file leaves that run without one).
// The study must have been scored.
func FromSweep(s *sweep.Study) (*View, error) {
	if s.SettingScores == nil {
		return nil, &NotScoredError{Dir: s.Dir}
	}
	info, plan := s.Info, s.Plan
	st := &View{Dir: s.Dir, Tool: "plumb", Version: info.Version, Created: info.Created, PlanHash: info.PlanHash,
		Seeds: append([]uint64(nil), plan.Seeds...), K: s.ScoresK}
	in := info.Input
	pre := "none"
	switch {
	case in.Standardize && in.PCA > 0:
		pre = fmt.Sprintf("each column standardised, then PCA to %d components", in.PCA)
	case in.Standardize:
		pre = "each column standardised to mean 0, standard deviation 1"
	case in.PCA > 0:
		pre = fmt.Sprintf("PCA to %d components", in.PCA)
	}
	st.Input = Input{Path: in.Path, Fingerprint: in.Fingerprint, N: in.N, D: in.D, Columns: in.Columns,
		IDColumn: in.IDColumn, LabelColumn: in.LabelColumn, Preprocessing: pre}
	if len(s.RunScores) > 0 {
		st.Sampled = s.RunScores[0].Sampled
	}

	// Methods used, from the runs (the plan may say "auto").
	used := map[string]bool{}
	for _, r := range s.Rows {
		if r.Status == sweep.StatusDone && r.Gradient != "" {
			used[r.Gradient] = true
		}
	}
	for _, g := range plan.Gradient {
		if g == "barnes-hut" {
			used[g] = true
		}
	}
	var methods []string
	for m := range used {
		methods = append(methods, m)
	}
	sort.Strings(methods)
	var words []string
	for _, m := range methods {
		switch m {
		case "exact":
			words = append(words, "the exact O(n²) sum over all pairs")
		case "barnes-hut":
			words = append(words, fmt.Sprintf("Barnes-Hut (van der Maaten, 2014) with θ = %s", ff(plan.Theta)))
		case "fft":
			words = append(words, "FFT-accelerated interpolation (Linderman et al., 2019)")
		default:
			words = append(words, m)
		}
	}
	st.Gradient = strings.Join(words, "; ")

	// The grid, in plan order.
	var fs []string
	for _, v := range plan.Perplexity {
		fs = append(fs, ff(v))
	}
	st.Grid = append(st.Grid, Param{"perplexity", fs})
	fs = nil
	for _, v := range plan.LearningRate {
		fs = append(fs, lrText(v))
	}
	st.Grid = append(st.Grid, Param{"learning_rate", fs})
	fs = nil
	for _, v := range plan.Exaggeration {
		fs = append(fs, ff(v))
	}
	st.Grid = append(st.Grid, Param{"exaggeration", fs})
	fs = nil
	for _, v := range plan.ExaggerationIters {
		fs = append(fs, strconv.Itoa(v))
	}
	st.Grid = append(st.Grid, Param{"exaggeration_iters", fs})
	fs = nil
	for _, v := range plan.Iters {
		fs = append(fs, strconv.Itoa(v))
	}
	st.Grid = append(st.Grid, Param{"iters", fs})
	st.Grid = append(st.Grid, Param{"init", append([]string(nil), plan.Init...)})
	st.Grid = append(st.Grid, Param{"gradient", append([]string(nil), plan.Gradient...)})
	withTheta := used["barnes-hut"]
	if withTheta {
		st.Grid = append(st.Grid, Param{"theta", []string{ff(plan.Theta)}})
	}

	// Points: ids and labels from the first finished layout.
	n := in.N
	for _, r := range s.Rows {
		if r.Status != sweep.StatusDone {
			continue
		}
		l, err := s.Layout(r.RunID)
		if err != nil {
			return nil, fmt.Errorf("report: %w", err)
		}
		st.IDs = make([]string, n)
		if l.Labels != nil {
			st.Labels = make([]string, n)
		}
		for i, p := range l.Point {
			if int(p) < 0 || int(p) >= n {
				return nil, fmt.Errorf("report: layout of run %s: point %d outside 0..%d", r.RunID, p, n-1)
			}
			st.IDs[p] = l.IDs[i]
			if l.Labels != nil {
				st.Labels[p] = l.Labels[i]
			}
		}
		break
	}
	if st.IDs == nil {
		for _, p := range s.Points {
			if st.IDs == nil {
				st.IDs = make([]string, n)
			}
			if p.Point >= 0 && p.Point < n {
				st.IDs[p.Point] = p.ID
			}
		}
	}

	scores := map[string]*sweep.SettingScore{}
	for i := range s.SettingScores {
		scores[s.SettingScores[i].ID] = &s.SettingScores[i]
	}
	index := map[string]int{}
	for _, ps := range s.Settings {
		set := Setting{ID: ps.ID, Runs: len(plan.Seeds), Params: []Field{
			{"perplexity", ff(ps.Perplexity)}, {"learning_rate", lrText(ps.LearningRate)},
			{"exaggeration", ff(ps.Exaggeration)}, {"exaggeration_iters", strconv.Itoa(ps.ExaggerationIters)},
			{"iters", strconv.Itoa(ps.Iters)}, {"init", ps.Init}, {"gradient", ps.Gradient},
		}}
		if withTheta {
			set.Params = append(set.Params, Field{"theta", ff(ps.Theta)})
		}
		nan := stability.MedianIQR{Median: math.NaN(), IQR: math.NaN()}
		set.Disparity, set.Jaccard, set.Trustworthiness, set.Continuity = nan, nan, nan, nan
		set.KNNRecall, set.DistanceSpearman, set.LabelAccuracy, set.KL = nan, nan, nan, nan
		set.PairSpearman, set.LabelPurity = nan, nan
		if sc := scores[ps.ID]; sc != nil {
			set.RunsDone = sc.RunsDone
			set.Disparity, set.Jaccard = sc.Disparity, sc.Jaccard
			set.Trustworthiness, set.Continuity, set.KNNRecall = sc.Trustworthiness, sc.Continuity, sc.KNNRecall
			set.DistanceSpearman, set.LabelAccuracy, set.KL = sc.DistanceSpearman, sc.LabelAccuracy, sc.KL
			set.PairSpearman, set.LabelPurity = sc.PairSpearman, sc.LabelPurity
			set.UnstableShare = sc.UnstableShare
		}
		index[ps.ID] = len(st.Settings)
		st.Settings = append(st.Settings, set)
	}
	for _, p := range s.Points {
		i, ok := index[p.SettingID]
		if !ok || p.Point < 0 || p.Point >= n {
			continue
		}
		set := &st.Settings[i]
		if set.Consensus == nil {
			set.Consensus = make([]float64, 2*n)
			set.Spread = make([]float64, n)
			set.Unstable = make([]bool, n)
		}
		set.Consensus[2*p.Point], set.Consensus[2*p.Point+1] = p.ConsensusX, p.ConsensusY
		set.Spread[p.Point], set.Unstable[p.Point] = p.Spread, p.Unstable
	}

	runScore := map[string]*sweep.RunScore{}
	for i := range s.RunScores {
		runScore[s.RunScores[i].RunID] = &s.RunScores[i]
	}
	for _, r := range s.Rows {
		run := Run{ID: r.RunID, SettingID: r.SettingID, Seed: r.Seed, Status: r.Status, Error: r.Error, KL: r.KL,
			Iters: r.IterationsDone, Seconds: r.Seconds,
			Trustworthiness: math.NaN(), Continuity: math.NaN(), KNNRecall: math.NaN(), DistanceSpearman: math.NaN(), LabelAccuracy: math.NaN()}
		if rs := runScore[r.RunID]; rs != nil {
			run.Trustworthiness, run.Continuity, run.KNNRecall = rs.Trustworthiness, rs.Continuity, rs.KNNRecall
			run.DistanceSpearman, run.LabelAccuracy = rs.DistanceSpearman, rs.LabelAccuracy
		}
		if r.Status == sweep.StatusDone {
			if tr, err := s.Trace(r.RunID); err == nil {
				for _, tp := range tr {
					run.Trace = append(run.Trace, TracePoint{tp.Iter, tp.KL})
				}
			}
		}
		st.Runs = append(st.Runs, run)
	}
	for _, p := range s.Pairs {
		st.Pairs = append(st.Pairs, Pair{SettingID: p.SettingID, RunA: p.RunA, RunB: p.RunB, Disparity: p.Disparity, Jaccard: p.Jaccard})
	}
	return st, nil
}

// Open reads the study in dir with sweep.Open and adapts it (FromSweep).
func Open(dir string) (*View, error) {
	s, err := sweep.Open(dir)
	if err != nil {
		return nil, err
	}
	return FromSweep(s)
}
