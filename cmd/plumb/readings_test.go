package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"plumb/internal/parquetio"
	"plumb/sweep"
)

// The readings of issues 13 and 14 on iris (testdata/iris.csv, Fisher
// 1936 via scikit-learn's copy: 150 flowers, 3 species of 50), random
// starts, 3 seeds: the new tables exist with the score tables' metadata
// and decode, every run has an R_NX AUC, every setting a medoid run, its
// clusters and label rows.
func TestReadingsTables(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "iris")
	irisStudy(t, dir, "../../testdata/iris.csv", "--seeds", "1-3")
	for _, name := range []string{sweep.ScoreClustersFile, sweep.ScoreLabelsFile} {
		m, _, err := parquetio.ReadMeta(filepath.Join(dir, sweep.ScoresDir, name))
		if err != nil {
			t.Fatal(err)
		}
		want := "scores." + strings.TrimSuffix(name, ".parquet")
		if m[sweep.MetaTable] != want || m[sweep.MetaPlanHash] == "" || m[sweep.MetaFingerprint] == "" || m[sweep.MetaK] != "15" {
			t.Errorf("%s metadata: got %v want table %s, plan hash, fingerprint, k 15", name, m, want)
		}
	}
	st, err := sweep.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	if st.ScoresProblem != "" {
		t.Fatal(st.ScoresProblem)
	}
	if len(st.RunScores) != 6 {
		t.Fatalf("got %d run scores want 6 (2 settings × 3 seeds)", len(st.RunScores))
	}
	for _, r := range st.RunScores {
		// R_NX is 1 for a perfect layout and 0 on average for a random one
		// (Lee & Verleysen 2009); iris with 150 < 1,000 points is exact:
		// every point a query.
		if !(r.RNXAUC > 0 && r.RNXAUC <= 1) || r.RNXQueries != 150 {
			t.Errorf("run %s: rnx_auc %g over %d queries, want in (0, 1] over 150", r.RunID, r.RNXAUC, r.RNXQueries)
		}
	}
	for _, ss := range st.SettingScores {
		if ss.Varied != "seed" || ss.MedoidRun == "" || ss.Arrangements < 1 || ss.Clusters < 1 || math.IsNaN(ss.UnstableShare) || math.IsNaN(ss.RNXAUC.Median) {
			t.Errorf("setting %s: varied %q medoid %q arrangements %d clusters %d unstable %g rnx %g", ss.ID, ss.Varied, ss.MedoidRun,
				ss.Arrangements, ss.Clusters, ss.UnstableShare, ss.RNXAUC.Median)
		}
		var size, setosa int
		var cl []sweep.ClusterScore
		for _, c := range st.Clusters {
			if c.SettingID == ss.ID {
				cl = append(cl, c)
				size += c.Size
				if c.MedoidRun != ss.MedoidRun || math.IsNaN(c.Jaccard) || c.Runs != 2 || c.Reading == "not measured" {
					t.Errorf("setting %s cluster %d: %+v", ss.ID, c.Cluster, c)
				}
				// Setosa is separable from the other two species (Fisher
				// 1936; common knowledge): a map cluster holds setosa alone.
				if strings.HasPrefix(c.Labels, "setosa:") && !strings.Contains(c.Labels, ",") {
					setosa = c.Size
				}
			}
		}
		if len(cl) != ss.Clusters || size > 150 {
			t.Errorf("setting %s: %d cluster rows (want %d), %d points (want ≤ 150)", ss.ID, len(cl), ss.Clusters, size)
		}
		if setosa < 40 {
			t.Errorf("setting %s: no cluster of setosa alone with ≥ 40 of its 50 flowers: %+v", ss.ID, cl)
		}
		labels := map[string]int{}
		for _, l := range st.Labels {
			if l.SettingID == ss.ID {
				labels[l.Label] = l.Points
				if math.IsNaN(l.Stable) || l.Mixes == "" {
					t.Errorf("setting %s label %s: %+v", ss.ID, l.Label, l)
				}
			}
		}
		if labels["setosa"] != 50 || labels["versicolor"] != 50 || labels["virginica"] != 50 {
			t.Errorf("setting %s: label points %v want 50 each (Fisher 1936)", ss.ID, labels)
		}
	}
	measured := 0
	for _, p := range st.Points {
		if !math.IsNaN(p.CoAssignment) {
			measured++
			if p.CoAssignment < 0 || p.CoAssignment > 1 || p.Unstable != (p.CoAssignment < 0.75) {
				t.Errorf("point %d of %s: co-assignment %g, unstable %v (rule: < 0.75)", p.Point, p.SettingID, p.CoAssignment, p.Unstable)
			}
		}
	}
	if measured != 300 {
		t.Errorf("got %d measured co-assignment scores want 300 (2 settings × 150 points)", measured)
	}
}

// A study of PCA starts only: nothing varies between the seeds, so every
// between-run reading is stored as null and shown as "not measured"
// (DESIGN.md: a reading is reported only if something varied).
func TestReadingsNotMeasured(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "pca")
	irisStudy(t, dir, "../../testdata/iris.csv", "--init", "pca", "--seeds", "1-3")
	st, err := sweep.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	for _, ss := range st.SettingScores {
		if ss.Varied != "" || ss.Arrangements != 0 || !math.IsNaN(ss.UnstableShare) || !math.IsNaN(ss.CoAssignment.Median) || ss.ConsensusShown {
			t.Errorf("setting %s: %+v", ss.ID, ss)
		}
		if ss.MedoidRun == "" {
			t.Errorf("setting %s: no medoid run (the picture is still a run's map)", ss.ID)
		}
	}
	if len(st.Clusters) == 0 {
		t.Fatal("no cluster rows: the medoid's clusters are listed with sizes even when not measured")
	}
	for _, c := range st.Clusters {
		if !math.IsNaN(c.Jaccard) || !math.IsNaN(c.Min) || c.Reading != "not measured" {
			t.Errorf("cluster %+v: want null Jaccard and reading not measured", c)
		}
	}
	for _, l := range st.Labels {
		if !math.IsNaN(l.Stable) || !math.IsNaN(l.MeanScore) {
			t.Errorf("label %+v: want null readings", l)
		}
	}
	for _, p := range st.Points {
		if !math.IsNaN(p.CoAssignment) || p.Unstable {
			t.Fatalf("point %+v: want null co-assignment", p)
		}
	}
	// The points table stores unstable as null, not false.
	tab, err := parquetio.Read(filepath.Join(dir, sweep.ScoresDir, sweep.ScorePointsFile))
	if err != nil {
		t.Fatal(err)
	}
	if c := tab.Column("unstable"); c == nil || !c.IsNull(0) {
		t.Error("unstable is not null where co-assignment was not measured")
	}
	stdout, stderr, code := plumb(t, "show", dir)
	if code != 0 || strings.Count(stdout, "not measured") < 8 {
		t.Errorf("show: exit %d, want disparity, jaccard, arrangements and unstable not measured for both settings:\n%s%s", code, stdout, stderr)
	}
	out := filepath.Join(t.TempDir(), "rep")
	stdout, stderr, code = plumb(t, "report", "--out", out, dir)
	if code != 0 || !strings.Contains(stdout, "stability of the recommended setting: not measured") {
		t.Errorf("report: exit %d\n%s%s", code, stdout, stderr)
	}
	m, _ := os.ReadFile(filepath.Join(out, "methods.md"))
	for _, want := range []string{"Not measured (nothing varied between the runs): perplexity 10; perplexity 30.",
		"Its stability was not measured (nothing varied between its runs)"} {
		if !strings.Contains(string(m), want) {
			t.Errorf("methods.md lacks %q:\n%s", want, m)
		}
	}
}
