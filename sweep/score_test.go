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

	"plumb/internal/pq"
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
		tb, err := pq.Read(filepath.Join(dir, ScoresDir, name))
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
