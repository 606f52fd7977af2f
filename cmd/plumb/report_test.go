package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"plumb/cmd/plumb/internal/recommend"
	"plumb/cmd/plumb/internal/report"
	"plumb/cmd/plumb/internal/studyview"
)

func TestReportCommand(t *testing.T) {
	base := baseline(t)
	out := filepath.Join(t.TempDir(), "rep")
	stdout, stderr, code := plumb(t, "report", "--out", out, base)
	if code != 0 {
		t.Fatalf("exit %d\n%s", code, stderr)
	}
	// The output names the recommended setting and the rule's step that
	// separated the runner-up (recommend.Step…, worded by report.StepWords).
	if !strings.Contains(stdout, filepath.Join(out, "index.html")) || !strings.Contains(stdout, "recommended: perplexity ") ||
		!strings.Contains(stdout, "separated at step (") {
		t.Errorf("stdout: %s", stdout)
	}
	for _, f := range []string{"index.html", "methods.md", "figures/layouts.svg", "figures/layouts.png", "figures/stability.png", "figures/kl-traces.svg"} {
		if _, err := os.Stat(filepath.Join(out, f)); err != nil {
			t.Errorf("missing %s", f)
		}
	}
	// The methods text carries the study's real numbers: iris is 150 × 4
	// (Fisher 1936), the plan of irisStudy, and the chosen setting's median
	// trustworthiness as stored in the study.
	m, _ := os.ReadFile(filepath.Join(out, "methods.md"))
	st, err := studyview.Open(base)
	if err != nil {
		t.Fatal(err)
	}
	rec, err := recommend.Recommend(report.Candidates(st), report.Rule{})
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"n = 150 points", "d = 4 features", "perplexity ∈ {10, 30}", "2 seeds (1, 2)",
		"4 runs, of which 4 finished", "iterations (in all) 400", "early-exaggeration iterations 100",
		"initialisation random", "k = " + strconv.Itoa(st.K),
		// scores below 1 are printed with 4 decimals
		"median R_NX AUC " + fmt.Sprintf("%.4f", rec.Chosen.RNXAUC.Median), "medoid run " + st.Setting(rec.Chosen.ID).MedoidRun} {
		if !strings.Contains(string(m), want) {
			t.Errorf("methods.md lacks %q:\n%s", want, m)
		}
	}
	if _, stderr, code := plumb(t, "report"); code == 0 || !strings.Contains(stderr, "STUDY_DIR") {
		t.Errorf("no argument: exit %d %s", code, stderr)
	}
}

// An unscored study: a one-line error and a hint naming the command.
func TestReportUnscored(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "raw")
	irisStudy(t, dir, "../../testdata/iris.csv", "--no-score")
	_, stderr, code := plumb(t, "report", dir)
	if code != 1 || !strings.Contains(stderr, "has no score tables") || !strings.Contains(stderr, "plumb: hint: run: plumb score "+dir) {
		t.Errorf("exit %d, stderr %q", code, stderr)
	}
	_, stderr, code = plumb(t, "check", "--baseline", dir, dir)
	if code != 2 || !strings.Contains(stderr, "has no score tables") {
		t.Errorf("check: exit %d, stderr %q", code, stderr)
	}
}
