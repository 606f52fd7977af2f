package sweep

import (
	"context"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"plumb/internal/parquetio"
)

func TestScoreTables(t *testing.T) {
	ds := iris(t)
	p := smallPlan(t)
	dir := t.TempDir()
	runSweep(t, ds, p, dir, nil)
	sum, err := Score(context.Background(), dir, ds, ScoreOptions{K: 10})
	if err != nil {
		t.Fatal(err)
	}
	// 2 settings × 2 seeds: 4 run rows, 2 setting rows, 2 × 150 point
	// rows, one pair per setting.
	if sum.Runs != 4 || sum.Settings != 2 || sum.Points != 300 || sum.Pairs != 2 {
		t.Fatalf("got %+v", sum)
	}
	for name, rows := range map[string]int{ScoreRunsFile: 4, ScoreSettingsFile: 2, ScorePointsFile: 300, ScorePairsFile: 2} {
		tb, err := parquetio.Read(filepath.Join(dir, ScoresDir, name))
		if err != nil {
			t.Fatal(err)
		}
		if tb.Rows() != rows || tb.Meta[MetaK] != "10" || tb.Meta[MetaPlanHash] != p.Hash() || !strings.HasPrefix(tb.Meta[MetaTable], "scores.") {
			t.Errorf("%s: got %d rows, meta %v", name, tb.Rows(), tb.Meta)
		}
	}
	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	if st.ScoresK != 10 || len(st.RunScores) != 4 || len(st.SettingScores) != 2 || len(st.Points) != 300 || len(st.Pairs) != 2 {
		t.Fatalf("Open: k=%d, %d %d %d %d", st.ScoresK, len(st.RunScores), len(st.SettingScores), len(st.Points), len(st.Pairs))
	}
	for _, r := range st.RunScores {
		// Trustworthiness, continuity, recall and label scores lie in
		// [0, 1] for k < n/2 (Venna & Kaski 2001); t-SNE maps of iris keep
		// local structure well even after 60 iterations, so T > 0.8
		// (common practice: random maps score about 0.5).
		for name, v := range map[string]float64{"trustworthiness": r.Trustworthiness, "continuity": r.Continuity,
			"knn_recall": r.KNNRecall, "label_accuracy": r.LabelAccuracy, "label_purity": r.LabelPurity} {
			if !(v >= 0 && v <= 1) {
				t.Errorf("run %s %s = %v, want in [0, 1]", r.RunID, name, v)
			}
		}
		if r.Trustworthiness < 0.8 || r.Sampled != 150 || r.K != 10 {
			t.Errorf("run %s: %+v", r.RunID, r)
		}
	}
	for _, s := range st.SettingScores {
		if s.RunsDone != 2 || math.IsNaN(s.Disparity.Median) || s.Disparity.IQR != 0 || math.IsNaN(s.UnstableShare) {
			t.Errorf("setting %s: %+v", s.ID, s)
		}
	}
	// Idempotent: scoring again gives the same decoded tables.
	before := decoded(t, filepath.Join(dir, ScoresDir))
	if _, err := Score(context.Background(), dir, ds, ScoreOptions{K: 10, Threads: 1}); err != nil {
		t.Fatal(err)
	}
	after := decoded(t, filepath.Join(dir, ScoresDir))
	if !reflect.DeepEqual(before, after) {
		t.Error("scoring twice (threads 2 then 1) gave different tables")
	}
	// k must stay below n/2 (Venna & Kaski 2001's condition for T ∈ [0,1]).
	if _, err := Score(context.Background(), dir, ds, ScoreOptions{K: 75}); err == nil {
		t.Error("k = 75 for n = 150: got nil error")
	}
}

// A run that diverges is recorded as failed with its reason; the sweep
// goes on and the other runs finish.
func TestFailedRunRecorded(t *testing.T) {
	ds := iris(t)
	p, err := Spec{Perplexity: "10", LearningRate: "100,1e305", Seeds: "1", Iters: "40", ExaggerationIters: "10", Init: "random"}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	sum := runSweep(t, ds, p, dir, nil)
	if sum.Stats.Done != 1 || sum.Stats.Failed != 1 || !sum.Complete {
		t.Fatalf("got %+v", sum.Stats)
	}
	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	var failed *RunRow
	for i := range st.Rows {
		if st.Rows[i].Status == StatusFailed {
			failed = &st.Rows[i]
		}
	}
	if failed == nil || !strings.Contains(failed.Error, "diverged") || !math.IsNaN(failed.KL) {
		t.Fatalf("failed row: %+v", failed)
	}
	if _, err := os.Stat(filepath.Join(dir, LayoutsDir, failed.RunID+".parquet")); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("failed run has a layout file: %v", err)
	}
	// Resume counts the failed run as finished; --retry-failed redoes it.
	if s := runSweep(t, ds, p, dir, nil); s.Stats.Skipped != 2 {
		t.Errorf("resume: got %+v", s.Stats)
	}
	if s := runSweep(t, ds, p, dir, func(o *Options) { o.RetryFailed = true }); s.Stats.Failed != 1 || s.Stats.Skipped != 1 {
		t.Errorf("retry: got %+v", s.Stats)
	}
	// Scoring skips failed runs and counts them.
	if _, err := Score(context.Background(), dir, ds, ScoreOptions{}); err != nil {
		t.Fatal(err)
	}
	st, _ = Open(dir)
	var fails int
	for _, s := range st.SettingScores {
		fails += s.RunsFailed
	}
	if len(st.RunScores) != 1 || fails != 1 {
		t.Errorf("scores: %d run rows, %d failed", len(st.RunScores), fails)
	}
}

// Cancelling stops the sweep; finished runs stay and verify, nothing is
// half-written, and a resume completes the study with the same files as an
// uninterrupted sweep.
func TestCancelThenResume(t *testing.T) {
	ds := iris(t)
	p := smallPlan(t)
	dir, ref := t.TempDir(), t.TempDir()
	runSweep(t, ds, p, ref, nil)
	ctx, cancel := context.WithCancel(context.Background())
	opt := Options{Dir: dir, Input: NewInput("iris.csv", irisOptions, ds), Version: "test", Jobs: 1,
		Events: func(e Event) {
			if e.Kind == EventRunDone && e.Done == 1 {
				cancel()
			}
		}}
	sum, err := Execute(ctx, ds, p, opt)
	if err != nil {
		t.Fatal(err)
	}
	if !sum.Canceled || sum.Stats.Done != 1 || sum.Complete {
		t.Fatalf("cancel: got %+v", sum)
	}
	// No temporary files anywhere.
	filepath.Walk(dir, func(path string, fi os.FileInfo, err error) error {
		if err == nil && strings.Contains(filepath.Base(path), ".tmp-") {
			t.Errorf("temporary file left: %s", path)
		}
		return nil
	})
	ents, _ := os.ReadDir(filepath.Join(dir, LayoutsDir))
	if len(ents) != 1 {
		t.Errorf("got %d layout files after one finished run", len(ents))
	}
	s2 := runSweep(t, ds, p, dir, nil)
	if s2.Stats.Skipped != 1 || s2.Stats.Done != 3 || !s2.Complete {
		t.Errorf("resume: got %+v", s2.Stats)
	}
	a, b := decoded(t, ref), decoded(t, dir)
	if !reflect.DeepEqual(a, b) {
		t.Error("cancelled and resumed study differs from an uninterrupted one")
	}
}

// An undefined score does not fail the scoring: a layout whose points all
// coincide has no distance variation, so its Spearman correlations with the
// input distances and with the other runs' layouts are undefined (a rank
// correlation needs both lists to vary: Spearman 1904, common practice).
// They are stored as null and left out of the setting medians.
func TestScoreUndefinedIsNull(t *testing.T) {
	ds := iris(t)
	p := smallPlan(t)
	dir := t.TempDir()
	runSweep(t, ds, p, dir, nil)
	runs, _ := p.Runs()
	bad := runs[0]
	path := layoutPath(dir, bad.ID)
	tb, err := parquetio.Read(path)
	if err != nil {
		t.Fatal(err)
	}
	for i := range tb.Columns {
		if n := tb.Columns[i].Name; n == "x" || n == "y" {
			v := tb.Columns[i].Values.([]float64)
			for j := range v {
				v[j] = 1.5 // every point at (1.5, 1.5)
			}
		}
	}
	if err := parquetio.Write(path, tb); err != nil {
		t.Fatal(err)
	}
	if _, err := Score(context.Background(), dir, ds, ScoreOptions{K: 10}); err != nil {
		t.Fatalf("Score with a collapsed layout: %v", err)
	}
	rt, err := parquetio.Read(filepath.Join(dir, ScoresDir, ScoreRunsFile))
	if err != nil {
		t.Fatal(err)
	}
	ids, _ := rt.String("run_id")
	col := rt.Column("distance_spearman")
	if col == nil || !col.Nullable {
		t.Fatalf("runs table: distance_spearman column %+v, want nullable", col)
	}
	for i, id := range ids {
		valid := col.Valid == nil || col.Valid[i]
		if (id == bad.ID) == valid {
			t.Errorf("run %s: distance_spearman valid=%v, want null only for the collapsed run %s", id, valid, bad.ID)
		}
	}
	st, err := Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	// The collapsed layout cannot be aligned (Procrustes needs a layout
	// of non-zero size): it is left out of the seed-to-seed agreement, so
	// its setting (2 seeds) has no pair; the other setting keeps its one.
	if len(st.Pairs) != 1 || st.Pairs[0].RunA == bad.ID || st.Pairs[0].RunB == bad.ID || math.IsNaN(st.Pairs[0].DistanceSpearman) {
		t.Errorf("pairs %+v, want one, of the other setting, with a defined distance Spearman", st.Pairs)
	}
	for _, ss := range st.SettingScores {
		if ss.ID == bad.Setting.ID {
			// The setting's one other run still has a defined score; the
			// agreement of fewer than 2 layouts is undefined.
			if math.IsNaN(ss.DistanceSpearman.Median) || !math.IsNaN(ss.Disparity.Median) || ss.RunsDone != 2 {
				t.Errorf("setting %s: distance Spearman %v, disparity %v, runs done %d; want a value, NaN, 2",
					ss.ID, ss.DistanceSpearman.Median, ss.Disparity.Median, ss.RunsDone)
			}
		}
	}
}

// NoVariance: identical rows of values not exact in binary (5.1, 0.2) are
// recognised despite the rounding of their means; a spread of one part in
// 10⁹ is real variance (common practice: relative tolerance 1e-12).
func TestNoVariance(t *testing.T) {
	x := make([]float64, 0, 4*1000)
	for i := 0; i < 1000; i++ {
		x = append(x, 5.1, 3.5, 1.4, 0.2)
	}
	if !NoVariance(x, 1000, 4) {
		t.Error("identical rows: NoVariance = false")
	}
	x[4*500] *= 1 + 1e-9
	if NoVariance(x, 1000, 4) {
		t.Error("one value moved by 1e-9 relative: NoVariance = true")
	}
	if !NoVariance([]float64{0, 0, 0, 0}, 2, 2) {
		t.Error("all zeros: NoVariance = false")
	}
}
