package sweep

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"

	"plumb/internal/parquetio"
	"plumb/stability"
	"plumb/tsne"
)

// RunRow is one row of runs.parquet.
type RunRow struct {
	RunID, SettingID string
	Perplexity       float64
	// LearningRate is the value used (4-in-gradient convention);
	// LearningRateSpec is "auto" or the number as planned.
	LearningRate      float64
	LearningRateSpec  string
	Exaggeration      float64
	ExaggerationIters int
	Iters             int
	Init              string
	Seed              uint64
	// Gradient is the method used; GradientSpec the method planned
	// (possibly "auto").
	Gradient, GradientSpec string
	Theta                  float64
	// Subsample is the setting's subsample fraction (1: all points).
	Subsample float64
	// Status is "done" or "failed"; Error the reason of a failure.
	Status, Error string
	// KL is the final KL divergence (NaN for a failed run).
	KL             float64
	IterationsDone int
	Seconds        float64
}

// RunScore is one row of scores/runs.parquet: faithfulness of one layout
// to the input. Label scores are NaN without labels.
type RunScore struct {
	RunID, SettingID                                         string
	Trustworthiness, Continuity, KNNRecall, DistanceSpearman float64
	LabelAccuracy, LabelPurity                               float64
	K, Sampled                                               int
	KL                                                       float64
	// RNXAUC is the area under the R_NX(K) curve on a log-K axis (Lee &
	// Verleysen 2009), averaged over RNXQueries query points; NaN when
	// undefined (a collapsed layout).
	RNXAUC     float64
	RNXQueries int
	// Points is the number of points the run embeds (n, or its
	// subsample's size); its faithfulness is to those points' input.
	Points int
}

// SettingScore is one row of scores/settings.parquet. Statistics that
// cannot be computed (fewer than two runs, no labels) are NaN.
type SettingScore struct {
	Setting
	RunsDone, RunsFailed int
	// Across pairs of runs: Procrustes disparity, map-neighbour Jaccard,
	// Spearman correlation of pairwise map distances.
	Disparity, Jaccard, PairSpearman stability.MedianIQR
	// Across runs: faithfulness scores and final KL.
	Trustworthiness, Continuity, KNNRecall, DistanceSpearman stability.MedianIQR
	LabelAccuracy, LabelPurity, KL                           stability.MedianIQR
	// RNXAUC is the R_NX AUC across runs; CoAssignment the per-point
	// co-assignment score across points (NaN when not measured).
	RNXAUC, CoAssignment stability.MedianIQR
	// UnstableShare is the share of the points with a co-assignment score
	// that are flagged unstable (score < 0.75); NaN when not measured.
	UnstableShare float64
	// MedoidRun is the run with the least total disparity to the others
	// (the setting's picture); "" without finished runs. Clusters is the
	// number of map clusters in it (−1 when not clustered).
	MedoidRun string
	Clusters  int
	// Arrangements is the number of distinct arrangements of the runs
	// (stability.Arrange), 0 when not measured; ArrangementSizes their run
	// counts ("3+2"), Bimodal whether there are two or more.
	Arrangements     int
	ArrangementSizes string
	Bimodal          bool
	// ConsensusShown says whether the averaged consensus may be shown
	// beside the medoid (stability.ConsensusAgrees); ConsensusNote why
	// not.
	ConsensusShown bool
	ConsensusNote  string
	// Varied says what differed between the setting's runs: "seed",
	// "subsample", "seed+subsample", or "" when nothing did (see Varied;
	// also "" when its runs turned out bit-identical). With "" the
	// between-run scores (Disparity, Jaccard, PairSpearman, UnstableShare,
	// pair scores and point spreads) are NaN, stored as null.
	Varied string
	// NotMeasured says why the between-run scores are missing ("" when
	// they were measured).
	NotMeasured string
}

// PointScore is one row of scores/points.parquet.
type PointScore struct {
	SettingID string
	Point     int
	ID        string
	// CoAssignment is the point's co-assignment score (NaN when not
	// measured) and Unstable its flag (score < 0.75).
	CoAssignment float64
	Unstable     bool
	// Spread is the RMS distance from the consensus over the consensus RMS
	// radius (global placement); SpreadFlagged is Spread > the spread
	// threshold.
	Spread        float64
	SpreadFlagged bool
	// Cluster is the point's map cluster in the medoid run (−1: noise or
	// not clustered).
	Cluster                int
	ConsensusX, ConsensusY float64
	// Runs is the number of the setting's compared runs that hold the
	// point (all of them without subsampling); Spread is NaN below 2.
	Runs int
}

// PairScore is one row of scores/pairs.parquet.
type PairScore struct {
	SettingID, RunA, RunB                string
	Disparity, Jaccard, DistanceSpearman float64
	// Points is the number of points the two runs share, on which the
	// scores were computed (n without subsampling).
	Points int
}

// Study is a study directory opened for reading.
type Study struct {
	Dir  string
	Info *Info
	Plan *Plan
	// Settings in plan order; Runs every run of the plan in plan order.
	Settings []*Setting
	Planned  []*Run
	// Rows holds runs.parquet (or, if it is missing, the same rows built
	// from the per-run records): the finished runs, in plan order.
	Rows []RunRow
	// Score tables; nil when the study has not been scored. ScoresK is the
	// k they were computed with.
	RunScores     []RunScore
	SettingScores []SettingScore
	Points        []PointScore
	Pairs         []PairScore
	Clusters      []ClusterScore
	Labels        []LabelScore
	ScoresK       int
	// ScoresProblem is set, and the score tables above left nil, when
	// scores/ holds tables that do not form one scoring of this study (a
	// table missing or of another plan or input, or tables of different k
	// left by an interrupted Score); the study needs scoring again.
	ScoresProblem string
}

// Open reads a study: study.json, the runs table and, if present, the
// score tables. Layouts are read on demand with Layout.
func Open(dir string) (*Study, error) {
	info, err := ReadInfo(dir)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, fmt.Errorf("%s is not a study (no %s)", dir, StudyFile)
		}
		return nil, err
	}
	st := &Study{Dir: dir, Info: info, Plan: info.Plan, Settings: info.Plan.Settings()}
	if st.Planned, err = info.Plan.Runs(); err != nil {
		return nil, err
	}
	runsPath := filepath.Join(dir, RunsFile)
	if _, err := os.Stat(runsPath); err == nil {
		if st.Rows, err = readRunsTable(runsPath); err != nil {
			return nil, &RebuildError{Dir: dir, Err: err}
		}
	} else {
		for _, r := range st.Planned {
			rec, err := readRecord(dir, info, r)
			if err != nil {
				continue
			}
			st.Rows = append(st.Rows, rowFromRecord(r, rec))
		}
	}
	if err := st.readScores(); err != nil {
		return nil, err
	}
	return st, nil
}

// RebuildError reports a damaged derived table that `plumb score` rebuilds
// from the run records.
type RebuildError struct {
	Dir string
	Err error
}

func (e *RebuildError) Error() string { return e.Err.Error() }
func (e *RebuildError) Unwrap() error { return e.Err }

// Hint says how to repair the table.
func (e *RebuildError) Hint() string {
	return "run `plumb score " + e.Dir + "`: it rebuilds " + RunsFile + " from records/"
}

func rowFromRecord(r *Run, rec *Record) RunRow {
	s := r.Setting
	row := RunRow{RunID: r.ID, SettingID: s.ID, Perplexity: s.Perplexity, LearningRate: rec.LearningRate,
		LearningRateSpec: s.LearningRateSpec(), Exaggeration: s.Exaggeration, ExaggerationIters: s.ExaggerationIters,
		Iters: s.Iters, Init: s.Init, Seed: r.Seed, Gradient: rec.Gradient, GradientSpec: s.Gradient, Theta: s.Theta,
		Subsample: s.Fraction(), Status: rec.Status, Error: rec.Error, KL: math.NaN(), IterationsDone: rec.IterationsDone, Seconds: rec.Seconds}
	if rec.KL != nil {
		row.KL = *rec.KL
	}
	return row
}

// colReader pulls typed columns out of a table, remembering the first
// error.
type colReader struct {
	t    *parquetio.Table
	path string
	err  error
}

func (c *colReader) fail(err error) {
	if c.err == nil && err != nil {
		c.err = fmt.Errorf("%s: %w", c.path, err)
	}
}
func (c *colReader) str(name string) []string {
	v, err := c.t.String(name)
	c.fail(err)
	return v
}
func (c *colReader) f64(name string) []float64 {
	v, err := c.t.Float64(name)
	c.fail(err)
	col := c.t.Column(name)
	if err == nil && col.Valid != nil {
		out := append([]float64(nil), v...)
		for i := range out {
			if col.IsNull(i) {
				out[i] = math.NaN()
			}
		}
		return out
	}
	return v
}

// nullStr returns v[i], or "" when the named column is null there.
func (c *colReader) nullStr(name string, i int, v []string) string {
	if col := c.t.Column(name); col == nil || col.IsNull(i) || i >= len(v) {
		return ""
	}
	return v[i]
}
func (c *colReader) i32(name string) []int32 {
	v, err := c.t.Int32(name)
	c.fail(err)
	return v
}

// optI32 is i32 for a column that studies made by older versions lack:
// absent, every row holds def.
func (c *colReader) optI32(name string, def int32) []int32 {
	if c.t.Column(name) == nil {
		out := make([]int32, c.t.Rows())
		for i := range out {
			out[i] = def
		}
		return out
	}
	return c.i32(name)
}

// optStr is str for an optional column: nil when absent, "" for nulls.
func (c *colReader) optStr(name string) []string {
	col := c.t.Column(name)
	if col == nil {
		return nil
	}
	v := append([]string(nil), c.str(name)...)
	for i := range v {
		if col.IsNull(i) {
			v[i] = ""
		}
	}
	return v
}

func (c *colReader) i64(name string) []int64 {
	v, err := c.t.Int64(name)
	c.fail(err)
	return v
}
func (c *colReader) boolean(name string) []bool {
	v, err := c.t.Bool(name)
	c.fail(err)
	return v
}

func readTable(path string) (*colReader, error) {
	t, err := parquetio.Read(path)
	if err != nil {
		return nil, err
	}
	return &colReader{t: t, path: path}, nil
}

func readRunsTable(path string) ([]RunRow, error) {
	c, err := readTable(path)
	if err != nil {
		return nil, err
	}
	runID, settingID := c.str("run_id"), c.str("setting_id")
	perp, lr, lrSpec := c.f64("perplexity"), c.f64("learning_rate"), c.str("learning_rate_spec")
	exag, exagIters, iters := c.f64("exaggeration"), c.i32("exaggeration_iters"), c.i32("iters")
	init, seed, grad, gradSpec := c.str("init"), c.i64("seed"), c.str("gradient"), c.str("gradient_spec")
	theta, status, errs, kl := c.f64("theta"), c.str("status"), c.str("error"), c.f64("kl")
	itDone, secs := c.i32("iterations_done"), c.f64("seconds")
	if c.err != nil {
		return nil, c.err
	}
	sub := make([]float64, len(runID))
	if c.t.Column("subsample") != nil {
		sub = c.f64("subsample") // absent from studies made before resampling existed
		if c.err != nil {
			return nil, c.err
		}
	} else {
		for i := range sub {
			sub[i] = 1
		}
	}
	errCol := c.t.Column("error")
	rows := make([]RunRow, len(runID))
	for i := range rows {
		e := errs[i]
		if errCol.IsNull(i) {
			e = ""
		}
		rows[i] = RunRow{RunID: runID[i], SettingID: settingID[i], Perplexity: perp[i], LearningRate: lr[i],
			LearningRateSpec: lrSpec[i], Exaggeration: exag[i], ExaggerationIters: int(exagIters[i]), Iters: int(iters[i]),
			Init: init[i], Seed: uint64(seed[i]), Gradient: grad[i], GradientSpec: gradSpec[i], Theta: theta[i],
			Subsample: sub[i], Status: status[i], Error: e, KL: kl[i], IterationsDone: int(itDone[i]), Seconds: secs[i]}
	}
	return rows, nil
}

// Layout is one run's layout as stored.
type Layout struct {
	RunID string
	// Point holds the 0-based input row of each layout row; IDs the point
	// ids; Labels the labels (nil without labels).
	Point  []int32
	IDs    []string
	Labels []string
	// Y holds the coordinates, flat row-major x0, y0, x1, y1, ….
	Y []float64
}

// Layout reads the layout of a finished run, checking its metadata against
// the study.
func (s *Study) Layout(runID string) (*Layout, error) {
	var run *Run
	for _, r := range s.Planned {
		if r.ID == runID {
			run = r
			break
		}
	}
	if run == nil {
		return nil, fmt.Errorf("%s: no run %q in the plan", s.Dir, runID)
	}
	path := layoutPath(s.Dir, runID)
	y, err := readLayout(s.Dir, s.Info, run)
	if err != nil {
		return nil, err
	}
	t, err := parquetio.Read(path)
	if err != nil {
		return nil, err
	}
	c := &colReader{t: t, path: path}
	l := &Layout{RunID: runID, Point: c.i32("point"), IDs: c.str("id"), Y: y}
	if t.Column("label") != nil {
		l.Labels = c.str("label")
	}
	if c.err != nil {
		return nil, c.err
	}
	return l, nil
}

// Trace reads the KL trace of a finished run.
func (s *Study) Trace(runID string) ([]tsne.TracePoint, error) {
	path := tracePath(s.Dir, runID)
	c, err := readTable(path)
	if err != nil {
		return nil, err
	}
	it, kl := c.i32("iter"), c.f64("kl")
	if c.err != nil {
		return nil, c.err
	}
	out := make([]tsne.TracePoint, len(it))
	for i := range out {
		out[i] = tsne.TracePoint{Iter: int(it[i]), KL: kl[i]}
	}
	return out, nil
}

// Setting returns the setting with the given id, or nil.
func (s *Study) Setting(id string) *Setting {
	for _, st := range s.Settings {
		if st.ID == id {
			return st
		}
	}
	return nil
}
