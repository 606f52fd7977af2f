package sweep

import (
	"context"
	"fmt"
	"math"

	"plumb/internal/dataset"
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
	// SpreadThreshold flags a point as unstable when its spread exceeds
	// it. If it is 0, stability.DefaultSpreadThreshold is used.
	SpreadThreshold float64
}

// ScoreSummary counts the rows written by Score.
type ScoreSummary struct {
	Runs, Settings, Points, Pairs int
	K                             int
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
func Score(ctx context.Context, dir string, ds *dataset.Dataset, opt ScoreOptions) (*ScoreSummary, error) {
	info, err := ReadInfo(dir)
	if err != nil {
		return nil, fmt.Errorf("score: %w", err)
	}
	if ds.Fingerprint != info.Input.Fingerprint {
		return nil, &MismatchError{Dir: dir, What: "input", Have: "fingerprint " + short(info.Input.Fingerprint), Want: "fingerprint " + short(ds.Fingerprint)}
	}
	k := opt.K
	if k == 0 {
		k = DefaultK
	}
	if k < 1 || 2*k >= ds.N {
		return nil, fmt.Errorf("score: k = %d must be at least 1 and below n/2 = %d", k, ds.N/2)
	}
	runs, err := info.Plan.Runs()
	if err != nil {
		return nil, fmt.Errorf("score: %w", err)
	}
	// Another process may be scoring this study at the same moment (two
	// shards finishing together): remove only stale temporary files.
	cleanStudyTemps(dir, staleAge)
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
	bySetting := map[string][]*Run{}
	for _, r := range runs {
		bySetting[r.Setting.ID] = append(bySetting[r.Setting.ID], r)
	}
	var (
		runScores []RunScore
		settings  []SettingScore
		points    []PointScore
		pairs     []PairScore
	)
	for _, s := range info.Plan.Settings() {
		ss := SettingScore{Setting: *s, UnstableShare: math.NaN()}
		var layouts [][]float64
		var done []*Run
		var scores []RunScore
		for _, r := range bySetting[s.ID] {
			if err := ctx.Err(); err != nil {
				return nil, fmt.Errorf("score: %w", err)
			}
			rec, err := readRecord(dir, info, r)
			if err != nil {
				continue
			}
			if rec.Status != StatusDone {
				ss.RunsFailed++
				continue
			}
			y, err := readLayout(dir, info, r)
			if err != nil {
				return nil, fmt.Errorf("score: run %s: %w", r.ID, err)
			}
			rs, err := scoreRun(ds, y, k, threads, inNb)
			if err != nil {
				return nil, fmt.Errorf("score: run %s: %w", r.ID, err)
			}
			rs.RunID, rs.SettingID, rs.KL = r.ID, s.ID, *rec.KL
			scores = append(scores, rs)
			layouts = append(layouts, y)
			done = append(done, r)
		}
		ss.RunsDone = len(done)
		runScores = append(runScores, scores...)
		col := func(f func(RunScore) float64) Spread {
			v := make([]float64, 0, len(scores))
			for _, r := range scores {
				if x := f(r); !math.IsNaN(x) {
					v = append(v, x)
				}
			}
			return spreadOf(v)
		}
		ss.Trustworthiness = col(func(r RunScore) float64 { return r.Trustworthiness })
		ss.Continuity = col(func(r RunScore) float64 { return r.Continuity })
		ss.KNNRecall = col(func(r RunScore) float64 { return r.KNNRecall })
		ss.DistSpearman = col(func(r RunScore) float64 { return r.DistSpearman })
		ss.LabelAccuracy = col(func(r RunScore) float64 { return r.LabelAccuracy })
		ss.LabelPurity = col(func(r RunScore) float64 { return r.LabelPurity })
		ss.KL = col(func(r RunScore) float64 { return r.KL })
		ss.Disparity, ss.Jaccard, ss.PairSpearman = nan2(), nan2(), nan2()
		// A layout whose points all coincide (a collapsed run) cannot be
		// aligned (Procrustes needs a non-zero layout) and has no distance
		// ranks: it keeps its own run scores, but the seed-to-seed
		// agreement and the point spreads use the other layouts only.
		{
			var keptL [][]float64
			var keptR []*Run
			for i, y := range layouts {
				if !NoVariance(y, len(y)/2, 2) {
					keptL, keptR = append(keptL, y), append(keptR, done[i])
				}
			}
			layouts, done = keptL, keptR
		}
		if len(layouts) >= 2 {
			ag, err := stability.SettingAgreement(layouts, k, threads)
			if err != nil {
				return nil, fmt.Errorf("score: setting %s: %w", s.ID, err)
			}
			var sp []float64
			for _, pa := range ag.Pairs {
				dc, err := distanceSpearman(layouts[pa.A], 2, layouts[pa.B])
				if err != nil {
					return nil, fmt.Errorf("score: setting %s: runs %s and %s: %w", s.ID, done[pa.A].ID, done[pa.B].ID, err)
				}
				pairs = append(pairs, PairScore{SettingID: s.ID, RunA: done[pa.A].ID, RunB: done[pa.B].ID,
					Disparity: pa.Disparity, Jaccard: pa.Jaccard, DistSpearman: dc})
				if !math.IsNaN(dc) {
					sp = append(sp, dc)
				}
			}
			ss.Disparity = Spread{Median: ag.Disparity.Median, IQR: ag.Disparity.IQR}
			ss.Jaccard = Spread{Median: ag.Jaccard.Median, IQR: ag.Jaccard.IQR}
			ss.PairSpearman = spreadOf(sp)
			ps, g, err := stability.SpreadOf(layouts, opt.SpreadThreshold)
			if err != nil {
				return nil, fmt.Errorf("score: setting %s: %w", s.ID, err)
			}
			for i := 0; i < ds.N; i++ {
				points = append(points, PointScore{SettingID: s.ID, Point: i, ID: ds.IDs[i], Spread: ps.Spread[i],
					Unstable: ps.Flagged[i], ConsensusX: g.Consensus[2*i], ConsensusY: g.Consensus[2*i+1]})
			}
			ss.UnstableShare = float64(ps.NumFlagged) / float64(ds.N)
		}
		settings = append(settings, ss)
	}
	if err := writeScoreTables(dir, info, k, runScores, settings, points, pairs); err != nil {
		return nil, fmt.Errorf("score: %w", err)
	}
	return &ScoreSummary{Runs: len(runScores), Settings: len(settings), Points: len(points), Pairs: len(pairs), K: k}, nil
}

func nan2() Spread { return Spread{Median: math.NaN(), IQR: math.NaN()} }

// spreadOf returns the median and IQR of v (Hyndman & Fan definition 7,
// stability.Quantile), NaN for no values.
func spreadOf(v []float64) Spread {
	if len(v) == 0 {
		return nan2()
	}
	s, err := stability.Summarize(v)
	if err != nil {
		return nan2()
	}
	return Spread{Median: s.Median, IQR: s.IQR}
}

func scoreRun(ds *dataset.Dataset, y []float64, k, threads int, inNb *tsne.Neighbors) (RunScore, error) {
	sopt := stability.Options{Threads: threads, Seed: scoreSeed}
	if inNb != nil {
		sopt.InputNeighbors, sopt.InputK = inNb.Index, inNb.K
	}
	f, err := stability.FaithfulnessAt(ds.X, ds.D, y, k, sopt)
	if err != nil {
		return RunScore{}, err
	}
	dc, err := distanceSpearman(ds.X, ds.D, y)
	if err != nil {
		return RunScore{}, err
	}
	rs := RunScore{Trustworthiness: f.Trustworthiness.Value, Continuity: f.Continuity.Value, KNNRecall: f.KNNRecall.Value,
		DistSpearman: dc, LabelAccuracy: math.NaN(), LabelPurity: math.NaN(), K: k, Sampled: f.Trustworthiness.Queries}
	if ds.Labels != nil {
		if rs.LabelAccuracy, err = stability.LabelAccuracyThreads(y, ds.Labels, k, threads); err != nil {
			return RunScore{}, err
		}
		if rs.LabelPurity, err = stability.LabelAgreement(y, ds.Labels, k); err != nil {
			return RunScore{}, err
		}
	}
	return rs, nil
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
