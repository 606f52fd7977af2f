package main

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"plumb/internal/parquetio"
)

// nudgeLayout rewrites a run's stored layout with the y coordinate of row
// row moved to the next float64 towards +Inf (one ulp), through the
// project's own Parquet writer, keeping the metadata.
func nudgeLayout(t *testing.T, dir, runID string, row int) {
	t.Helper()
	path := filepath.Join(dir, "layouts", runID+".parquet")
	tb, err := parquetio.Read(path)
	if err != nil {
		t.Fatal(err)
	}
	ys, err := tb.Float64("y")
	if err != nil {
		t.Fatal(err)
	}
	ys[row] = math.Nextafter(ys[row], math.Inf(1))
	if err := parquetio.Write(path, tb); err != nil {
		t.Fatal(err)
	}
}

func TestReproduce(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	// Iris (testdata/iris.csv, see testdata/make_datasets.py), two
	// perplexities, runs on all points and on a 0.8 subsample, 2 seeds.
	if _, stderr, code := plumb(t, "sweep", "--input", "../../testdata/iris.csv", "--id-column", "id", "--label-column", "species",
		"--out", dir, "--perplexity", "5,10", "--init", "random", "--seeds", "2", "--subsample", "0.8,1",
		"--iters", "60", "--exaggeration-iters", "20", "--no-score", "--quiet"); code != 0 {
		t.Fatalf("sweep: exit %d\n%s", code, stderr)
	}
	recs, _ := filepath.Glob(filepath.Join(dir, "records", "*.json"))
	if len(recs) != 8 {
		t.Fatalf("got %d records want 8", len(recs))
	}
	b, err := os.ReadFile(recs[0])
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{`"plumb_version"`, `"go_version"`, `"os"`, `"arch"`, `"kernels"`} {
		if !strings.Contains(string(b), k) {
			t.Errorf("record lacks %s:\n%s", k, b)
		}
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "study.json")); !strings.Contains(string(b), `"kernels"`) {
		t.Errorf("study.json lacks the environment:\n%s", b)
	}

	stdout, stderr, code := plumb(t, "reproduce", dir, "--all")
	if code != 0 || !strings.Contains(stdout, "all 8 runs reproduce bit for bit") {
		t.Fatalf("fresh study: exit %d\n%s%s", code, stdout, stderr)
	}
	if n := strings.Count(stdout, "every coordinate identical"); n != 8 {
		t.Errorf("got %d identical runs want 8:\n%s", n, stdout)
	}

	// One coordinate of one run on a subsample moved by one ulp.
	var sub string
	for _, r := range recs {
		id := strings.TrimSuffix(filepath.Base(r), ".json")
		if tb, err := parquetio.Read(filepath.Join(dir, "layouts", id+".parquet")); err == nil && tb.Rows() == 120 {
			sub = id // 0.8 × 150 points
			break
		}
	}
	if sub == "" {
		t.Fatal("no layout of a subsampled run")
	}
	nudgeLayout(t, dir, sub, 17)
	stdout, stderr, code = plumb(t, "reproduce", dir, "--all")
	if code != 1 || !strings.Contains(stderr, "1 of 8 runs do not reproduce") {
		t.Fatalf("after nudge: exit %d want 1\n%s%s", code, stdout, stderr)
	}
	want := regexp.MustCompile(regexp.QuoteMeta(sub) + `  DIFFERENT: 1 of 240 coordinates; largest deviation \S+ \(1 ulp\) at point "\S+" \(input row \d+\), y`)
	if !want.MatchString(stdout) {
		t.Errorf("stdout does not name run %s with a 1-ulp deviation:\n%s", sub, stdout)
	}
	if !strings.Contains(stdout, "same recorded environment") {
		t.Errorf("stdout lacks the environment note:\n%s", stdout)
	}
	// The other runs alone still pass; a sample is reproducible.
	var others []string
	for _, r := range recs {
		if id := strings.TrimSuffix(filepath.Base(r), ".json"); id != sub {
			others = append(others, id)
		}
	}
	if stdout, stderr, code = plumb(t, "reproduce", dir, "--runs", strings.Join(others[:2], ",")); code != 0 {
		t.Errorf("--runs of unchanged runs: exit %d\n%s%s", code, stdout, stderr)
	}
	s1, _, c1 := plumb(t, "reproduce", dir, "--sample", "3", "--seed", "7")
	s2, _, c2 := plumb(t, "reproduce", dir, "--sample", "3", "--seed", "7")
	if s1 != s2 || c1 != c2 || strings.Count(s1, "\n  ") != 3 {
		t.Errorf("--sample 3 --seed 7 twice: exits %d, %d\n%s---\n%s", c1, c2, s1, s2)
	}

	for name, args := range map[string][]string{
		"unknown run":  {"reproduce", dir, "--runs", "nosuchrun-1"},
		"no selection": {"reproduce", dir},
		"two choices":  {"reproduce", dir, "--all", "--sample", "2"},
		"bad sample":   {"reproduce", dir, "--sample", "0"},
		"no study":     {"reproduce", t.TempDir(), "--all"},
		"bad flag":     {"reproduce", dir, "--bogus"},
	} {
		t.Run(name, func(t *testing.T) {
			_, stderr, code := plumb(t, args...)
			if code != 2 || !strings.HasPrefix(stderr, "plumb: error: ") {
				t.Errorf("exit %d want 2\n%s", code, stderr)
			}
			if name == "unknown run" && !strings.Contains(stderr, `"nosuchrun-1"`) {
				t.Errorf("error does not name the run:\n%s", stderr)
			}
		})
	}
}
