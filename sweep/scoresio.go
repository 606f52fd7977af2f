package sweep

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"plumb/internal/parquetio"
	"plumb/stability"
	"plumb/tsne"
)

// Files of the scores/ directory.
const (
	ScoreRunsFile     = "runs.parquet"
	ScoreSettingsFile = "settings.parquet"
	ScorePointsFile   = "points.parquet"
	ScorePairsFile    = "pairs.parquet"
)

// spreadColumns are the per-setting statistics, in column order; each
// becomes NAME_median and NAME_iqr.
var spreadColumns = []string{"disparity", "jaccard", "pair_spearman", "trustworthiness", "continuity",
	"knn_recall", "distance_spearman", "label_accuracy", "label_purity", "kl"}

func (ss *SettingScore) medianIQRs() []*stability.MedianIQR {
	return []*stability.MedianIQR{&ss.Disparity, &ss.Jaccard, &ss.PairSpearman, &ss.Trustworthiness, &ss.Continuity,
		&ss.KNNRecall, &ss.DistanceSpearman, &ss.LabelAccuracy, &ss.LabelPurity, &ss.KL}
}

// nullable returns a nullable float column, NaN entries null.
func nullable(name string, v []float64) parquetio.Column {
	valid := make([]bool, len(v))
	for i, x := range v {
		valid[i] = !math.IsNaN(x)
	}
	return parquetio.Column{Name: name, Values: v, Nullable: true, Valid: allTrueNil(valid)}
}

func scoresPath(dir, name string) string { return filepath.Join(dir, ScoresDir, name) }

func scoreMeta(info *Info, table string, k int) map[string]string {
	m := baseMeta(info, table)
	m[MetaK] = strconv.Itoa(k)
	return m
}

func writeScoreTables(dir string, info *Info, k int, runs []RunScore, settings []SettingScore, points []PointScore, pairs []PairScore) error {
	if err := os.MkdirAll(filepath.Join(dir, ScoresDir), 0o755); err != nil {
		return err
	}
	// runs
	{
		n := len(runs)
		id, sid := make([]string, n), make([]string, n)
		tw, co, kr, ds, la, lp, kl := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		kk, sa, np := make([]int32, n), make([]int32, n), make([]int32, n)
		for i, r := range runs {
			id[i], sid[i], np[i] = r.RunID, r.SettingID, int32(r.Points)
			tw[i], co[i], kr[i], ds[i], la[i], lp[i], kl[i] = r.Trustworthiness, r.Continuity, r.KNNRecall, r.DistanceSpearman, r.LabelAccuracy, r.LabelPurity, r.KL
			kk[i], sa[i] = int32(r.K), int32(r.Sampled)
		}
		t := &parquetio.Table{Meta: scoreMeta(info, "scores.runs", k), Columns: []parquetio.Column{
			{Name: "run_id", Values: id}, {Name: "setting_id", Values: sid},
			{Name: "trustworthiness", Values: tw}, {Name: "continuity", Values: co}, {Name: "knn_recall", Values: kr},
			nullable("distance_spearman", ds), nullable("label_accuracy", la), nullable("label_purity", lp),
			{Name: "k", Values: kk}, {Name: "sampled", Values: sa}, {Name: "kl", Values: kl}, {Name: "points", Values: np}}}
		if err := parquetio.Write(scoresPath(dir, ScoreRunsFile), t); err != nil {
			return err
		}
	}
	// settings
	{
		n := len(settings)
		sid, lrs, init, grad := make([]string, n), make([]string, n), make([]string, n), make([]string, n)
		perp, lr, ex, th, share := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		sub, varied, reason, reasonValid := make([]float64, n), make([]string, n), make([]string, n), make([]bool, n)
		ei, it, done, failed := make([]int32, n), make([]int32, n), make([]int32, n), make([]int32, n)
		stats := make([][]float64, 2*len(spreadColumns))
		for j := range stats {
			stats[j] = make([]float64, n)
		}
		for i := range settings {
			s := &settings[i]
			sid[i], lrs[i], init[i], grad[i] = s.ID, s.LearningRateSpec(), s.Init, s.Gradient
			perp[i], lr[i], ex[i], th[i], share[i] = s.Perplexity, s.LearningRate, s.Exaggeration, s.Theta, s.UnstableShare
			sub[i], varied[i], reason[i], reasonValid[i] = s.Fraction(), s.Varied, s.NotMeasured, s.NotMeasured != ""
			if lr[i] == 0 { // auto: the number every run of the setting used, as in runs.parquet
				lr[i] = tsne.LearningRateAuto(info.Input.N, s.Exaggeration)
			}
			ei[i], it[i], done[i], failed[i] = int32(s.ExaggerationIters), int32(s.Iters), int32(s.RunsDone), int32(s.RunsFailed)
			for j, sp := range s.medianIQRs() {
				stats[2*j][i], stats[2*j+1][i] = sp.Median, sp.IQR
			}
		}
		cols := []parquetio.Column{{Name: "setting_id", Values: sid}, {Name: "perplexity", Values: perp},
			nullable("learning_rate", lr), {Name: "learning_rate_spec", Values: lrs}, {Name: "exaggeration", Values: ex},
			{Name: "exaggeration_iters", Values: ei}, {Name: "iters", Values: it}, {Name: "init", Values: init},
			{Name: "gradient", Values: grad}, {Name: "theta", Values: th},
			{Name: "runs_done", Values: done}, {Name: "runs_failed", Values: failed}}
		for j, name := range spreadColumns {
			cols = append(cols, nullable(name+"_median", stats[2*j]), nullable(name+"_iqr", stats[2*j+1]))
		}
		cols = append(cols, nullable("unstable_share", share), parquetio.Column{Name: "subsample", Values: sub},
			parquetio.Column{Name: "varied", Values: varied},
			parquetio.Column{Name: "not_measured", Values: reason, Nullable: true, Valid: allTrueNil(reasonValid)})
		if err := parquetio.Write(scoresPath(dir, ScoreSettingsFile), &parquetio.Table{Meta: scoreMeta(info, "scores.settings", k), Columns: cols}); err != nil {
			return err
		}
	}
	// points
	{
		n := len(points)
		sid, id := make([]string, n), make([]string, n)
		pt := make([]int32, n)
		sp, cx, cy := make([]float64, n), make([]float64, n), make([]float64, n)
		un := make([]bool, n)
		nr := make([]int32, n)
		for i, p := range points {
			sid[i], id[i], pt[i], sp[i], un[i], cx[i], cy[i] = p.SettingID, p.ID, int32(p.Point), p.Spread, p.Unstable, p.ConsensusX, p.ConsensusY
			nr[i] = int32(p.Runs)
		}
		// A point whose spread was not measured has no flag either.
		unCol := nullable("spread", sp)
		unCol.Name, unCol.Values = "unstable", un
		t := &parquetio.Table{Meta: scoreMeta(info, "scores.points", k), Columns: []parquetio.Column{
			{Name: "setting_id", Values: sid}, {Name: "point", Values: pt}, {Name: "id", Values: id},
			nullable("spread", sp), unCol,
			nullable("consensus_x", cx), nullable("consensus_y", cy), {Name: "runs", Values: nr}}}
		if err := parquetio.Write(scoresPath(dir, ScorePointsFile), t); err != nil {
			return err
		}
	}
	// pairs
	{
		n := len(pairs)
		sid, a, b := make([]string, n), make([]string, n), make([]string, n)
		di, ja, ds := make([]float64, n), make([]float64, n), make([]float64, n)
		np := make([]int32, n)
		for i, p := range pairs {
			sid[i], a[i], b[i], di[i], ja[i], ds[i] = p.SettingID, p.RunA, p.RunB, p.Disparity, p.Jaccard, p.DistanceSpearman
			np[i] = int32(p.Points)
		}
		t := &parquetio.Table{Meta: scoreMeta(info, "scores.pairs", k), Columns: []parquetio.Column{
			{Name: "setting_id", Values: sid}, {Name: "run_a", Values: a}, {Name: "run_b", Values: b},
			nullable("disparity", di), nullable("jaccard", ja), nullable("distance_spearman", ds), {Name: "points", Values: np}}}
		if err := parquetio.Write(scoresPath(dir, ScorePairsFile), t); err != nil {
			return err
		}
	}
	return nil
}

// scoreTables are the score tables, in the order Score writes them.
var scoreTables = []string{ScoreRunsFile, ScoreSettingsFile, ScorePointsFile, ScorePairsFile}

// checkScoreTables reads the metadata of the four score tables and returns
// the k they share. present is false when scores/settings.parquet does not
// exist (the study has not been scored). Otherwise problem, if not empty,
// says why the tables do not form one scoring of this study: a table is
// missing or unreadable, belongs to another plan or input, or the tables
// hold different k (Score writes them one after another, each atomically,
// so a kill between two renames leaves a mix of two scorings).
func checkScoreTables(dir string, info *Info) (k int, present bool, problem string) {
	if _, err := os.Stat(scoresPath(dir, ScoreSettingsFile)); err != nil {
		return 0, false, ""
	}
	var ks []string
	byK := map[string][]string{}
	for _, name := range scoreTables {
		m, _, err := parquetio.ReadMeta(scoresPath(dir, name))
		switch {
		case err != nil:
			return 0, true, fmt.Sprintf("%s/%s is missing or unreadable", ScoresDir, name)
		case m[MetaPlanHash] != info.PlanHash || m[MetaFingerprint] != info.Input.Fingerprint:
			return 0, true, fmt.Sprintf("%s/%s belongs to another plan or input", ScoresDir, name)
		}
		if _, ok := byK[m[MetaK]]; !ok {
			ks = append(ks, m[MetaK])
		}
		byK[m[MetaK]] = append(byK[m[MetaK]], name)
	}
	if len(ks) > 1 {
		parts := make([]string, len(ks))
		for i, v := range ks {
			parts[i] = fmt.Sprintf("k=%s in %s", v, strings.Join(byK[v], ", "))
		}
		return 0, true, "the score tables mix two scorings (" + strings.Join(parts, "; ") + "), as an interrupted score leaves them"
	}
	k, err := strconv.Atoi(ks[0])
	if err != nil || k < 1 {
		return 0, true, fmt.Sprintf("the score tables record no valid k (%q)", ks[0])
	}
	return k, true, ""
}

// ScoredK returns the k the study's score tables were computed with, or
// false when the study has not been scored, or its four tables do not form
// one scoring of its plan and input at a single k (see Study.ScoresProblem);
// such a study needs scoring again.
func ScoredK(dir string) (int, bool) {
	info, err := ReadInfo(dir)
	if err != nil {
		return 0, false
	}
	k, present, problem := checkScoreTables(dir, info)
	if !present || problem != "" {
		return 0, false
	}
	return k, true
}

// readScores loads the score tables if scores/settings.parquet exists and
// the four tables form one scoring (checkScoreTables); if they do not, it
// loads none and sets s.ScoresProblem.
func (s *Study) readScores() error {
	k, present, problem := checkScoreTables(s.Dir, s.Info)
	if !present {
		return nil
	}
	if problem != "" {
		s.ScoresProblem = problem
		return nil
	}
	s.ScoresK = k
	// runs
	c, err := readTable(scoresPath(s.Dir, ScoreRunsFile))
	if err != nil {
		return err
	}
	{
		id, sid := c.str("run_id"), c.str("setting_id")
		tw, co, kr, ds := c.f64("trustworthiness"), c.f64("continuity"), c.f64("knn_recall"), c.f64("distance_spearman")
		la, lp, kk, sa, kl := c.f64("label_accuracy"), c.f64("label_purity"), c.i32("k"), c.i32("sampled"), c.f64("kl")
		if c.err != nil {
			return c.err
		}
		np := c.optI32("points", int32(s.Info.Input.N))
		s.RunScores = make([]RunScore, len(id))
		for i := range id {
			s.RunScores[i] = RunScore{RunID: id[i], SettingID: sid[i], Trustworthiness: tw[i], Continuity: co[i],
				KNNRecall: kr[i], DistanceSpearman: ds[i], LabelAccuracy: la[i], LabelPurity: lp[i], K: int(kk[i]),
				Sampled: int(sa[i]), KL: kl[i], Points: int(np[i])}
		}
	}
	// settings
	if c, err = readTable(scoresPath(s.Dir, ScoreSettingsFile)); err != nil {
		return err
	}
	{
		sid := c.str("setting_id")
		done, failed, share := c.i32("runs_done"), c.i32("runs_failed"), c.f64("unstable_share")
		varied, reason := c.optStr("varied"), c.optStr("not_measured")
		stats := make([][]float64, 2*len(spreadColumns))
		for j, name := range spreadColumns {
			stats[2*j], stats[2*j+1] = c.f64(name+"_median"), c.f64(name+"_iqr")
		}
		if c.err != nil {
			return c.err
		}
		s.SettingScores = make([]SettingScore, len(sid))
		for i := range sid {
			ss := &s.SettingScores[i]
			if st := s.Setting(sid[i]); st != nil {
				ss.Setting = *st
			} else {
				ss.Setting.ID = sid[i]
			}
			ss.RunsDone, ss.RunsFailed, ss.UnstableShare = int(done[i]), int(failed[i]), share[i]
			if varied != nil {
				ss.Varied, ss.NotMeasured = varied[i], reason[i]
			} else {
				// Scored before this column existed: say what the plan lets vary.
				if ss.Varied = Varied(&ss.Setting, s.Plan); ss.Varied == "" {
					ss.NotMeasured = NotVariedReason
				}
			}
			for j, sp := range ss.medianIQRs() {
				sp.Median, sp.IQR = stats[2*j][i], stats[2*j+1][i]
			}
		}
	}
	// points
	if c, err = readTable(scoresPath(s.Dir, ScorePointsFile)); err != nil {
		return err
	}
	{
		sid, pt, id := c.str("setting_id"), c.i32("point"), c.str("id")
		sp, un, cx, cy := c.f64("spread"), c.boolean("unstable"), c.f64("consensus_x"), c.f64("consensus_y")
		nr := c.optI32("runs", 0)
		if c.err != nil {
			return c.err
		}
		s.Points = make([]PointScore, len(sid))
		for i := range sid {
			s.Points[i] = PointScore{SettingID: sid[i], Point: int(pt[i]), ID: id[i], Spread: sp[i], Unstable: un[i], ConsensusX: cx[i], ConsensusY: cy[i], Runs: int(nr[i])}
		}
	}
	// pairs
	if c, err = readTable(scoresPath(s.Dir, ScorePairsFile)); err != nil {
		return err
	}
	{
		sid, a, b := c.str("setting_id"), c.str("run_a"), c.str("run_b")
		di, ja, ds := c.f64("disparity"), c.f64("jaccard"), c.f64("distance_spearman")
		np := c.optI32("points", int32(s.Info.Input.N))
		if c.err != nil {
			return c.err
		}
		s.Pairs = make([]PairScore, len(sid))
		for i := range sid {
			s.Pairs[i] = PairScore{SettingID: sid[i], RunA: a[i], RunB: b[i], Disparity: di[i], Jaccard: ja[i], DistanceSpearman: ds[i], Points: int(np[i])}
		}
	}
	return nil
}
