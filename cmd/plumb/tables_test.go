package main

import (
	"path/filepath"
	"testing"

	"plumb/internal/parquetio"
)

// learning_rate has one meaning in every table: the step size the runs
// used. For auto that is max(n/(4·exaggeration), 50) (scikit-learn's auto,
// README "Conventions"): iris has n = 150 (Fisher 1936), so 50 at
// exaggeration 4 and 12 alike; the planned 200 stays 200.
func TestLearningRateOneMeaning(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	if _, stderr, code := plumb(t, irisArgs(dir, "--learning-rate", "auto,200", "--quiet")...); code != 0 {
		t.Fatalf("sweep: exit %d %s", code, stderr)
	}
	runs, err := parquetio.Read(filepath.Join(dir, "runs.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	settings, err := parquetio.Read(filepath.Join(dir, "scores", "settings.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	used := map[string]float64{}
	rsid, _ := runs.String("setting_id")
	rlr, _ := runs.Float64("learning_rate")
	for i := range rsid {
		used[rsid[i]] = rlr[i]
	}
	sid, _ := settings.String("setting_id")
	slr, _ := settings.Float64("learning_rate")
	spec, _ := settings.String("learning_rate_spec")
	if len(sid) != 8 {
		t.Fatalf("got %d settings, want 8", len(sid))
	}
	for i := range sid {
		want := 200.0
		if spec[i] == "auto" {
			want = 50
		}
		if slr[i] != want || used[sid[i]] != want {
			t.Errorf("setting %s (%s): settings.parquet learning_rate %v, runs.parquet %v, want %v in both", sid[i], spec[i], slr[i], used[sid[i]], want)
		}
	}
}
