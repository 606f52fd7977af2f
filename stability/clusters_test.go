package stability_test

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"testing"

	"plumb/stability"
)

// blobs returns sizes[c] points per blob, Gaussian (sd 1) around centres
// (10c, 0), from rand.NewPCG(seed, 1).
func blobs(sizes []int, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 1))
	var y []float64
	for c, s := range sizes {
		for i := 0; i < s; i++ {
			y = append(y, 10*float64(c)+rng.NormFloat64(), rng.NormFloat64())
		}
	}
	return y
}

// TestROCAUCMatchesSklearn: ROCAUC equals sklearn.metrics.roc_auc_score
// (scikit-learn 1.2.1, testdata/sklearn_auc/make_reference.py) on a
// handmade vector with ties (28.5/36 = 0.7917 by hand), a heavily tied and
// two continuous cases. Tolerance 1e-12: both compute the same sums of
// ranks in a different order.
func TestROCAUCMatchesSklearn(t *testing.T) {
	raw, err := os.ReadFile("../testdata/sklearn_auc/reference.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Versions map[string]string `json:"versions"`
		Cases    []struct {
			Name     string    `json:"name"`
			Positive []bool    `json:"positive"`
			Score    []float64 `json:"score"`
			AUC      float64   `json:"auc"`
		} `json:"cases"`
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	if ref.Versions["sklearn"] != "1.2.1" || len(ref.Cases) != 4 {
		t.Fatalf("unexpected fixture: versions %v, %d cases", ref.Versions, len(ref.Cases))
	}
	for _, c := range ref.Cases {
		t.Run(c.Name, func(t *testing.T) {
			got, err := stability.ROCAUC(c.Positive, c.Score)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(got-c.AUC) > 1e-12 {
				t.Errorf("got %.15f want %.15f (scikit-learn 1.2.1)", got, c.AUC)
			}
		})
	}
	if _, err := stability.ROCAUC([]bool{true, true}, []float64{1, 2}); err == nil {
		t.Error("one class: got no error")
	}
	if _, err := stability.ROCAUC([]bool{true, false}, []float64{1, math.NaN()}); err == nil {
		t.Error("NaN score: got no error")
	}
}

// TestMapClustersBlobs: three Gaussian blobs 10 standard deviations apart
// are three clusters, numbered by decreasing size; a far lone point is
// noise and is attached to the nearest cluster in Groups (common practice:
// blobs that far apart are separated by any density clustering).
func TestMapClustersBlobs(t *testing.T) {
	y := blobs([]int{100, 300, 200}, 1)
	y = append(y, 5, 40) // lone point above the middle blob
	mc, err := stability.MapClusters(y, stability.MapClusterConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if mc.K != 3 || mc.Sizes[0] < 290 || mc.Sizes[1] < 190 || mc.Sizes[2] < 90 {
		t.Fatalf("got K = %d sizes %v, want 3 clusters of about 300, 200, 100 (tail points may be noise)", mc.K, mc.Sizes)
	}
	want := func(i int) int32 {
		switch {
		case i < 100:
			return 2
		case i < 400:
			return 0
		}
		return 1
	}
	for i := 0; i < 600; i++ {
		if mc.Labels[i] != want(i) && mc.Labels[i] != -1 {
			t.Fatalf("point %d in cluster %d, want %d", i, mc.Labels[i], want(i))
		}
		if mc.Groups[i] != want(i) {
			t.Fatalf("point %d in group %d, want %d", i, mc.Groups[i], want(i))
		}
	}
	if mc.Labels[600] != -1 || mc.Groups[600] < 0 {
		t.Errorf("lone point: label %d group %d, want noise attached to a cluster", mc.Labels[600], mc.Groups[600])
	}
	if mc.Noise < 1 || mc.Noise > 30 {
		t.Errorf("got %d noise points, want the lone point and at most 5 %% (Gaussian tails are sparse)", mc.Noise)
	}
	if mc.MinPoints != stability.DefaultMinPoints || !(mc.Radius > 0) {
		t.Errorf("got MinPoints %d radius %g", mc.MinPoints, mc.Radius)
	}
}

// TestMapClustersDeterministic: the labels do not depend on the thread
// count, and a similarity transform of the layout (which keeps every ratio
// of distances) gives the same clustering; an evenly filled disc, the map
// t-SNE makes of a continuum, is one cluster.
func TestMapClustersDeterministic(t *testing.T) {
	y := blobs([]int{500, 700, 300, 20}, 2)
	ref, err := stability.MapClusters(y, stability.MapClusterConfig{Threads: 1})
	if err != nil {
		t.Fatal(err)
	}
	for _, th := range []int{2, 7} {
		mc, err := stability.MapClusters(y, stability.MapClusterConfig{Threads: th})
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(mc.Labels, ref.Labels) || !slices.Equal(mc.Groups, ref.Groups) {
			t.Fatalf("threads %d: labels differ from one thread", th)
		}
	}
	z := make([]float64, len(y))
	for i := 0; i < len(y); i += 2 {
		z[i], z[i+1] = -4*y[i+1]+3, 4*y[i]-1 // rotation by 90°, scale 4, shift
	}
	mc, err := stability.MapClusters(z, stability.MapClusterConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(mc.Labels, ref.Labels) {
		t.Error("a rotated, scaled, shifted copy clusters differently")
	}
	rng := rand.New(rand.NewPCG(3, 1))
	var disc []float64
	for len(disc) < 4000 {
		if a, b := 2*rng.Float64()-1, 2*rng.Float64()-1; a*a+b*b <= 1 {
			disc = append(disc, a, b)
		}
	}
	one, err := stability.MapClusters(disc, stability.MapClusterConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if one.K != 1 {
		t.Errorf("even disc: got %d clusters, want 1", one.K)
	}
	if _, err := stability.MapClusters(y[:20], stability.MapClusterConfig{}); err == nil {
		t.Error("10 points: got no error")
	}
}

// TestClusterStabilityByHand checks the best-match Jaccard on a small case
// computed by hand (Hennig 2007's definition), with a resampled run: the
// reference has clusters A = {0,1,2,3} and B = {4,5,6,7}; run 1 embeds rows
// 0…6 only and puts {0,1,2} and {3,4,5,6} together; run 2 is the reference.
// On shared rows 0…6, A's best match in run 1 is {0,1,2}: 3/4; B = {4,5,6}
// there, best match {3,4,5,6}: 3/4. Against run 2 both score 1, so the
// means are 0.875 ("highly stable" ≥ 0.85, Hennig, from memory).
func TestClusterStabilityByHand(t *testing.T) {
	runs := []stability.RunClusters{
		{Labels: []int32{0, 0, 0, 0, 1, 1, 1, 1}},
		{Rows: []int32{6, 5, 4, 3, 2, 1, 0}, Labels: []int32{1, 1, 1, 1, 0, 0, 0}},
		{Labels: []int32{1, 1, 1, 1, 0, 0, 0, 0}},
	}
	labels := []string{"a", "a", "b", "a", "c", "c", "c", "c"}
	got, err := stability.ClusterStability(runs, 8, 0, labels)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 2 {
		t.Fatalf("got %d clusters, want 2", len(got))
	}
	for c, r := range got {
		if math.Abs(r.Jaccard-0.875) > 1e-15 || r.Min != 0.75 || r.Runs != 2 || r.Size != 4 || r.Reading != stability.HighlyStable {
			t.Errorf("cluster %d: got %+v, want Jaccard 0.875, min 0.75 over 2 runs, size 4, highly stable", c, r)
		}
	}
	if want := []stability.LabelCount{{"a", 3}, {"b", 1}}; !slices.Equal(got[0].Labels, want) {
		t.Errorf("cluster 0 labels %v, want %v", got[0].Labels, want)
	}
	if _, err := stability.ClusterStability(runs, 8, 3, nil); err == nil {
		t.Error("reference 3 of 3 runs: got no error")
	}
	bad := []stability.RunClusters{{Rows: []int32{0, 0}, Labels: []int32{0, 0}}}
	if _, err := stability.ClusterStability(bad, 8, 0, nil); err == nil {
		t.Error("repeated row: got no error")
	}
	lone, _ := stability.ClusterStability(runs[:1], 8, 0, nil)
	if lone[0].Reading != stability.NotMeasured || !math.IsNaN(lone[0].Jaccard) {
		t.Errorf("one run: got %+v, want not measured", lone[0])
	}
}

// TestReadingOf pins the cut-offs of Hennig (2007), from memory: ≤ 0.5
// dissolved, 0.6–0.75 patterns, ≥ 0.75 stable, ≥ 0.85 highly stable.
func TestReadingOf(t *testing.T) {
	for _, c := range []struct {
		j    float64
		want stability.Reading
	}{{0.2, stability.Dissolved}, {0.5, stability.Dissolved}, {0.55, stability.Doubtful}, {0.6, stability.Pattern},
		{0.74, stability.Pattern}, {0.75, stability.Stable}, {0.85, stability.HighlyStable}, {1, stability.HighlyStable},
		{math.NaN(), stability.NotMeasured}} {
		if got := stability.ReadingOf(c.j); got != c.want {
			t.Errorf("ReadingOf(%g) = %q, want %q", c.j, got, c.want)
		}
	}
}

// TestCoAssignmentByHand: identical runs score 1 everywhere and flag
// nothing; a point that joins the other group in one of three runs scores
// as computed by hand below.
func TestCoAssignmentByHand(t *testing.T) {
	same := stability.RunClusters{Labels: []int32{0, 0, 0, 1, 1, 1}}
	ps, err := stability.CoAssignment([]stability.RunClusters{same, same, same}, 6, 0)
	if err != nil {
		t.Fatal(err)
	}
	for i, s := range ps.Score {
		if s != 1 || ps.Flagged[i] {
			t.Fatalf("identical runs: point %d scores %g (flagged %v), want 1", i, s, ps.Flagged[i])
		}
	}
	// Point 2 moves to group 1 in the third run. Pairs (1,2) and (2,3) of
	// runs: its groups {0,1,2} and {2,3,4,5} share 1 of 6 rows; pair (1,3):
	// 1. Score (1 + 1/6 + 1/6)/3 = 4/9, below 0.75: flagged. Points 0 and 1:
	// {0,1,2} vs {0,1} → 2/3 twice, 1 once: 7/9 (not flagged). Points 3–5:
	// {3,4,5} vs {2,3,4,5} → 3/4 twice, 1 once: 5/6.
	moved := stability.RunClusters{Labels: []int32{0, 0, 1, 1, 1, 1}}
	ps, err = stability.CoAssignment([]stability.RunClusters{same, same, moved}, 6, 0)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{7.0 / 9, 7.0 / 9, 4.0 / 9, 5.0 / 6, 5.0 / 6, 5.0 / 6}
	for i, w := range want {
		if math.Abs(ps.Score[i]-w) > 1e-15 {
			t.Errorf("point %d: got %g want %g", i, ps.Score[i], w)
		}
	}
	if ps.NumFlagged != 1 || !ps.Flagged[2] || ps.Threshold != stability.DefaultCoAssignmentThreshold {
		t.Errorf("got %d flagged (%v) at %g, want only point 2 at 0.75", ps.NumFlagged, ps.Flagged, ps.Threshold)
	}
	// A label −1 (a run without core points) shares no group: row 0 is −1
	// in the second of two runs, so its only pair scores 0.
	lost := stability.RunClusters{Labels: []int32{-1, 0, 0, 1, 1, 1}}
	ps, err = stability.CoAssignment([]stability.RunClusters{same, lost}, 6, 0)
	if err != nil {
		t.Fatal(err)
	}
	if ps.Score[0] != 0 || !ps.Flagged[0] || math.Abs(ps.Score[1]-2.0/3) > 1e-15 {
		t.Errorf("noise row: got scores %v, want 0 for row 0 and 2/3 for row 1", ps.Score)
	}
	// A row embedded by one run only has no score.
	part := stability.RunClusters{Rows: []int32{0, 1, 2, 3, 4}, Labels: []int32{0, 0, 0, 1, 1}}
	ps, err = stability.CoAssignment([]stability.RunClusters{same, part}, 7, 0)
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(ps.Score[5]) || !math.IsNaN(ps.Score[6]) || ps.Measured != 5 {
		t.Errorf("got scores %v measured %d, want NaN for rows 5 and 6", ps.Score, ps.Measured)
	}
}

// TestLabelStabilityByHand: two runs of four points labelled x, x, y, y;
// run 1 groups {0,1} {2,3}, run 2 groups {0,1,2} {3}. The x points' mates:
// in run 1 one x each, in run 2 one x and one y each, so over their four
// (point, run) pairs x has share (1 + 1 + ½ + ½)/4 = 0.75 and y 0.25 (by
// hand); the y shares are worked out beside their check.
func TestLabelStabilityByHand(t *testing.T) {
	runs := []stability.RunClusters{{Labels: []int32{0, 0, 1, 1}}, {Labels: []int32{0, 0, 0, 1}}}
	labels := []string{"x", "x", "y", "y"}
	ps, err := stability.CoAssignment(runs, 4, 0)
	if err != nil {
		t.Fatal(err)
	}
	got, err := stability.LabelStability(runs, 4, labels, ps)
	if err != nil {
		t.Fatal(err)
	}
	// Scores: points 0,1: {0,1} vs {0,1,2} = 2/3; point 2: {2,3} vs
	// {0,1,2} = 1/4; point 3: {2,3} vs {3} = 1/2. All below 0.75.
	if got[0].Label != "x" || got[0].Points != 2 || got[0].Stable != 0 || math.Abs(got[0].MeanScore-2.0/3) > 1e-15 {
		t.Errorf("x: got %+v", got[0])
	}
	if len(got[0].Mixes) != 2 || got[0].Mixes[0] != (stability.LabelShare{Label: "x", Share: 0.75}) || got[0].Mixes[1] != (stability.LabelShare{Label: "y", Share: 0.25}) {
		t.Errorf("x mixes: got %v, want x 0.75, y 0.25", got[0].Mixes)
	}
	// y: point 2 run 1 mate 3 (y), run 2 mates 0, 1 (x, x); point 3 run 1
	// mate 2 (y), run 2 alone (not counted). Shares over 3 pairs: y 2/3, x 1/3.
	if len(got[1].Mixes) != 2 || math.Abs(got[1].Mixes[0].Share-2.0/3) > 1e-15 || got[1].Mixes[0].Label != "y" {
		t.Errorf("y mixes: got %v, want y 2/3, x 1/3", got[1].Mixes)
	}
}
