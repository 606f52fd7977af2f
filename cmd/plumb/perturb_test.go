package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A PCA-only study with several seeds: the sweep warns at plan time (and
// --dry-run says so before any work), the score tables hold null stability
// with its reason, show and methods.md say "not measured". Data: Fisher's
// iris (testdata/make_datasets.py).
func TestPCAOnlyNotMeasured(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	args := []string{"sweep", "--input", "../../testdata/iris.csv", "--id-column", "id", "--label-column", "species",
		"--out", dir, "--perplexity", "5,10", "--init", "pca", "--seeds", "3", "--iters", "200", "--exaggeration-iters", "50"}
	stdout, stderr, code := plumb(t, append(args, "--dry-run")...)
	if code != 0 {
		t.Fatalf("dry run exit %d: %s", code, stderr)
	}
	for _, out := range []string{stdout, stderr} {
		if !strings.Contains(out, "seeds cannot change all 2 settings") || !strings.Contains(out, "--init random") || !strings.Contains(out, "--subsample 0.9") {
			t.Errorf("dry run lacks the warning and what to add:\n%s", out)
		}
	}
	if _, err := os.Stat(dir); err == nil {
		t.Error("--dry-run created the study")
	}
	_, stderr, code = plumb(t, args...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	w := strings.Index(stderr, "warning: seeds cannot change all 2 settings")
	r := strings.Index(stderr, "runs, 0 failed")
	if w < 0 || r >= 0 && r < w {
		t.Errorf("the warning is missing or comes after the runs:\n%s", stderr)
	}
	stdout, _, _ = plumb(t, "show", dir, "--json")
	var out showOut
	if err := json.Unmarshal([]byte(stdout), &out); err != nil {
		t.Fatal(err)
	}
	for _, s := range out.Settings {
		if s["varied"] != "" || s["not_measured"] == nil || s["disparity_median"] != nil || s["jaccard_median"] != nil || s["unstable_share"] != nil {
			t.Errorf("setting %v: want varied \"\", a reason, null disparity/jaccard/unstable", s)
		}
	}
	stdout, _, _ = plumb(t, "show", dir)
	if strings.Count(stdout, "not measured") < 6 {
		t.Errorf("show does not say not measured for both settings:\n%s", stdout)
	}
	if _, stderr, code = plumb(t, "report", dir); code != 0 {
		t.Fatalf("report exit %d: %s", code, stderr)
	}
	md, err := os.ReadFile(filepath.Join(dir, "report", "methods.md"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(md), "stability was not measured") || strings.Contains(string(md), "disparity 0.0000") {
		t.Errorf("methods.md does not say not measured:\n%s", md)
	}
}

// With resampling the same PCA start gives a real reading, and the
// dry run lists the subsamples as shared work derived from one search.
func TestSubsampleSweep(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	args := []string{"sweep", "--input", "../../testdata/iris.csv", "--id-column", "id", "--label-column", "species",
		"--out", dir, "--perplexity", "10", "--init", "pca", "--seeds", "3", "--subsample", "0.8", "--iters", "200", "--exaggeration-iters", "50"}
	stdout, _, code := plumb(t, append(args, "--dry-run")...)
	if code != 0 || !strings.Contains(stdout, "subsamples: 3") || strings.Contains(stdout, "warning") {
		t.Errorf("dry run (exit %d):\n%s", code, stdout)
	}
	if _, stderr, code := plumb(t, args...); code != 0 || strings.Contains(stderr, "warning") {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	stdout, _, _ = plumb(t, "show", dir, "--json")
	var out showOut
	if err := json.Unmarshal([]byte(stdout), &out); err != nil {
		t.Fatal(err)
	}
	s := out.Settings[0]
	if s["varied"] != "subsample" || s["not_measured"] != nil {
		t.Errorf("varied %v, reason %v; want subsample and none", s["varied"], s["not_measured"])
	}
	if d, ok := s["disparity_median"].(float64); !ok || d <= 0 {
		t.Errorf("disparity median %v, want a measured positive value", s["disparity_median"])
	}
	if _, stderr, code := plumb(t, "report", dir); code != 0 {
		t.Fatalf("report exit %d: %s", code, stderr)
	}
	md, _ := os.ReadFile(filepath.Join(dir, "report", "methods.md"))
	if !strings.Contains(string(md), "each seed its own random subsample") {
		t.Errorf("methods.md does not say what varied:\n%s", md)
	}
}
