package sweep

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"plumb/internal/dataset"
	"plumb/stability"
	"plumb/tsne"
)

// Score batches the runs of whole settings and ranks the input's pair
// distances once; its tables must hold exactly what scoring each run alone
// with the one-shot library calls gives (stability.FaithfulnessAt,
// stability.DistanceCorrelation), bit for bit, and must not depend on how
// the settings fall into batches. Two inputs: iris (150 points, every pair
// of points in the distance correlations) and 600 Gaussian points in three
// clusters (sampled pairs: 600·599/2 > stability.DefaultPairs).
func TestScoreBatchedEqualsOneShot(t *testing.T) {
	clusters := gaussianCSV(t, 600, 5)
	for _, tc := range []struct {
		name string
		ds   *dataset.Dataset
		in   Input
	}{
		{"iris", iris(t), Input{}},
		{"clusters", clusters.ds, NewInput(clusters.path, clusters.opt, clusters.ds)},
	} {
		t.Run(tc.name, func(t *testing.T) {
			ds, k := tc.ds, 10
			p := smallPlan(t)
			dir := t.TempDir()
			runSweep(t, ds, p, dir, func(o *Options) {
				if tc.in.Path != "" {
					o.Input = tc.in
				}
			})
			if _, err := Score(context.Background(), dir, ds, ScoreOptions{K: k}); err != nil {
				t.Fatal(err)
			}
			one := decoded(t, filepath.Join(dir, ScoresDir))
			// One setting per batch.
			defer func(v int) { scoreBatchFloats = v }(scoreBatchFloats)
			scoreBatchFloats = 1
			if _, err := Score(context.Background(), dir, ds, ScoreOptions{K: k, Threads: 1}); err != nil {
				t.Fatal(err)
			}
			if small := decoded(t, filepath.Join(dir, ScoresDir)); !reflect.DeepEqual(one, small) {
				t.Error("one batch and one setting per batch gave different tables")
			}
			st, err := Open(dir)
			if err != nil {
				t.Fatal(err)
			}
			info, err := ReadInfo(dir)
			if err != nil {
				t.Fatal(err)
			}
			runs, err := p.Runs()
			if err != nil {
				t.Fatal(err)
			}
			nb, err := tsne.ExactNeighbors(ds.X, ds.N, ds.D, k, 0)
			if err != nil {
				t.Fatal(err)
			}
			sopt := stability.Options{Seed: scoreSeed, InputNeighbors: nb.Index, InputK: nb.K}
			layouts := map[string][]float64{}
			for _, r := range runs {
				if layouts[r.ID], err = readLayout(dir, info, r); err != nil {
					t.Fatal(err)
				}
			}
			if len(st.RunScores) != len(runs) || len(st.Pairs) != 2 {
				t.Fatalf("%d run rows and %d pair rows, want %d and 2", len(st.RunScores), len(st.Pairs), len(runs))
			}
			wantPairs := ds.N * (ds.N - 1) / 2
			if wantPairs > stability.DefaultPairs {
				wantPairs = stability.DefaultPairs
			}
			for _, rs := range st.RunScores {
				y := layouts[rs.RunID]
				f, err := stability.FaithfulnessAt(ds.X, ds.D, y, k, sopt)
				if err != nil {
					t.Fatal(err)
				}
				dc, err := stability.DistanceCorrelation(ds.X, ds.D, y, 2, 0, scoreSeed)
				if err != nil {
					t.Fatal(err)
				}
				if dc.Pairs != wantPairs {
					t.Fatalf("distance correlation over %d pairs, want %d", dc.Pairs, wantPairs)
				}
				got := [4]float64{rs.Trustworthiness, rs.Continuity, rs.KNNRecall, rs.DistanceSpearman}
				want := [4]float64{f.Trustworthiness.Value, f.Continuity.Value, f.KNNRecall.Value, dc.Value}
				if got != want || rs.Sampled != f.Trustworthiness.Queries {
					t.Errorf("run %s: table %v (%d queries), one-shot %v (%d)", rs.RunID, got, rs.Sampled, want, f.Trustworthiness.Queries)
				}
			}
			for _, pr := range st.Pairs {
				dc, err := stability.DistanceCorrelation(layouts[pr.RunA], 2, layouts[pr.RunB], 2, 0, scoreSeed)
				if err != nil {
					t.Fatal(err)
				}
				if pr.DistanceSpearman != dc.Value {
					t.Errorf("pair %s-%s: table %v, one-shot %v", pr.RunA, pr.RunB, pr.DistanceSpearman, dc.Value)
				}
			}
		})
	}
}

// An unreadable layout fails scoring with the same error as before
// batching: that of the first run, in plan order, that cannot be scored.
func TestScoreBatchReadError(t *testing.T) {
	ds := iris(t)
	p := smallPlan(t)
	dir := t.TempDir()
	runSweep(t, ds, p, dir, nil)
	runs, _ := p.Runs()
	bad := runs[len(runs)-1]
	if err := os.WriteFile(layoutPath(dir, bad.ID), []byte("not parquet"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := Score(context.Background(), dir, ds, ScoreOptions{K: 10})
	if err == nil || !strings.HasPrefix(err.Error(), "score: run "+bad.ID+": ") {
		t.Errorf("got %v, want the error of run %s", err, bad.ID)
	}
}

type csvInput struct {
	path string
	opt  dataset.Options
	ds   *dataset.Dataset
}

// gaussianCSV writes n points in d dimensions, three seeded Gaussian
// clusters labelled a, b, c, to a CSV file and reads it back.
func gaussianCSV(t *testing.T, n, d int) csvInput {
	t.Helper()
	rng := rand.New(rand.NewPCG(51, 52))
	var b strings.Builder
	b.WriteString("id,label")
	for c := 0; c < d; c++ {
		fmt.Fprintf(&b, ",f%d", c)
	}
	b.WriteString("\n")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "p%d,%c", i, 'a'+i%3)
		for c := 0; c < d; c++ {
			v := rng.NormFloat64()
			if c == i%3 {
				v += 4
			}
			fmt.Fprintf(&b, ",%s", fmt.Sprint(math.Round(v*1e6)/1e6))
		}
		b.WriteString("\n")
	}
	path := filepath.Join(t.TempDir(), "clusters.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	opt := dataset.Options{IDColumn: "id", LabelColumn: "label"}
	ds, err := dataset.Read(path, opt)
	if err != nil {
		t.Fatal(err)
	}
	return csvInput{path, opt, ds}
}
