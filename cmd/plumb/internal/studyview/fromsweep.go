package studyview

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"plumb/internal/words"
	"plumb/stability"
	"plumb/sweep"
)

// NotScoredError reports a study whose score tables are missing, or do not
// describe its finished runs (Problem, from sweep.Study.ScoresProblem).
type NotScoredError struct{ Dir, Problem string }

// Error says which study lacks its scores.
func (e *NotScoredError) Error() string {
	if e.Problem != "" {
		return e.Dir + ": " + e.Problem
	}
	return e.Dir + " has no score tables"
}

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
// runs, the KL traces (a missing trace file leaves that run without one)
// and the layouts aligned onto their consensus (loadRunLayouts).
// The study must have been scored. Cost: every finished run's layout file
// and trace file are read, and each layout aligned in O(n).
func FromSweep(s *sweep.Study) (*View, error) {
	if s.SettingScores == nil {
		return nil, &NotScoredError{Dir: s.Dir, Problem: s.ScoresProblem}
	}
	b := &viewBuilder{s: s, v: &View{Dir: s.Dir, Tool: "plumb", Version: s.Info.Version, Created: s.Info.Created,
		PlanHash: s.Info.PlanHash, Seeds: append([]uint64(nil), s.Plan.Seeds...), K: s.ScoresK}}
	b.input()
	b.gradient()
	b.grid()
	if err := b.points(); err != nil {
		return nil, err
	}
	b.settings()
	b.consensus()
	b.runs()
	b.pairs()
	b.readings()
	if err := loadRunLayouts(b.s, b.v); err != nil {
		return nil, err
	}
	return b.v, nil
}

// viewBuilder fills a View from a sweep.Study, one step per method.
type viewBuilder struct {
	s *sweep.Study
	v *View
	// withTheta is set when Barnes-Hut was planned or used, so that θ is
	// shown as a parameter.
	withTheta bool
	// index maps a setting id to its position in v.Settings.
	index map[string]int
}

// input describes the input and its preprocessing.
func (b *viewBuilder) input() {
	in := b.s.Info.Input
	pre := "none"
	switch {
	case in.Standardize && in.PCA > 0:
		pre = fmt.Sprintf("each column standardised, then PCA to %s", words.Count(in.PCA, "component"))
	case in.Standardize:
		pre = "each column standardised to mean 0, standard deviation 1"
	case in.PCA > 0:
		pre = fmt.Sprintf("PCA to %s", words.Count(in.PCA, "component"))
	}
	b.v.Input = Input{Path: in.Path, Fingerprint: in.Fingerprint, N: in.N, D: in.D, Columns: in.Columns,
		IDColumn: in.IDColumn, LabelColumn: in.LabelColumn, Preprocessing: pre}
	if len(b.s.RunScores) > 0 {
		b.v.Sampled = b.s.RunScores[0].Sampled
	}
}

// gradient describes the gradient methods used, from the runs (the plan
// may say "auto").
func (b *viewBuilder) gradient() {
	plan := b.s.Plan
	used := map[string]bool{}
	for _, r := range b.s.Rows {
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
	b.v.Gradient = strings.Join(words, "; ")
	b.withTheta = used["barnes-hut"]
}

// grid lists the plan's parameters and values, in plan order.
func (b *viewBuilder) grid() {
	plan := b.s.Plan
	add := func(name string, values []string) { b.v.Grid = append(b.v.Grid, Param{name, values}) }
	add("perplexity", mapValues(plan.Perplexity, ff))
	add("learning_rate", mapValues(plan.LearningRate, lrText))
	add("exaggeration", mapValues(plan.Exaggeration, ff))
	add("exaggeration_iters", mapValues(plan.ExaggerationIters, strconv.Itoa))
	add("iters", mapValues(plan.Iters, strconv.Itoa))
	add("init", append([]string(nil), plan.Init...))
	add("gradient", append([]string(nil), plan.Gradient...))
	if b.withTheta {
		add("theta", []string{ff(plan.Theta)})
	}
}

func mapValues[T any](v []T, f func(T) string) []string {
	var out []string
	for _, x := range v {
		out = append(out, f(x))
	}
	return out
}

// points takes the ids and labels from the first finished layout, or the
// ids from the points table when no layout is there.
func (b *viewBuilder) points() error {
	s, st, n := b.s, b.v, b.s.Info.Input.N
	for _, r := range s.Rows {
		if r.Status != sweep.StatusDone {
			continue
		}
		l, err := s.Layout(r.RunID)
		if err != nil {
			return fmt.Errorf("report: %w", err)
		}
		st.IDs = make([]string, n)
		if l.Labels != nil {
			st.Labels = make([]string, n)
		}
		for i, p := range l.Point {
			if int(p) < 0 || int(p) >= n {
				return fmt.Errorf("report: layout of run %s: point %d outside 0..%d", r.RunID, p, n-1)
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
	return nil
}

// settings adds every planned setting with its scores (NaN where the
// setting has none).
func (b *viewBuilder) settings() {
	s, plan := b.s, b.s.Plan
	scores := map[string]*sweep.SettingScore{}
	for i := range s.SettingScores {
		scores[s.SettingScores[i].ID] = &s.SettingScores[i]
	}
	b.index = map[string]int{}
	for _, ps := range s.Settings {
		set := Setting{ID: ps.ID, Runs: len(plan.Seeds), Params: []Field{
			{"perplexity", ff(ps.Perplexity)}, {"learning_rate", lrText(ps.LearningRate)},
			{"exaggeration", ff(ps.Exaggeration)}, {"exaggeration_iters", strconv.Itoa(ps.ExaggerationIters)},
			{"iters", strconv.Itoa(ps.Iters)}, {"init", ps.Init}, {"gradient", ps.Gradient},
		}}
		if b.withTheta {
			set.Params = append(set.Params, Field{"theta", ff(ps.Theta)})
		}
		nan := stability.MedianIQR{Median: math.NaN(), IQR: math.NaN()}
		set.Disparity, set.Jaccard, set.Trustworthiness, set.Continuity = nan, nan, nan, nan
		set.KNNRecall, set.DistanceSpearman, set.LabelAccuracy, set.KL = nan, nan, nan, nan
		set.PairSpearman, set.LabelPurity = nan, nan
		set.RNXAUC, set.CoAssignment, set.UnstableShare, set.MapClusters = nan, nan, math.NaN(), -1
		if sc := scores[ps.ID]; sc != nil {
			set.RunsDone = sc.RunsDone
			set.Disparity, set.Jaccard = sc.Disparity, sc.Jaccard
			set.Trustworthiness, set.Continuity, set.KNNRecall = sc.Trustworthiness, sc.Continuity, sc.KNNRecall
			set.DistanceSpearman, set.LabelAccuracy, set.KL = sc.DistanceSpearman, sc.LabelAccuracy, sc.KL
			set.PairSpearman, set.LabelPurity = sc.PairSpearman, sc.LabelPurity
			set.UnstableShare = sc.UnstableShare
			set.RNXAUC, set.CoAssignment = sc.RNXAUC, sc.CoAssignment
			set.Varied, set.MedoidRun, set.MapClusters = sc.Varied, sc.MedoidRun, sc.Clusters
			set.NotMeasured = sc.NotMeasured
			set.Arrangements, set.ArrangementSizes, set.Bimodal = sc.Arrangements, sc.ArrangementSizes, sc.Bimodal
			set.ConsensusShown, set.ConsensusNote = sc.ConsensusShown, sc.ConsensusNote
		}
		b.index[ps.ID] = len(b.v.Settings)
		b.v.Settings = append(b.v.Settings, set)
	}
}

// consensus fills each setting's consensus layout, per-point spread and
// flags from the points table.
func (b *viewBuilder) consensus() {
	n := b.s.Info.Input.N
	for _, p := range b.s.Points {
		i, ok := b.index[p.SettingID]
		if !ok || p.Point < 0 || p.Point >= n {
			continue
		}
		set := &b.v.Settings[i]
		if set.Consensus == nil {
			set.Consensus = make([]float64, 2*n)
			set.Spread = make([]float64, n)
			set.Unstable = make([]bool, n)
			set.Stability = make([]float64, n)
			set.Clusters = make([]int32, n)
			for i := range set.Stability {
				set.Stability[i], set.Clusters[i] = math.NaN(), -1
			}
		}
		set.Consensus[2*p.Point], set.Consensus[2*p.Point+1] = p.ConsensusX, p.ConsensusY
		set.Spread[p.Point], set.Unstable[p.Point] = p.Spread, p.Unstable
		set.Stability[p.Point], set.Clusters[p.Point] = p.CoAssignment, int32(p.Cluster)
	}
}

// runs adds every run with its faithfulness scores and KL trace.
func (b *viewBuilder) runs() {
	s := b.s
	runScore := map[string]*sweep.RunScore{}
	for i := range s.RunScores {
		runScore[s.RunScores[i].RunID] = &s.RunScores[i]
	}
	for _, r := range s.Rows {
		run := Run{ID: r.RunID, SettingID: r.SettingID, Seed: r.Seed, Status: r.Status, Error: r.Error, KL: r.KL,
			Iters: r.IterationsDone, Seconds: r.Seconds,
			Trustworthiness: math.NaN(), Continuity: math.NaN(), KNNRecall: math.NaN(), DistanceSpearman: math.NaN(), LabelAccuracy: math.NaN(),
			RNXAUC: math.NaN()}
		if rs := runScore[r.RunID]; rs != nil {
			run.Trustworthiness, run.Continuity, run.KNNRecall = rs.Trustworthiness, rs.Continuity, rs.KNNRecall
			run.DistanceSpearman, run.LabelAccuracy = rs.DistanceSpearman, rs.LabelAccuracy
			run.RNXAUC = rs.RNXAUC
		}
		if r.Status == sweep.StatusDone {
			if tr, err := s.Trace(r.RunID); err == nil {
				for _, tp := range tr {
					run.Trace = append(run.Trace, TracePoint{tp.Iter, tp.KL})
				}
			}
		}
		b.v.Runs = append(b.v.Runs, run)
	}
}

// pairs adds the agreement of every pair of runs.
func (b *viewBuilder) pairs() {
	for _, p := range b.s.Pairs {
		b.v.Pairs = append(b.v.Pairs, Pair{SettingID: p.SettingID, RunA: p.RunA, RunB: p.RunB, Disparity: p.Disparity, Jaccard: p.Jaccard})
	}
}

// readings adds the clusters and label tables and reads each setting's
// medoid layout (a run that cannot be read leaves Medoid nil).
func (b *viewBuilder) readings() {
	for _, c := range b.s.Clusters {
		b.v.Clusters = append(b.v.Clusters, Cluster{SettingID: c.SettingID, MedoidRun: c.MedoidRun, Cluster: c.Cluster, Size: c.Size,
			Jaccard: c.Jaccard, Min: c.Min, Runs: c.Runs, Dissolved: c.Dissolved, Reading: c.Reading, Labels: c.Labels})
	}
	for _, l := range b.s.Labels {
		b.v.LabelReadings = append(b.v.LabelReadings, LabelStability{SettingID: l.SettingID, Label: l.Label, Points: l.Points, Stable: l.Stable,
			MeanScore: l.MeanScore, Mixes: l.Mixes, MixesWith: l.MixesWith, MixesShare: l.MixesShare})
	}
	n := b.s.Info.Input.N
	for i := range b.v.Settings {
		set := &b.v.Settings[i]
		if set.MedoidRun == "" {
			continue
		}
		l, err := b.s.Layout(set.MedoidRun)
		if err != nil {
			continue
		}
		y := make([]float64, 2*n)
		for i := range y {
			y[i] = math.NaN()
		}
		for m, p := range l.Point {
			if int(p) >= 0 && int(p) < n {
				y[2*p], y[2*p+1] = l.Y[2*m], l.Y[2*m+1]
			}
		}
		set.Medoid = y
	}
}

// ClustersOf returns the clusters of the setting's medoid run, largest
// first.
func (s *View) ClustersOf(id string) []Cluster {
	var out []Cluster
	for _, c := range s.Clusters {
		if c.SettingID == id {
			out = append(out, c)
		}
	}
	return out
}

// LabelsOf returns the per-label stability of the setting.
func (s *View) LabelsOf(id string) []LabelStability {
	var out []LabelStability
	for _, l := range s.LabelReadings {
		if l.SettingID == id {
			out = append(out, l)
		}
	}
	return out
}

// Open reads the study in dir with sweep.Open and adapts it (FromSweep).
func Open(dir string) (*View, error) {
	s, err := sweep.Open(dir)
	if err != nil {
		return nil, err
	}
	return FromSweep(s)
}
