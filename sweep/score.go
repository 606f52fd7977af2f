package sweep

import (
	"context"
	"errors"
	"fmt"
	"math"

	"plumb/internal/dataset"
	"plumb/internal/par"
	"plumb/stability"
	"plumb/tsne"
)

// DefaultK is the neighbourhood size used for scoring when ScoreOptions.K
// is 0 (common practice for trustworthiness-type scores; scikit-learn's
// trustworthiness defaults to 5, we use 15 to match the Jaccard overlap).
const DefaultK = 15

// scoreSeed seeds the sampled scores (query points above
// stability.DefaultExactLimit, distance pairs above stability.DefaultPairs).
// It is fixed so that scoring is reproducible.
const scoreSeed = 0x73636f7265

// ScoreOptions controls Score.
type ScoreOptions struct {
	// K is the neighbourhood size of every neighbour-based score. If K is
	// 0, DefaultK is used. It must be below n/2.
	K int
	// Threads bounds the goroutines. If Threads is 0, GOMAXPROCS is used.
	// Results do not depend on it.
	Threads int
	// SpreadThreshold sets a point's spread_flagged when its spread
	// exceeds it. If it is 0, stability.DefaultSpreadThreshold is used.
	SpreadThreshold float64
	// Lock is the caller's exclusive lock on the study (LockStudy); if it
	// is nil, Score takes one itself for its duration.
	Lock *Lock
	// RNXQueries is the number of query points of each run's R_NX curve.
	// If it is 0, DefaultRNXQueries is used; a negative value makes every
	// ranked point a query.
	RNXQueries int
}

// ScoreResult counts the rows written by Score.
type ScoreResult struct {
	Runs, Settings, Points, Pairs int
	Clusters, Labels              int
	K                             int
	// Planned counts the plan's runs; Unfinished lists those without a
	// valid record (not run yet, interrupted, or their record deleted),
	// which the tables leave out.
	Planned    int
	Unfinished []string
}

// CheckK checks a neighbourhood size against n points: the neighbour
// scores need 1 ≤ k < n/2 (the k map neighbours and the k input neighbours
// of a point must be able to differ).
func CheckK(k, n int) error {
	if k < 1 {
		return fmt.Errorf("k = %d: must be at least 1", k)
	}
	if k > (n-1)/2 {
		return fmt.Errorf("k = %d is too large for %d points: k must be below n/2, so at most %d", k, n, max((n-1)/2, 0))
	}
	return nil
}

// Score (re)computes the score tables of the study in dir from its
// finished runs and writes scores/runs.parquet, settings.parquet,
// points.parquet and pairs.parquet (and rebuilds runs.parquet). ds must be
// the study's input (its fingerprint is checked). Scoring is idempotent:
// the same study and options give the same tables.
//
// Per run (faithfulness of the map to the input, at K): trustworthiness
// and continuity (Venna & Kaski 2001; Kaski et al. 2003), kNN recall, the
// Spearman correlation between input and map distances
// (stability.DistanceCorrelation), and with labels the leave-one-out kNN
// label accuracy and label purity (stability.LabelAgreement). Above
// stability.DefaultExactLimit points the neighbour scores average over a
// fixed sample of stability.DefaultSamples query points (column sampled).
//
// Per setting with at least two finished runs: every pair of runs is
// compared by Procrustes disparity, map-neighbour Jaccard overlap and
// distance Spearman; the runs are aligned by generalised Procrustes
// (Gower 1975) to a consensus, each point's spread across runs is its RMS
// distance from the consensus divided by the consensus RMS radius, and
// points above the threshold are flagged unstable. Settings report the
// median and interquartile range of every score.
//
// Cost: the runs are read in batches of whole settings, up to 32 Mi layout
// values (256 MiB) per batch, and the faithfulness of a batch is computed
// together (stability.FaithfulnessBatch): each query point's input
// distances, O(N·D), are computed once per batch rather than once per run,
// which leaves O(Q·N) per run for Q query points. The input's pair
// distances are ranked once for all runs and each layout's once for all
// its pairs (stability.DistanceRanks). The tables are the same as scoring
// every run on its own, whatever the batches and Threads.
func Score(ctx context.Context, dir string, ds *dataset.Dataset, opt ScoreOptions) (*ScoreResult, error) {
	info, err := ReadInfo(dir)
	if err != nil {
		return nil, fmt.Errorf("score: %w", err)
	}
	if ds.Fingerprint != info.Input.Fingerprint {
		return nil, &MismatchError{Dir: dir, What: "input", Have: "fingerprint " + short(info.Input.Fingerprint), Want: "fingerprint " + short(ds.Fingerprint), Scoring: true}
	}
	k := opt.K
	if k == 0 {
		k = DefaultK
	}
	if err := CheckK(k, ds.N); err != nil {
		return nil, fmt.Errorf("score: %w", err)
	}
	if f := info.Plan.MinFraction(); f < 1 {
		if m := SubsampleSize(ds.N, f); 2*k >= m {
			return nil, fmt.Errorf("score: k = %d must be below half the smallest subsample (%s of %d points: %d, so k < %d)", k, formatFloat(f), ds.N, m, (m+1)/2)
		}
	}
	runs, err := info.Plan.Runs()
	if err != nil {
		return nil, fmt.Errorf("score: %w", err)
	}
	// One writer at a time: the caller's exclusive lock, or our own.
	lock := opt.Lock
	if lock == nil {
		if lock, err = LockStudy(dir, Shard{}, true, "sweep.Score"); err != nil {
			return nil, err
		}
		defer lock.Release()
	} else if !lock.Exclusive() {
		return nil, errors.New("score: the study must be locked exclusively (sweep.LockStudy)")
	}
	// The only writer: every temporary file is a killed process's.
	cleanStudyTemps(dir, 0)
	cov := coverageOf(dir, info, runs)
	info.covers = cov.String()
	var unfinished []string
	for _, r := range runs {
		if _, err := readRecord(dir, info, r); err != nil {
			unfinished = append(unfinished, r.ID)
		}
	}
	if _, err := writeRunsTable(dir, info, runs); err != nil {
		return nil, fmt.Errorf("score: %w", err)
	}
	threads := opt.Threads
	// Exact input neighbours once, shared by the continuity and recall of
	// every run.
	var inNb *tsne.Neighbors
	if ds.N <= stability.DefaultExactLimit {
		if inNb, err = tsne.ExactNeighbors(ds.X, ds.N, ds.D, k, threads); err != nil {
			return nil, fmt.Errorf("score: input neighbours: %w", err)
		}
	}
	sc := &runScorer{ds: ds, k: k, threads: threads, inNb: inNb}
	bySetting := map[string][]*Run{}
	for _, r := range runs {
		bySetting[r.Setting.ID] = append(bySetting[r.Setting.ID], r)
	}
	var (
		runScores []RunScore
		settings  []SettingScore
		points    []PointScore
		pairs     []PairScore
		clusters  []ClusterScore
		labels    []LabelScore
	)
	// Settings are read and scored in batches of whole settings holding
	// at most scoreBatchFloats layout values (counting every run of a
	// setting as finished), so that the faithfulness of all the runs of a
	// batch is computed together (stability.FaithfulnessBatch); a setting
	// larger than that is a batch of its own. Rows are produced in plan
	// order, and errors in the order scoring one run after another would
	// meet them.
	all := info.Plan.Settings()
	for next := 0; next < len(all); {
		var batch []*settingRuns
		var stop error // a read error ending the batch after its last run
		for size := 0; next < len(all) && stop == nil; next++ {
			s := all[next]
			sz := 2 * ds.N * len(bySetting[s.ID])
			if len(batch) > 0 && size+sz > scoreBatchFloats {
				break
			}
			size += sz
			sr, err := readSettingRuns(ctx, dir, info, s, bySetting[s.ID])
			batch = append(batch, sr)
			stop = err
		}
		var batchLayouts, fullLayouts [][]float64
		var batchRows [][]int32
		for _, sr := range batch {
			batchLayouts = append(batchLayouts, sr.layouts...)
			batchRows = append(batchRows, sr.rows...)
		}
		// Runs on all points share one faithfulness batch; a run on a
		// subsample is scored against its own input rows.
		fullAt := make([]int, len(batchLayouts))
		for q, y := range batchLayouts {
			fullAt[q] = -1
			if batchRows[q] == nil {
				fullAt[q] = len(fullLayouts)
				fullLayouts = append(fullLayouts, y)
			}
		}
		faith := sc.batch(fullLayouts)
		aucs, aucQueries := sc.rnxAUC(batchLayouts, batchRows, opt.RNXQueries)
		// Each run's own scores, the runs of the batch in parallel (they
		// share only read-only inputs); used below in plan order, so the
		// first failing run still reports its error.
		type runResult struct {
			rs  RunScore
			yr  *stability.DistanceRanks
			err error
		}
		results := make([]runResult, len(batchLayouts))
		sc.prepare()
		par.Each(len(batchLayouts), threads, func(q int) {
			r := &results[q]
			if batchRows[q] != nil {
				r.rs, r.err = sc.scoreSubset(batchRows[q], batchLayouts[q])
				return
			}
			var f *stability.Faithfulness
			if faith != nil {
				f = &faith[fullAt[q]]
			}
			r.rs, r.yr, r.err = sc.score(batchLayouts[q], f)
		})
		at := 0
		for b, sr := range batch {
			s := sr.setting
			ss := SettingScore{Setting: *s, UnstableShare: math.NaN(), RunsFailed: sr.failed}
			scores := make([]RunScore, 0, len(sr.runs))
			ranks := make([]*stability.DistanceRanks, 0, len(sr.runs))
			for i, r := range sr.runs {
				if err := ctx.Err(); err != nil {
					return nil, fmt.Errorf("score: %w", err)
				}
				rs, yr, err := results[at].rs, results[at].yr, results[at].err
				rs.RNXAUC, rs.RNXQueries = aucs[at], aucQueries[at]
				at++
				if err != nil {
					return nil, fmt.Errorf("score: run %s: %w", r.ID, err)
				}
				rs.RunID, rs.SettingID, rs.KL = r.ID, s.ID, *sr.records[i].KL
				scores = append(scores, rs)
				ranks = append(ranks, yr)
			}
			if b == len(batch)-1 && stop != nil {
				return nil, stop
			}
			layouts, done, rows := sr.layouts, sr.runs, sr.rows
			ss.RunsDone = len(done)
			runScores = append(runScores, scores...)
			col := func(f func(RunScore) float64) stability.MedianIQR {
				v := make([]float64, 0, len(scores))
				for _, r := range scores {
					if x := f(r); !math.IsNaN(x) {
						v = append(v, x)
					}
				}
				return medianIQROf(v)
			}
			ss.Trustworthiness = col(func(r RunScore) float64 { return r.Trustworthiness })
			ss.Continuity = col(func(r RunScore) float64 { return r.Continuity })
			ss.KNNRecall = col(func(r RunScore) float64 { return r.KNNRecall })
			ss.DistanceSpearman = col(func(r RunScore) float64 { return r.DistanceSpearman })
			ss.LabelAccuracy = col(func(r RunScore) float64 { return r.LabelAccuracy })
			ss.LabelPurity = col(func(r RunScore) float64 { return r.LabelPurity })
			ss.KL = col(func(r RunScore) float64 { return r.KL })
			ss.RNXAUC = col(func(r RunScore) float64 { return r.RNXAUC })
			ss.Disparity, ss.Jaccard, ss.PairSpearman = nan2(), nan2(), nan2()
			// A layout whose points all coincide (a collapsed run) cannot be
			// aligned (Procrustes needs a non-zero layout) and has no distance
			// ranks: it keeps its own run scores, but the seed-to-seed
			// agreement and the point spreads use the other layouts only.
			{
				var keptL [][]float64
				var keptR []*Run
				var keptRanks []*stability.DistanceRanks
				var keptRows [][]int32
				for i, y := range layouts {
					if !NoVariance(y, len(y)/2, 2) {
						keptL, keptR, keptRanks = append(keptL, y), append(keptR, done[i]), append(keptRanks, ranks[i])
						keptRows = append(keptRows, rows[i])
					}
				}
				layouts, done, ranks, rows = keptL, keptR, keptRanks, keptRows
			}
			// Say what varied between the runs; runs that can only be
			// identical, or are, get no stability reading.
			ss.Varied = Varied(s, info.Plan)
			switch {
			case ss.Varied == "":
				ss.NotMeasured = NotVariedReason
			case identicalLayouts(layouts, rows):
				ss.Varied, ss.NotMeasured = "", IdenticalReason
			case len(layouts) < 2:
				ss.NotMeasured = "fewer than two finished runs to compare"
			}
			pairs0, points0 := len(pairs), len(points)
			if len(layouts) >= 2 && s.Fraction() < 1 {
				if err := scoreSubsetSetting(s, layouts, rows, done, ds, k, opt.SpreadThreshold, &ss, &pairs, &points); err != nil {
					return nil, fmt.Errorf("score: setting %s: %w", s.ID, err)
				}
			} else if len(layouts) >= 2 {
				ag, err := stability.SettingAgreement(layouts, k, threads)
				if err != nil {
					return nil, fmt.Errorf("score: setting %s: %w", s.ID, err)
				}
				var sp []float64
				for _, pa := range ag.Pairs {
					dc, err := pairSpearman(layouts[pa.A], layouts[pa.B], ranks[pa.A], ranks[pa.B])
					if err != nil {
						return nil, fmt.Errorf("score: setting %s: runs %s and %s: %w", s.ID, done[pa.A].ID, done[pa.B].ID, err)
					}
					pairs = append(pairs, PairScore{SettingID: s.ID, RunA: done[pa.A].ID, RunB: done[pa.B].ID,
						Disparity: pa.Disparity, Jaccard: pa.Jaccard, DistanceSpearman: dc, Points: ds.N})
					if !math.IsNaN(dc) {
						sp = append(sp, dc)
					}
				}
				ss.Disparity = stability.MedianIQR{Median: ag.Disparity.Median, IQR: ag.Disparity.IQR}
				ss.Jaccard = stability.MedianIQR{Median: ag.Jaccard.Median, IQR: ag.Jaccard.IQR}
				ss.PairSpearman = medianIQROf(sp)
				ps, g, err := stability.SpreadOf(layouts, opt.SpreadThreshold)
				if err != nil {
					return nil, fmt.Errorf("score: setting %s: %w", s.ID, err)
				}
				for i := 0; i < ds.N; i++ {
					points = append(points, PointScore{SettingID: s.ID, Point: i, ID: ds.IDs[i], Spread: ps.Spread[i],
						Unstable: ps.Flagged[i], ConsensusX: g.Consensus[2*i], ConsensusY: g.Consensus[2*i+1], Runs: len(layouts)})
				}
			}
			// The disparity matrix of the kept runs, before nullStability
			// clears the pair scores of a setting where nothing varied: the
			// medoid run is still the setting's picture.
			dm := disparityMatrix(pairs[pairs0:], done)
			if ss.Varied == "" {
				nullStability(&ss, pairs[pairs0:], points[points0:])
			}
			// The readings of readings.go: medoid, arrangements, clusters,
			// co-assignment, labels.
			rd, err := readSetting(s, ss.Varied, done, layouts, rows, dm, ds.N, ds.Labels, threads)
			if err != nil {
				return nil, fmt.Errorf("score: setting %s: %w", s.ID, err)
			}
			rd.apply(&ss, points[points0:])
			clusters, labels = append(clusters, rd.cs...), append(labels, rd.ls...)
			settings = append(settings, ss)
			batch[b] = nil // its layouts are no longer needed
		}
	}
	if err := writeScoreTables(dir, info, k, runScores, settings, points, pairs, clusters, labels); err != nil {
		return nil, fmt.Errorf("score: %w", err)
	}
	return &ScoreResult{Runs: len(runScores), Settings: len(settings), Points: len(points), Pairs: len(pairs), Clusters: len(clusters), Labels: len(labels), K: k,
		Planned: len(runs), Unfinished: unfinished}, nil
}

// scoreBatchFloats bounds the layout values Score holds at once (2 per
// point and run): 32 Mi float64, 256 MiB. The faithfulness of a batch
// costs one pass over the input per query point whatever its number of
// runs, so larger batches are cheaper; FaithfulnessBatch adds a k-d tree
// per layout, less than the layout itself. A variable so that tests can
// force small batches; results do not depend on it.
var scoreBatchFloats = 32 << 20

// settingRuns holds the finished runs of one setting read from the study,
// in plan order, with their records and layouts.
type settingRuns struct {
	setting *Setting
	runs    []*Run
	records []*Record
	layouts [][]float64
	rows    [][]int32 // input rows of each layout (nil: all points)
	failed  int
}

// readSettingRuns reads the finished runs of setting s. A run without a
// valid record is left out; a failed run is counted. A layout that cannot
// be read ends the setting with an error, returned with the runs read
// before it.
func readSettingRuns(ctx context.Context, dir string, info *Info, s *Setting, runs []*Run) (*settingRuns, error) {
	sr := &settingRuns{setting: s}
	for _, r := range runs {
		if err := ctx.Err(); err != nil {
			return sr, fmt.Errorf("score: %w", err)
		}
		rec, err := readRecord(dir, info, r)
		if err != nil {
			continue
		}
		if rec.Status != StatusDone {
			sr.failed++
			continue
		}
		y, rows, err := readLayoutRows(dir, info, r)
		if err != nil {
			return sr, fmt.Errorf("score: run %s: %w", r.ID, err)
		}
		sr.rows = append(sr.rows, rows)
		sr.runs = append(sr.runs, r)
		sr.records = append(sr.records, rec)
		sr.layouts = append(sr.layouts, y)
	}
	return sr, nil
}

func nan2() stability.MedianIQR { return stability.MedianIQR{Median: math.NaN(), IQR: math.NaN()} }

// scoreSubsetSetting scores the agreement of the runs of a setting on
// subsamples: every pair on the points both runs embed (PairOnCommon),
// per-point spread over the runs that hold each point (spreadMissing).
// It fills ss and appends to pairs and points.
func scoreSubsetSetting(s *Setting, layouts [][]float64, rows [][]int32, done []*Run, ds *dataset.Dataset, k int, threshold float64,
	ss *SettingScore, pairs *[]PairScore, points *[]PointScore) error {
	var dis, jac, sp []float64
	for a := 0; a < len(layouts); a++ {
		for b := a + 1; b < len(layouts); b++ {
			d, j, c, common := PairOnCommon(layouts[a], rows[a], layouts[b], rows[b], k)
			*pairs = append(*pairs, PairScore{SettingID: s.ID, RunA: done[a].ID, RunB: done[b].ID,
				Disparity: d, Jaccard: j, DistanceSpearman: c, Points: common})
			for _, v := range []struct {
				x   float64
				dst *[]float64
			}{{d, &dis}, {j, &jac}, {c, &sp}} {
				if !math.IsNaN(v.x) {
					*v.dst = append(*v.dst, v.x)
				}
			}
		}
	}
	ss.Disparity, ss.Jaccard, ss.PairSpearman = medianIQROf(dis), medianIQROf(jac), medianIQROf(sp)
	spread, cons, held, err := spreadMissing(layouts, rows, ds.N, threshold)
	if err != nil {
		return err
	}
	if threshold <= 0 {
		threshold = stability.DefaultSpreadThreshold
	}
	flagged, measured := 0, 0
	for i := 0; i < ds.N; i++ {
		if held[i] == 0 {
			continue
		}
		un := spread[i] > threshold
		if !math.IsNaN(spread[i]) {
			measured++
			if un {
				flagged++
			}
		}
		*points = append(*points, PointScore{SettingID: s.ID, Point: i, ID: ds.IDs[i], Spread: spread[i], Unstable: un,
			ConsensusX: cons[2*i], ConsensusY: cons[2*i+1], Runs: held[i]})
	}
	if measured > 0 {
		ss.UnstableShare = float64(flagged) / float64(measured)
	}
	return nil
}

// nullStability removes the between-run readings of a setting whose runs
// cannot differ (SettingScore.NotMeasured says why): its agreement
// medians, unstable share, pair scores and point spreads become NaN,
// stored as null. The consensus positions stay: they are the map.
func nullStability(ss *SettingScore, pairs []PairScore, points []PointScore) {
	ss.Disparity, ss.Jaccard, ss.PairSpearman = nan2(), nan2(), nan2()
	ss.UnstableShare = math.NaN()
	for i := range pairs {
		pairs[i].Disparity, pairs[i].Jaccard, pairs[i].DistanceSpearman = math.NaN(), math.NaN(), math.NaN()
	}
	for i := range points {
		points[i].Spread, points[i].Unstable = math.NaN(), false
	}
}

// spreadOf returns the median and IQR of v (Hyndman & Fan definition 7,
// stability.Quantile), NaN for no values.
func medianIQROf(v []float64) stability.MedianIQR {
	if len(v) == 0 {
		return nan2()
	}
	s, err := stability.Summarize(v)
	if err != nil {
		return nan2()
	}
	return stability.MedianIQR{Median: s.Median, IQR: s.IQR}
}

// runScorer computes the scores of single runs against the study's input.
type runScorer struct {
	ds         *dataset.Dataset
	k, threads int
	inNb       *tsne.Neighbors
	// in ranks the input's distances over the pairs every distance
	// correlation uses, made on first use; inFlat records NoVariance of
	// the input.
	in     *stability.DistanceRanks
	inDone bool
	inFlat bool
}

func (sc *runScorer) options() stability.Options {
	sopt := stability.Options{Threads: sc.threads, Seed: scoreSeed}
	if sc.inNb != nil {
		sopt.InputNeighbors, sopt.InputK = sc.inNb.Index, sc.inNb.K
	}
	return sopt
}

// scoreSubset returns the scores of layout y of a run on the input rows
// rows: its faithfulness to the subsample's own input (those rows of the
// data, neighbours and ranks among them), computed alone.
func (sc *runScorer) scoreSubset(rows []int32, y []float64) (RunScore, error) {
	ds, k := sc.ds, sc.k
	xs := selectRows(ds.X, ds.D, rows)
	f, err := stability.FaithfulnessAt(xs, ds.D, y, k, stability.Options{Threads: sc.threads, Seed: scoreSeed})
	if err != nil {
		return RunScore{}, err
	}
	dc, err := distanceSpearman(xs, ds.D, y)
	if err != nil {
		return RunScore{}, err
	}
	rs := RunScore{Trustworthiness: f.Trustworthiness.Value, Continuity: f.Continuity.Value, KNNRecall: f.KNNRecall.Value,
		DistanceSpearman: dc, LabelAccuracy: math.NaN(), LabelPurity: math.NaN(), K: k, Sampled: f.Trustworthiness.Queries,
		Points: len(rows)}
	if ds.Labels != nil {
		labels := selectStrings(ds.Labels, rows)
		if rs.LabelAccuracy, err = stability.LabelAccuracyThreads(y, labels, k, sc.threads); err != nil {
			return RunScore{}, err
		}
		if rs.LabelPurity, err = stability.LabelAgreement(y, labels, k); err != nil {
			return RunScore{}, err
		}
	}
	return rs, nil
}

// batch returns the faithfulness of every layout, computed together. It
// returns nil if the batch fails (a layout the scores reject), so that
// each run is then scored alone and the first failing run reports its own
// error.
func (sc *runScorer) batch(layouts [][]float64) []stability.Faithfulness {
	if len(layouts) == 0 {
		return nil
	}
	fs, err := stability.FaithfulnessBatch(sc.ds.X, sc.ds.D, layouts, sc.k, sc.options())
	if err != nil {
		return nil
	}
	return fs
}

// score returns the scores of layout y, with f its faithfulness from a
// batch (nil: computed here), and the ranks of y's pair distances for the
// seed-to-seed correlations (nil if not made).
func (sc *runScorer) score(y []float64, f *stability.Faithfulness) (RunScore, *stability.DistanceRanks, error) {
	ds, k, threads := sc.ds, sc.k, sc.threads
	if f == nil {
		v, err := stability.FaithfulnessAt(ds.X, ds.D, y, k, sc.options())
		if err != nil {
			return RunScore{}, nil, err
		}
		f = &v
	}
	dc, yr, err := sc.distanceSpearman(y)
	if err != nil {
		return RunScore{}, nil, err
	}
	rs := RunScore{Trustworthiness: f.Trustworthiness.Value, Continuity: f.Continuity.Value, KNNRecall: f.KNNRecall.Value,
		DistanceSpearman: dc, LabelAccuracy: math.NaN(), LabelPurity: math.NaN(), K: k, Sampled: f.Trustworthiness.Queries,
		Points: ds.N}
	if ds.Labels != nil {
		if rs.LabelAccuracy, err = stability.LabelAccuracyThreads(y, ds.Labels, k, threads); err != nil {
			return RunScore{}, nil, err
		}
		if rs.LabelPurity, err = stability.LabelAgreement(y, ds.Labels, k); err != nil {
			return RunScore{}, nil, err
		}
	}
	return rs, yr, nil
}

// distanceSpearman is distanceSpearman(ds.X, ds.D, y) with the input's
// distance ranks made once for all runs (stability.DistanceRanks gives the
// same bits). It also returns y's own distance ranks for the seed-to-seed
// correlations, nil when y has no variance. Whenever the prepared path
// fails it falls back to the one-shot function, which gives the same value
// or error.
func (sc *runScorer) distanceSpearman(y []float64) (float64, *stability.DistanceRanks, error) {
	ds := sc.ds
	sc.prepare()
	var yr *stability.DistanceRanks
	if !NoVariance(y, len(y)/2, 2) {
		var err error
		if sc.in != nil {
			yr, err = sc.in.Of(y, 2)
		} else {
			yr, err = stability.NewDistanceRanks(y, 2, 0, scoreSeed)
		}
		if err != nil {
			yr = nil
		}
	}
	if yr != nil && sc.inFlat {
		return math.NaN(), yr, nil
	}
	if yr != nil && sc.in != nil {
		if r, err := sc.in.Spearman(yr); err == nil {
			return r.Value, yr, nil
		}
	}
	dc, err := distanceSpearman(ds.X, ds.D, y)
	if err != nil {
		return 0, nil, err
	}
	return dc, yr, nil
}

// prepare ranks the input's pair distances once, for every run; call it
// before runs are scored concurrently (score only reads what it made).
func (sc *runScorer) prepare() {
	if sc.inDone {
		return
	}
	sc.inDone = true
	sc.inFlat = NoVariance(sc.ds.X, sc.ds.N, sc.ds.D)
	if in, err := stability.NewDistanceRanks(sc.ds.X, sc.ds.D, 0, scoreSeed); err == nil {
		sc.in = in
	}
}

// pairSpearman is distanceSpearman(a, 2, b) for two layouts, from their
// distance ranks when both were made.
func pairSpearman(a, b []float64, ra, rb *stability.DistanceRanks) (float64, error) {
	if ra != nil && rb != nil {
		if r, err := ra.Spearman(rb); err == nil {
			return r.Value, nil
		}
	}
	return distanceSpearman(a, 2, b)
}

// distanceSpearman is stability.DistanceCorrelation of the n×da data a and
// the layout b (n×2), or NaN when it is undefined: a Spearman correlation
// needs both distance lists to vary, and if every point of a (or of b) is
// the same all its distances are zero. A NaN is stored as null in the
// score tables and left out of the medians, so one undefined score does
// not fail the scoring of the whole study.
func distanceSpearman(a []float64, da int, b []float64) (float64, error) {
	if NoVariance(a, len(a)/da, da) || NoVariance(b, len(b)/2, 2) {
		return math.NaN(), nil
	}
	dc, err := stability.DistanceCorrelation(a, da, b, 2, 0, scoreSeed)
	if err != nil {
		return 0, err
	}
	return dc.Value, nil
}
