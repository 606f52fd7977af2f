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
	ScoreClustersFile = "clusters.parquet"
	ScoreLabelsFile   = "labels.parquet"
)

// spreadColumns are the per-setting statistics, in column order; each
// becomes NAME_median and NAME_iqr.
var spreadColumns = []string{"disparity", "jaccard", "pair_spearman", "trustworthiness", "continuity",
	"knn_recall", "distance_spearman", "label_accuracy", "label_purity", "kl", "rnx_auc", "coassignment"}

func (ss *SettingScore) medianIQRs() []*stability.MedianIQR {
	return []*stability.MedianIQR{&ss.Disparity, &ss.Jaccard, &ss.PairSpearman, &ss.Trustworthiness, &ss.Continuity,
		&ss.KNNRecall, &ss.DistanceSpearman, &ss.LabelAccuracy, &ss.LabelPurity, &ss.KL, &ss.RNXAUC, &ss.CoAssignment}
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
	if info.covers != "" {
		m[MetaCovers] = info.covers
	}
	return m
}

// nullableStrings returns a nullable string column, "" entries null.
func nullableStrings(name string, v []string) parquetio.Column {
	valid := make([]bool, len(v))
	for i, x := range v {
		valid[i] = x != ""
	}
	return parquetio.Column{Name: name, Values: v, Nullable: true, Valid: allTrueNil(valid)}
}

// nullableAt returns column c made nullable, null where valid is false.
func nullableAt(c parquetio.Column, valid []bool) parquetio.Column {
	c.Nullable, c.Valid = true, allTrueNil(append([]bool(nil), valid...))
	return c
}

func writeScoreTables(dir string, info *Info, k int, runs []RunScore, settings []SettingScore, points []PointScore, pairs []PairScore,
	clusters []ClusterScore, labels []LabelScore) error {
	if err := os.MkdirAll(filepath.Join(dir, ScoresDir), 0o755); err != nil {
		return err
	}
	// runs
	{
		n := len(runs)
		id, sid := make([]string, n), make([]string, n)
		tw, co, kr, ds, la, lp, kl := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		kk, sa, np := make([]int32, n), make([]int32, n), make([]int32, n)
		auc, aq := make([]float64, n), make([]int32, n)
		for i, r := range runs {
			auc[i], aq[i] = r.RNXAUC, int32(r.RNXQueries)
			id[i], sid[i], np[i] = r.RunID, r.SettingID, int32(r.Points)
			tw[i], co[i], kr[i], ds[i], la[i], lp[i], kl[i] = r.Trustworthiness, r.Continuity, r.KNNRecall, r.DistanceSpearman, r.LabelAccuracy, r.LabelPurity, r.KL
			kk[i], sa[i] = int32(r.K), int32(r.Sampled)
		}
		t := &parquetio.Table{Meta: scoreMeta(info, "scores.runs", k), Columns: []parquetio.Column{
			{Name: "run_id", Values: id}, {Name: "setting_id", Values: sid},
			{Name: "trustworthiness", Values: tw}, {Name: "continuity", Values: co}, {Name: "knn_recall", Values: kr},
			nullable("distance_spearman", ds), nullable("label_accuracy", la), nullable("label_purity", lp),
			{Name: "k", Values: kk}, {Name: "sampled", Values: sa}, {Name: "kl", Values: kl}, {Name: "points", Values: np},
			nullable("rnx_auc", auc), {Name: "rnx_queries", Values: aq}}}
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
		medoid, sizes, note := make([]string, n), make([]string, n), make([]string, n)
		ncl, narr := make([]int32, n), make([]int32, n)
		bimodal, shown := make([]bool, n), make([]bool, n)
		hasCl, hasArr := make([]bool, n), make([]bool, n)
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
			medoid[i], sizes[i], note[i], bimodal[i], shown[i] = s.MedoidRun, s.ArrangementSizes, s.ConsensusNote, s.Bimodal, s.ConsensusShown
			ncl[i], narr[i], hasCl[i], hasArr[i] = int32(max(s.Clusters, 0)), int32(s.Arrangements), s.Clusters >= 0, s.Arrangements > 0
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
			parquetio.Column{Name: "not_measured", Values: reason, Nullable: true, Valid: allTrueNil(reasonValid)},
			nullableStrings("medoid_run", medoid), nullableAt(parquetio.Column{Name: "clusters", Values: ncl}, hasCl),
			nullableAt(parquetio.Column{Name: "arrangements", Values: narr}, hasArr), nullableStrings("arrangement_sizes", sizes),
			nullableAt(parquetio.Column{Name: "bimodal", Values: bimodal}, hasArr),
			parquetio.Column{Name: "consensus_shown", Values: shown}, nullableStrings("consensus_note", note))
		if err := parquetio.Write(scoresPath(dir, ScoreSettingsFile), &parquetio.Table{Meta: scoreMeta(info, "scores.settings", k), Columns: cols}); err != nil {
			return err
		}
	}
	// points
	{
		n := len(points)
		sid, id := make([]string, n), make([]string, n)
		pt := make([]int32, n)
		sp, cx, cy, co := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
		un, sf, has := make([]bool, n), make([]bool, n), make([]bool, n)
		cl, nr := make([]int32, n), make([]int32, n)
		for i, p := range points {
			sid[i], id[i], pt[i], sp[i], un[i], cx[i], cy[i] = p.SettingID, p.ID, int32(p.Point), p.Spread, p.Unstable, p.ConsensusX, p.ConsensusY
			co[i], sf[i], cl[i], has[i], nr[i] = p.CoAssignment, p.SpreadFlagged, int32(p.Cluster), !math.IsNaN(p.CoAssignment), int32(p.Runs)
		}
		// A point whose spread was not measured has no spread flag either.
		sfCol := nullable("spread", sp)
		sfCol.Name, sfCol.Values = "spread_flagged", sf
		t := &parquetio.Table{Meta: scoreMeta(info, "scores.points", k), Columns: []parquetio.Column{
			{Name: "setting_id", Values: sid}, {Name: "point", Values: pt}, {Name: "id", Values: id},
			nullable("coassignment", co), nullableAt(parquetio.Column{Name: "unstable", Values: un}, has),
			nullable("spread", sp), sfCol, {Name: "cluster", Values: cl},
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
	// clusters
	{
		n := len(clusters)
		sid, med, rd, lab := make([]string, n), make([]string, n), make([]string, n), make([]string, n)
		cl, sz, ru, dis := make([]int32, n), make([]int32, n), make([]int32, n), make([]int32, n)
		ja, mn := make([]float64, n), make([]float64, n)
		has := make([]bool, n)
		for i, c := range clusters {
			sid[i], med[i], rd[i], lab[i] = c.SettingID, c.MedoidRun, c.Reading, c.Labels
			cl[i], sz[i], ru[i], dis[i] = int32(c.Cluster), int32(c.Size), int32(c.Runs), int32(c.Dissolved)
			ja[i], mn[i], has[i] = c.Jaccard, c.Min, !math.IsNaN(c.Jaccard)
		}
		t := &parquetio.Table{Meta: scoreMeta(info, "scores.clusters", k), Columns: []parquetio.Column{
			{Name: "setting_id", Values: sid}, {Name: "medoid_run", Values: med}, {Name: "cluster", Values: cl},
			{Name: "size", Values: sz}, nullable("jaccard_mean", ja), nullable("jaccard_min", mn),
			nullableAt(parquetio.Column{Name: "runs_compared", Values: ru}, has),
			nullableAt(parquetio.Column{Name: "runs_dissolved", Values: dis}, has),
			{Name: "reading", Values: rd}, nullableStrings("labels", lab)}}
		if err := parquetio.Write(scoresPath(dir, ScoreClustersFile), t); err != nil {
			return err
		}
	}
	// labels
	{
		n := len(labels)
		sid, lab, mix, with := make([]string, n), make([]string, n), make([]string, n), make([]string, n)
		pts := make([]int32, n)
		st, ms, wsh := make([]float64, n), make([]float64, n), make([]float64, n)
		for i, l := range labels {
			sid[i], lab[i], mix[i], with[i] = l.SettingID, l.Label, l.Mixes, l.MixesWith
			pts[i], st[i], ms[i], wsh[i] = int32(l.Points), l.Stable, l.MeanScore, l.MixesShare
		}
		t := &parquetio.Table{Meta: scoreMeta(info, "scores.labels", k), Columns: []parquetio.Column{
			{Name: "setting_id", Values: sid}, {Name: "label", Values: lab}, {Name: "points", Values: pts},
			nullable("stable_share", st), nullable("coassignment_mean", ms), nullableStrings("mixes", mix),
			nullableStrings("mixes_with", with), nullable("mixes_with_share", wsh)}}
		if err := parquetio.Write(scoresPath(dir, ScoreLabelsFile), t); err != nil {
			return err
		}
	}
	return nil
}

// scoreTables are the score tables, in the order Score writes them.
var scoreTables = []string{ScoreRunsFile, ScoreSettingsFile, ScorePointsFile, ScorePairsFile, ScoreClustersFile, ScoreLabelsFile}

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
	var ks, covers []string
	byK := map[string][]string{}
	for _, name := range scoreTables {
		m, _, err := parquetio.ReadMeta(scoresPath(dir, name))
		switch {
		case err != nil:
			return 0, true, fmt.Sprintf("%s/%s is missing or unreadable", ScoresDir, name)
		case m[MetaPlanHash] != info.PlanHash || m[MetaFingerprint] != info.Input.Fingerprint:
			return 0, true, fmt.Sprintf("%s/%s belongs to another plan or input", ScoresDir, name)
		}
		covers = append(covers, m[MetaCovers])
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
	if p := coversProblem(dir, info, covers); p != "" {
		return k, true, p
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
		auc, aq := c.f64("rnx_auc"), c.i32("rnx_queries")
		if c.err != nil {
			return c.err
		}
		np := c.optI32("points", int32(s.Info.Input.N))
		s.RunScores = make([]RunScore, len(id))
		for i := range id {
			s.RunScores[i] = RunScore{RunID: id[i], SettingID: sid[i], Trustworthiness: tw[i], Continuity: co[i],
				KNNRecall: kr[i], DistanceSpearman: ds[i], LabelAccuracy: la[i], LabelPurity: lp[i], K: int(kk[i]),
				Sampled: int(sa[i]), KL: kl[i], Points: int(np[i]), RNXAUC: auc[i], RNXQueries: int(aq[i])}
		}
	}
	// settings
	if c, err = readTable(scoresPath(s.Dir, ScoreSettingsFile)); err != nil {
		return err
	}
	{
		sid := c.str("setting_id")
		done, failed, share := c.i32("runs_done"), c.i32("runs_failed"), c.f64("unstable_share")
		medoid, sizes, note := c.str("medoid_run"), c.str("arrangement_sizes"), c.str("consensus_note")
		ncl, narr, bimodal, shown := c.i32("clusters"), c.i32("arrangements"), c.boolean("bimodal"), c.boolean("consensus_shown")
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
			ss.MedoidRun, ss.ArrangementSizes, ss.ConsensusNote = c.nullStr("medoid_run", i, medoid), c.nullStr("arrangement_sizes", i, sizes), c.nullStr("consensus_note", i, note)
			ss.Clusters, ss.Arrangements, ss.Bimodal, ss.ConsensusShown = int(ncl[i]), int(narr[i]), bimodal[i], shown[i]
			if c.t.Column("clusters").IsNull(i) {
				ss.Clusters = -1
			}
			if c.t.Column("arrangements").IsNull(i) {
				ss.Arrangements, ss.Bimodal = 0, false
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
		co, sf, cl := c.f64("coassignment"), c.boolean("spread_flagged"), c.i32("cluster")
		nr := c.optI32("runs", 0)
		if c.err != nil {
			return c.err
		}
		unCol := c.t.Column("unstable")
		s.Points = make([]PointScore, len(sid))
		for i := range sid {
			s.Points[i] = PointScore{SettingID: sid[i], Point: int(pt[i]), ID: id[i], Spread: sp[i], Unstable: un[i] && !unCol.IsNull(i),
				ConsensusX: cx[i], ConsensusY: cy[i], CoAssignment: co[i], SpreadFlagged: sf[i], Cluster: int(cl[i]), Runs: int(nr[i])}
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
	// clusters
	if c, err = readTable(scoresPath(s.Dir, ScoreClustersFile)); err != nil {
		return err
	}
	{
		sid, med, rd, lab := c.str("setting_id"), c.str("medoid_run"), c.str("reading"), c.str("labels")
		cl, sz, ru, dis := c.i32("cluster"), c.i32("size"), c.i32("runs_compared"), c.i32("runs_dissolved")
		ja, mn := c.f64("jaccard_mean"), c.f64("jaccard_min")
		if c.err != nil {
			return c.err
		}
		s.Clusters = make([]ClusterScore, len(sid))
		for i := range sid {
			s.Clusters[i] = ClusterScore{SettingID: sid[i], MedoidRun: med[i], Cluster: int(cl[i]), Size: int(sz[i]),
				Jaccard: ja[i], Min: mn[i], Runs: int(ru[i]), Dissolved: int(dis[i]), Reading: rd[i], Labels: c.nullStr("labels", i, lab)}
		}
	}
	// labels
	if c, err = readTable(scoresPath(s.Dir, ScoreLabelsFile)); err != nil {
		return err
	}
	{
		sid, lab, mix, with := c.str("setting_id"), c.str("label"), c.str("mixes"), c.str("mixes_with")
		pts, st, ms, wsh := c.i32("points"), c.f64("stable_share"), c.f64("coassignment_mean"), c.f64("mixes_with_share")
		if c.err != nil {
			return c.err
		}
		s.Labels = make([]LabelScore, len(sid))
		for i := range sid {
			s.Labels[i] = LabelScore{SettingID: sid[i], Label: lab[i], Points: int(pts[i]), Stable: st[i], MeanScore: ms[i],
				Mixes: c.nullStr("mixes", i, mix), MixesWith: c.nullStr("mixes_with", i, with), MixesShare: wsh[i]}
		}
	}
	return nil
}
