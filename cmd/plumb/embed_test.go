package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"plumb/internal/parquetio"
)

// TestEmbedParquet embeds testdata/iris.csv (Fisher's iris, scikit-learn's
// copy; see testdata/make_datasets.py) and reads the layout back.
func TestEmbedParquet(t *testing.T) {
	out := filepath.Join(t.TempDir(), "iris.parquet")
	_, stderr, code := plumb(t, "embed", "--input", "../../testdata/iris.csv", "--id-column", "id",
		"--label-column", "species", "--perplexity", "20", "--iters", "300", "--exaggeration-iters", "100", "--out", out)
	if code != 0 {
		t.Fatalf("exit %d, stderr:\n%s", code, stderr)
	}
	tab, err := parquetio.Read(out)
	if err != nil {
		t.Fatal(err)
	}
	// 150 rows: the size of the iris data (Fisher 1936).
	if tab.Rows() != 150 {
		t.Fatalf("got %d rows want 150", tab.Rows())
	}
	ids, err := tab.String("id")
	if err != nil {
		t.Fatal(err)
	}
	labels, err := tab.String("label")
	if err != nil {
		t.Fatal(err)
	}
	if ids[0] != "iris000" || labels[0] != "setosa" || labels[149] != "virginica" {
		t.Errorf("got first id %q label %q, last label %q", ids[0], labels[0], labels[149])
	}
	for _, col := range []string{"x", "y"} {
		v, err := tab.Float64(col)
		if err != nil {
			t.Fatal(err)
		}
		for i, f := range v {
			if f != f || f > 1e6 || f < -1e6 {
				t.Fatalf("%s[%d] = %v", col, i, f)
			}
		}
	}
	var rec embedRecord
	if err := json.Unmarshal([]byte(tab.Meta["plumb.run"]), &rec); err != nil {
		t.Fatalf("plumb.run metadata: %v", err)
	}
	// auto learning rate = max(n/(4·12), 50) = 50 for n = 150 (README convention).
	if rec.N != 150 || rec.D != 4 || rec.Perplexity != 20 || rec.LearningRate != 50 || rec.Iters != 300 {
		t.Errorf("got record %+v", rec)
	}
	if !(rec.KL > 0 && rec.KL < 5) {
		t.Errorf("got KL %v, want a positive value below 5", rec.KL)
	}
	if !strings.Contains(stderr, "KL ") {
		t.Errorf("stderr lacks the final KL:\n%s", stderr)
	}
}

// TestEmbedCSVSidecar checks the CSV layout and its JSON sidecar.
func TestEmbedCSVSidecar(t *testing.T) {
	out := filepath.Join(t.TempDir(), "iris.csv")
	_, stderr, code := plumb(t, "embed", "-q", "--input", "../../testdata/iris.csv", "--id-column", "id", "--columns", "sepal_length,sepal_width,petal_length,petal_width",
		"--iters", "100", "--exaggeration-iters", "50", "--init", "random", "--seed", "7", "--out", out)
	if code != 0 {
		t.Fatalf("exit %d, stderr:\n%s", code, stderr)
	}
	if stderr != "" {
		t.Errorf("--quiet printed %q", stderr)
	}
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if lines[0] != "point,id,x,y" || len(lines) != 151 {
		t.Fatalf("got header %q and %d lines, want point,id,x,y and 151", lines[0], len(lines))
	}
	// The CSV layout has the Parquet layout's columns and values (the
	// README lists point, id, label, x, y for both).
	pq := filepath.Join(t.TempDir(), "iris.parquet")
	if _, stderr, code := plumb(t, "embed", "-q", "--input", "../../testdata/iris.csv", "--id-column", "id", "--columns", "sepal_length,sepal_width,petal_length,petal_width",
		"--iters", "100", "--exaggeration-iters", "50", "--init", "random", "--seed", "7", "--out", pq); code != 0 {
		t.Fatalf("parquet: exit %d %s", code, stderr)
	}
	tab, err := parquetio.Read(pq)
	if err != nil {
		t.Fatal(err)
	}
	ids, _ := tab.String("id")
	xs, _ := tab.Float64("x")
	ys, _ := tab.Float64("y")
	for i, line := range lines[1:] {
		want := fmt.Sprintf("%d,%s,%s,%s", i, ids[i], strconv.FormatFloat(xs[i], 'g', -1, 64), strconv.FormatFloat(ys[i], 'g', -1, 64))
		if line != want {
			t.Fatalf("CSV row %d: got %q want %q (the Parquet layout's)", i+2, line, want)
		}
	}
	var rec embedRecord
	b, err = os.ReadFile(out + ".json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &rec); err != nil {
		t.Fatal(err)
	}
	if rec.Seed != 7 || rec.Init != "random" || rec.Gradient == "" {
		t.Errorf("got record %+v", rec)
	}
}

// TestEmbedErrors: bad input gives one "plumb: error:" line, a non-zero
// exit and no output file.
func TestEmbedErrors(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "out.parquet")
	iris := "../../testdata/iris.csv"
	irisOpts := []string{"--id-column", "id", "--label-column", "species"}
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"missing file", []string{"--input", filepath.Join(dir, "nope.csv")}, "nope.csv"},
		{"perplexity too large", []string{"--input", iris, "--perplexity", "60"}, "perplexity"},
		{"zero perplexity", []string{"--input", iris, "--perplexity", "0"}, "--perplexity 0"},
		// Perplexity is exp(entropy) and entropy ≥ 0 (definition; common practice).
		{"perplexity below 1", []string{"--input", iris, "--perplexity", "0.5"}, "at least 1"},
		{"bad learning rate", []string{"--input", iris, "--learning-rate", "fast"}, "--learning-rate"},
		{"exaggeration below 1", []string{"--input", iris, "--exaggeration", "0.5"}, "--exaggeration"},
		{"iters below exaggeration iters", []string{"--input", iris, "--iters", "100"}, "--exaggeration-iters 250"},
		{"bad gradient", []string{"--input", iris, "--gradient", "magic"}, "--gradient"},
		{"bad init", []string{"--input", iris, "--init", "spectral"}, "--init"},
		{"unknown columns", []string{"--input", iris, "--columns", "petal_lenght"}, "petal_lenght"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, stderr, code := plumb(t, append(append(append([]string{"embed"}, c.args...), irisOpts...), "--out", out)...)
			if code == 0 {
				t.Fatalf("exit 0, want failure")
			}
			lines := strings.Split(strings.TrimSpace(stderr), "\n")
			if !strings.HasPrefix(lines[0], "plumb: error: ") || !strings.Contains(lines[0], c.want) {
				t.Errorf("got stderr %q, want one error line naming %q", stderr, c.want)
			}
			if strings.Contains(stderr, "panic") || strings.Contains(stderr, "goroutine") {
				t.Errorf("stderr shows a panic: %s", stderr)
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("output written despite the error")
			}
		})
	}
	t.Run("bad extension", func(t *testing.T) {
		_, stderr, code := plumb(t, "embed", "--input", iris, "--out", filepath.Join(dir, "out.txt"))
		if code == 0 || !strings.Contains(stderr, ".parquet or .csv") {
			t.Errorf("exit %d stderr %q", code, stderr)
		}
	})
}
