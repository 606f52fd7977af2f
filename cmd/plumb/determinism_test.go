package main

import (
	"path/filepath"
	"testing"
)

// TestSweepDeterminismJobsThreads: the same sweep run with one job of one
// thread and with two jobs of two threads gives the same study — every
// Parquet column (floats compared bit for bit), every record and
// study.json — apart from the timing columns (seconds, created). Issue 7;
// the team rule "same inputs and seed ⇒ bit-identical results whatever
// GOMAXPROCS/thread count". Data: testdata/iris.csv (Fisher's iris,
// scikit-learn's copy); every gradient method and both initialisations.
func TestSweepDeterminismJobsThreads(t *testing.T) {
	tmp := t.TempDir()
	args := func(dir string, extra ...string) []string {
		return append([]string{"sweep", "--input", rbIris, "--id-column", "id", "--label-column", "species", "--out", dir,
			"--perplexity", "8", "--gradient", "exact,barnes-hut,fft", "--init", "pca,random", "--seeds", "2",
			"--iters", "30", "--exaggeration-iters", "10", "--quiet"}, extra...)
	}
	a := filepath.Join(tmp, "a")
	b := filepath.Join(tmp, "b")
	if _, stderr, code := plumb(t, args(a, "--jobs", "1", "--threads", "1")...); code != 0 {
		t.Fatalf("jobs 1: exit %d %s", code, stderr)
	}
	if _, stderr, code := plumb(t, args(b, "--jobs", "2", "--threads", "2")...); code != 0 {
		t.Fatalf("jobs 2: exit %d %s", code, stderr)
	}
	sa, sb := krStudy(t, a), krStudy(t, b)
	// 12 layouts, 12 traces, 12 records, runs.parquet, study.json, 6 score tables
	// (runs, settings, points, pairs, clusters, labels).
	if len(sa) != 12*3+2+6 {
		t.Errorf("study has %d files, want %d", len(sa), 12*3+2+6)
	}
	krCompare(t, sa, sb)
	// A rescore with other threads gives the same score tables.
	if _, stderr, code := plumb(t, "score", b, "--threads", "1"); code != 0 {
		t.Fatalf("score --threads 1: exit %d %s", code, stderr)
	}
	krCompare(t, sa, krStudy(t, b))
}
