package sweep

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"plumb/stability"
)

// This file holds the readings Score adds beside agreement and
// faithfulness: the R_NX AUC of every run, and per setting the distinct
// arrangements of its runs, its medoid run, whether an averaged consensus
// may stand beside it, the clusters of its maps with their stability
// (Hennig 2007), each point's co-assignment score and each label's
// stability. Between-run readings are "not measured" (NaN, stored as
// null) when nothing varied between the runs.

// DefaultRNXQueries is the number of query points the R_NX curve of a run
// averages over when ScoreOptions.RNXQueries is 0 (a fixed sample, the
// same for every run; every K keeps its meaning and the estimate is
// unbiased, see stability.RNXOptions). Exact R_NX with every point a query
// costs O(N² log N) per layout; at 500 queries a 5,000-point study's
// R_NX stays a small part of its scoring (measured in
// internal/scripts/bench/README.md). Up to stability.DefaultExactLimit
// points are ranked.
const DefaultRNXQueries = 500

// ClusterScore is one row of scores/clusters.parquet: one map cluster of a
// setting's medoid run with its stability across the setting's other runs.
type ClusterScore struct {
	SettingID, MedoidRun string
	// Cluster is the cluster's number in the medoid run (0 the largest),
	// Size its number of points there.
	Cluster, Size int
	// Jaccard is the mean over the other runs of the best-match Jaccard
	// similarity, Min the smallest; NaN when not measured.
	Jaccard, Min float64
	// Runs is the number of runs compared, Dissolved those whose best
	// match was ≤ 0.5 (both 0 when not measured).
	Runs, Dissolved int
	// Reading puts Jaccard in Hennig's words (stability.ReadingOf), "not
	// measured" when nothing varied or there is one run.
	Reading string
	// Labels is the label composition in the medoid run, "label:count"
	// by decreasing count, comma separated; "" without labels.
	Labels string
}

// LabelScore is one row of scores/labels.parquet: how stable the points of
// one label are in one setting, and which labels they share groups with.
type LabelScore struct {
	SettingID, Label string
	// Points counts the label's points.
	Points int
	// Stable is the share of the label's points not flagged by
	// co-assignment, MeanScore their mean co-assignment score; NaN when
	// not measured.
	Stable, MeanScore float64
	// Mixes lists the mean share of each label among the group-mates of
	// the label's points over every run, "label:share" by decreasing
	// share; "" when not measured. MixesWith is the other label with the
	// largest share and MixesShare that share (""/NaN when none).
	Mixes      string
	MixesWith  string
	MixesShare float64
}

// rnxAUC returns the R_NX AUC and the number of query points of every
// layout, rows[i] its input rows (nil: every row). The layouts on every
// row share one stability.RNXBatch, so the input's ranks are made once for
// the batch; a layout of a subsample is ranked against its own rows'
// input. If the batch fails (a layout the curve rejects) each layout is
// tried alone; one that fails has NaN.
func (sc *runScorer) rnxAUC(layouts [][]float64, rows [][]int32, queries int) (auc []float64, used []int) {
	auc, used = make([]float64, len(layouts)), make([]int, len(layouts))
	if queries == 0 {
		queries = DefaultRNXQueries
	}
	opt := stability.RNXOptions{Threads: sc.threads, Queries: queries, Seed: scoreSeed}
	var full [][]float64
	for i, y := range layouts {
		if rows[i] == nil {
			full = append(full, y)
		}
	}
	var curves []*stability.RNXCurve
	var err error
	if len(full) > 0 {
		curves, err = stability.RNXBatch(sc.ds.X, sc.ds.D, full, opt)
	}
	at := 0
	for i, y := range layouts {
		var c *stability.RNXCurve
		switch {
		case rows[i] != nil:
			c, _ = stability.RNX(selectRows(sc.ds.X, sc.ds.D, rows[i]), sc.ds.D, y, opt)
		case err == nil:
			c = curves[at]
			at++
		default:
			c, _ = stability.RNX(sc.ds.X, sc.ds.D, y, opt)
			at++
		}
		if c == nil || NoVariance(y, len(y)/2, 2) {
			auc[i] = math.NaN()
			continue
		}
		auc[i], used[i] = c.AUC, c.Queries
	}
	return auc, used
}

// disparityMatrix builds the disparity matrix of runs from the setting's
// pair scores (NaN for a pair without a score), nil with fewer than two
// runs.
func disparityMatrix(pairs []PairScore, runs []*Run) [][]float64 {
	if len(runs) < 2 {
		return nil
	}
	at := map[string]int{}
	for i, r := range runs {
		at[r.ID] = i
	}
	m := make([][]float64, len(runs))
	for a := range m {
		m[a] = make([]float64, len(runs))
		for b := range m[a] {
			if a != b {
				m[a][b] = math.NaN()
			}
		}
	}
	for _, p := range pairs {
		a, okA := at[p.RunA]
		b, okB := at[p.RunB]
		if okA && okB && a != b {
			m[a][b], m[b][a] = p.Disparity, p.Disparity
		}
	}
	return m
}

// complete reports whether every entry of the matrix is a number.
func complete(m [][]float64) bool {
	for _, row := range m {
		for _, v := range row {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return false
			}
		}
	}
	return len(m) > 0
}

// settingReadings are the readings of one setting's finished runs.
type settingReadings struct {
	varied       string
	medoid       string // run id; "" without runs
	clusters     int    // in the medoid run; −1 when not clustered
	arrangements int    // 0: not measured
	sizes        string // e.g. "3+2"
	bimodal      bool
	consensusOK  bool
	consensusWhy string
	// Per input row: co-assignment score (NaN: not measured), its flag,
	// and the cluster holding the row in the medoid run (−1 noise or not
	// clustered).
	score   []float64
	flagged []bool
	cluster []int32
	share   float64 // share of measured rows flagged; NaN when not measured
	cs      []ClusterScore
	ls      []LabelScore
}

// readSetting computes the readings of setting s from its kept runs (in
// plan order), their layouts and input rows (rows[i] nil: every row, in
// input order), what varied between them (SettingScore.Varied; "" makes
// every between-run reading "not measured") and dm, their pairwise
// Procrustes disparities (disparityMatrix; nil with fewer than two runs).
// n is the number of input rows, labels the input's labels (nil without).
func readSetting(s *Setting, varied string, runs []*Run, layouts [][]float64, rows [][]int32, dm [][]float64,
	n int, labels []string, threads int) (*settingReadings, error) {
	rd := &settingReadings{varied: varied, clusters: -1, share: math.NaN(), consensusWhy: "fewer than two runs"}
	rd.score, rd.flagged, rd.cluster = make([]float64, n), make([]bool, n), make([]int32, n)
	for i := range rd.score {
		rd.score[i], rd.cluster[i] = math.NaN(), -1
	}
	if len(runs) == 0 {
		return rd, nil
	}
	measured := rd.varied != "" && len(runs) >= 2
	medoid := 0
	if len(runs) >= 2 && !complete(dm) {
		rd.consensusWhy = "the disparity of some pair of runs is missing"
	}
	if len(runs) >= 2 && complete(dm) {
		var err error
		if medoid, err = stability.Medoid(dm); err != nil {
			return nil, err
		}
		if rd.consensusOK, rd.consensusWhy, err = stability.ConsensusAgrees(dm, rd.varied != "", 0); err != nil {
			return nil, err
		}
		if measured {
			ar, err := stability.Arrange(dm, 0)
			if err != nil {
				return nil, err
			}
			rd.arrangements, rd.bimodal = len(ar.Groups), ar.Bimodal
			parts := make([]string, len(ar.Sizes))
			for i, z := range ar.Sizes {
				parts[i] = strconv.Itoa(z)
			}
			rd.sizes = strings.Join(parts, "+")
		}
	}
	rd.medoid = runs[medoid].ID
	if rows == nil {
		rows = make([][]int32, len(runs))
	}

	// Map clusters of every run (only the medoid's when nothing is
	// compared). A map too small to cluster leaves the cluster readings
	// out.
	lab := make([]stability.RunClusters, len(runs))
	grp := make([]stability.RunClusters, len(runs))
	for i, y := range layouts {
		if !measured && i != medoid {
			continue
		}
		mc, err := stability.MapClusters(y, stability.MapClusterConfig{Threads: threads})
		if err != nil {
			return rd, nil
		}
		lab[i] = stability.RunClusters{Rows: rows[i], Labels: mc.Labels}
		grp[i] = stability.RunClusters{Rows: rows[i], Labels: mc.Groups}
		if i == medoid {
			rd.clusters = mc.K
			for m, l := range mc.Labels {
				row := m
				if rows[i] != nil {
					row = int(rows[i][m])
				}
				rd.cluster[row] = l
			}
		}
	}
	var cr []stability.ClusterReading
	if measured {
		var err error
		if cr, err = stability.ClusterStability(lab, n, medoid, labels); err != nil {
			return nil, err
		}
		ps, err := stability.CoAssignment(grp, n, 0)
		if err != nil {
			return nil, err
		}
		copy(rd.score, ps.Score)
		copy(rd.flagged, ps.Flagged)
		if ps.Measured > 0 {
			rd.share = float64(ps.NumFlagged) / float64(ps.Measured)
		}
		if labels != nil {
			lr, err := stability.LabelStability(grp, n, labels, ps)
			if err != nil {
				return nil, err
			}
			for _, l := range lr {
				row := LabelScore{SettingID: s.ID, Label: l.Label, Points: l.Points, Stable: l.Stable, MeanScore: l.MeanScore,
					MixesShare: math.NaN()}
				var parts []string
				for _, m := range l.Mixes {
					parts = append(parts, fmt.Sprintf("%s:%.3f", m.Label, m.Share))
					if m.Label != l.Label && row.MixesWith == "" {
						row.MixesWith, row.MixesShare = m.Label, m.Share
					}
				}
				row.Mixes = strings.Join(parts, ", ")
				rd.ls = append(rd.ls, row)
			}
		}
	} else {
		// The medoid's clusters alone: sizes and composition, no stability.
		var err error
		if cr, err = stability.ClusterStability(lab[medoid:medoid+1], n, 0, labels); err != nil {
			return nil, err
		}
		if labels != nil {
			rd.ls = unmeasuredLabels(s.ID, labels, rows[medoid], n)
		}
	}
	for _, c := range cr {
		row := ClusterScore{SettingID: s.ID, MedoidRun: rd.medoid, Cluster: int(c.Cluster), Size: c.Size,
			Jaccard: c.Jaccard, Min: c.Min, Runs: c.Runs, Dissolved: c.Dissolved, Reading: string(stability.ReadingOf(c.Jaccard))}
		if !measured {
			row.Jaccard, row.Min, row.Runs, row.Dissolved, row.Reading = math.NaN(), math.NaN(), 0, 0, string(stability.NotMeasured)
		}
		var parts []string
		for _, lc := range c.Labels {
			parts = append(parts, lc.Label+":"+strconv.Itoa(lc.Count))
		}
		row.Labels = strings.Join(parts, ", ")
		rd.cs = append(rd.cs, row)
	}
	return rd, nil
}

// unmeasuredLabels lists each label with its number of points in the run
// (rows nil: every row) and no stability reading.
func unmeasuredLabels(settingID string, labels []string, rows []int32, n int) []LabelScore {
	count := map[string]int{}
	var order []string
	add := func(row int) {
		l := labels[row]
		if _, ok := count[l]; !ok {
			order = append(order, l)
		}
		count[l]++
	}
	if rows == nil {
		for i := 0; i < n; i++ {
			add(i)
		}
	} else {
		for _, r := range rows {
			add(int(r))
		}
	}
	slices.Sort(order)
	out := make([]LabelScore, len(order))
	for i, l := range order {
		out[i] = LabelScore{SettingID: settingID, Label: l, Points: count[l], Stable: math.NaN(), MeanScore: math.NaN(), MixesShare: math.NaN()}
	}
	return out
}

// apply copies the readings into the setting's row and its point rows
// (pts: the setting's rows of the points table, by input row, possibly
// empty).
func (rd *settingReadings) apply(ss *SettingScore, pts []PointScore) {
	ss.MedoidRun, ss.Clusters = rd.medoid, rd.clusters
	ss.Arrangements, ss.ArrangementSizes, ss.Bimodal = rd.arrangements, rd.sizes, rd.bimodal
	ss.ConsensusShown, ss.ConsensusNote = rd.consensusOK, rd.consensusWhy
	ss.UnstableShare = rd.share
	var v []float64
	for i := range pts {
		p := &pts[i]
		p.SpreadFlagged = p.Unstable
		p.CoAssignment, p.Unstable, p.Cluster = rd.score[p.Point], rd.flagged[p.Point], int(rd.cluster[p.Point])
		if !math.IsNaN(p.CoAssignment) {
			v = append(v, p.CoAssignment)
		}
	}
	ss.CoAssignment = medianIQROf(v)
}
