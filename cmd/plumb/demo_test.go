package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The demo end to end: data, sweep, scores, report (about ten seconds on
// this 2-core machine).
func TestDemoCommand(t *testing.T) {
	out := filepath.Join(t.TempDir(), "demo")
	stdout, stderr, code := plumb(t, "demo", "--quiet", "--out", out)
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	for _, f := range []string{"field-stations.csv", "study/study.json", "study/runs.parquet", "study/scores/settings.parquet",
		"study/report/index.html", "study/report/methods.md", "study/report/figures/layouts.png"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("missing %s", f)
		}
	}
	for _, want := range []string{"study/report/index.html", "Recommended setting: perplexity ", "Try next:", "plumb check --baseline",
		// The suggested sweep measures a real stability: random starts and subsamples.
		"--init pca,random --subsample 1,0.9"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("stdout lacks %q:\n%s", want, stdout)
		}
	}
	m, _ := os.ReadFile(filepath.Join(out, "study/report/methods.md"))
	// 400 records = 130+90+60+45+25 sites + 50 faulty (internal/demo).
	for _, want := range []string{"n = 400 points", "d = 20 features", "perplexity ∈ {5, 20, 50}", "3 seeds (1, 2, 3)", "9 runs, of which 9 finished"} {
		if !strings.Contains(string(m), want) {
			t.Errorf("methods lack %q", want)
		}
	}
	// Again: every run is found finished and reused.
	if _, stderr, code := plumb(t, "demo", "--quiet", "--out", out); code != 0 {
		t.Fatalf("second run: exit %d %s", code, stderr)
	}
}
