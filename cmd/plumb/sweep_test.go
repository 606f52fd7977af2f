package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// plumb runs the command line in-process and returns stdout, stderr and the
// exit code.
func plumb(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(append([]string{"plumb"}, args...), &out, &errb)
	return out.String(), errb.String(), code
}

// irisArgs: testdata/iris.csv (Fisher's iris via scikit-learn's copy,
// testdata/make_datasets.py), a 2 × 2 grid with 2 seeds and few iterations.
func irisArgs(dir string, extra ...string) []string {
	return append([]string{"sweep", "--input", "../../testdata/iris.csv", "--id-column", "id", "--label-column", "species",
		"--out", dir, "--perplexity", "5,10", "--init", "random", "--exaggeration", "4,12", "--seeds", "2",
		"--iters", "60", "--exaggeration-iters", "20"}, extra...)
}

type showOut struct {
	PlanHash string `json:"plan_hash"`
	Planned  int    `json:"runs_planned"`
	Done     int    `json:"runs_done"`
	Scored   bool   `json:"scored"`
	K        int    `json:"k"`
	Settings []map[string]any
}

func TestSweepCommand(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	_, stderr, code := plumb(t, irisArgs(dir)...)
	if code != 0 {
		t.Fatalf("exit %d, stderr:\n%s", code, stderr)
	}
	for _, want := range []string{"shared: exact neighbours, k=30", "shared: affinities for perplexity 5", "shared: affinities for perplexity 10", "8/8 runs, 0 failed", "scored"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
	for _, sub := range []string{"study.json", "runs.parquet", "scores/settings.parquet", "scores/runs.parquet", "scores/points.parquet", "scores/pairs.parquet"} {
		if _, err := os.Stat(filepath.Join(dir, sub)); err != nil {
			t.Errorf("missing %s", sub)
		}
	}
	if m, _ := filepath.Glob(filepath.Join(dir, "layouts", "*.parquet")); len(m) != 8 {
		t.Errorf("got %d layouts want 8", len(m))
	}

	stdout, stderr, code := plumb(t, "show", dir, "--json", "--sort", "trustworthiness_median", "--desc")
	if code != 0 {
		t.Fatalf("show exit %d: %s", code, stderr)
	}
	var so showOut
	if err := json.Unmarshal([]byte(stdout), &so); err != nil {
		t.Fatalf("show --json: %v\n%s", err, stdout)
	}
	if so.Planned != 8 || so.Done != 8 || !so.Scored || so.K != 15 || len(so.Settings) != 4 {
		t.Fatalf("show --json: %+v", so)
	}
	for i := 1; i < len(so.Settings); i++ {
		if so.Settings[i-1]["trustworthiness_median"].(float64) < so.Settings[i]["trustworthiness_median"].(float64) {
			t.Errorf("not sorted descending by trustworthiness_median")
		}
	}
	stdout, _, code = plumb(t, "show", dir)
	if code != 0 || !strings.Contains(stdout, "8 of 8 runs done") || !strings.Contains(stdout, "label_acc") {
		t.Errorf("show table (exit %d):\n%s", code, stdout)
	}
	if _, stderr, code = plumb(t, "show", dir, "--sort", "nonsense"); code != 2 || !strings.Contains(stderr, "no such column") {
		t.Errorf("show --sort nonsense: exit %d, %s", code, stderr)
	}

	// Resume: nothing to do.
	_, stderr, code = plumb(t, irisArgs(dir, "--no-score")...)
	if code != 0 || !strings.Contains(stderr, "0 runs done, 0 failed, 8 already finished") {
		t.Errorf("resume: exit %d\n%s", code, stderr)
	}
	_, stderr, code = plumb(t, irisArgs(dir)...)
	if code != 0 || !strings.Contains(stderr, "nothing new to score") {
		t.Errorf("resume with scoring: exit %d\n%s", code, stderr)
	}
	// Rescore with another k.
	_, stderr, code = plumb(t, "score", dir, "--k", "7")
	if code != 0 {
		t.Fatalf("score: exit %d %s", code, stderr)
	}
	stdout, _, _ = plumb(t, "show", dir, "--json")
	json.Unmarshal([]byte(stdout), &so)
	if so.K != 7 {
		t.Errorf("after score --k 7: k = %d", so.K)
	}
	// Another plan in the same directory is refused with a hint.
	_, stderr, code = plumb(t, irisArgs(dir, "--seeds", "3")...)
	if code != 1 || !strings.Contains(stderr, "plumb: error: ") || !strings.Contains(stderr, "another plan") || !strings.Contains(stderr, "plumb: hint: ") {
		t.Errorf("other plan: exit %d\n%s", code, stderr)
	}
	// Dry run: prints the plan and shared work, writes nothing.
	fresh := filepath.Join(t.TempDir(), "fresh")
	stdout, _, code = plumb(t, irisArgs(fresh, "--dry-run")...)
	if code != 0 || !strings.Contains(stdout, "4 settings × 2 seeds = 8 runs") || !strings.Contains(stdout, "neighbours: exact search, k=30") ||
		!strings.Contains(stdout, "affinities P: perplexity 5 (k=15), shared by 4 runs") || !strings.Contains(stdout, "estimate:") {
		t.Errorf("dry run (exit %d):\n%s", code, stdout)
	}
	if _, err := os.Stat(fresh); !os.IsNotExist(err) {
		t.Errorf("dry run created %s", fresh)
	}
}

func TestSweepShardsCommand(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	_, stderr, code := plumb(t, irisArgs(dir, "--shard", "0/2")...)
	if code != 0 || !strings.Contains(stderr, "other shards still have runs to do") {
		t.Fatalf("shard 0: exit %d\n%s", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "scores")); !os.IsNotExist(err) {
		t.Error("first shard scored an incomplete study")
	}
	// The second shard via the Kubernetes Indexed Job variable.
	t.Setenv("JOB_COMPLETION_INDEX", "1")
	_, stderr, code = plumb(t, irisArgs(dir, "--shards", "2")...)
	if code != 0 || !strings.Contains(stderr, "shard 1/2") || !strings.Contains(stderr, "scored") {
		t.Fatalf("shard 1: exit %d\n%s", code, stderr)
	}
}

func TestSweepBadArguments(t *testing.T) {
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"perplexity zero", []string{"--perplexity", "0"}, `--perplexity "0": must be positive`},
		{"learning rate", []string{"--learning-rate", "auto,-1"}, `--learning-rate "-1": must be positive or auto`},
		{"exaggeration", []string{"--exaggeration", "0.5"}, `--exaggeration "0.5"`},
		{"iters below exaggeration", []string{"--iters", "10", "--exaggeration-iters", "20"}, "fewer than 20 exaggeration iterations"},
		{"seeds zero", []string{"--seeds", "0"}, `--seeds "0": a seed count must be at least 1`},
		{"shard out of range", []string{"--shard", "2/2"}, `--shard "2/2": shard index must be 0..1`},
		{"perplexity too big for n", []string{"--perplexity", "60"}, "perplexity"},
		{"jobs negative", []string{"--jobs", "-1"}, "--jobs -1"},
		{"missing column", []string{"--label-column", "kind"}, "kind"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := filepath.Join(t.TempDir(), "study")
			_, stderr, code := plumb(t, irisArgs(dir, c.args...)...)
			if code == 0 || !strings.Contains(stderr, c.want) || strings.Count(strings.TrimSpace(stderr), "\n") > 1 || strings.Contains(stderr, "panic") {
				t.Errorf("exit %d, stderr %q, want one error line containing %q", code, stderr, c.want)
			}
			if _, err := os.Stat(dir); !os.IsNotExist(err) {
				t.Errorf("a failed start created %s", dir)
			}
		})
	}
	plan := filepath.Join(t.TempDir(), "plan.json")
	os.WriteFile(plan, []byte(`{"perplexity": [5, 10], "perplexty": 3}`), 0o644)
	_, stderr, code := plumb(t, irisArgs(filepath.Join(t.TempDir(), "s"), "--plan", plan)...)
	if code == 0 || !strings.Contains(stderr, `unknown field "perplexty"`) {
		t.Errorf("bad plan file: exit %d %s", code, stderr)
	}
	if _, stderr, code := plumb(t, "show", t.TempDir()); code == 0 || !strings.Contains(stderr, "is not a study") {
		t.Errorf("show on a non-study: exit %d %s", code, stderr)
	}
	if _, stderr, code := plumb(t, "score"); code != 2 || !strings.Contains(stderr, "exactly one argument") {
		t.Errorf("score without argument: exit %d %s", code, stderr)
	}
}
