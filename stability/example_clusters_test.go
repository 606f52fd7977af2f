package stability_test

import (
	"fmt"

	"plumb/stability"
)

// Two square grids of 10×10 points, 1 apart, side by side with a gap of
// 10, and one point far above: two clusters of 100 and one noise point,
// which Groups attaches to the nearer grid.
func ExampleMapClusters() {
	var y []float64
	for _, x0 := range []float64{0, 20} {
		for i := 0; i < 10; i++ {
			for j := 0; j < 10; j++ {
				y = append(y, x0+float64(i), float64(j))
			}
		}
	}
	y = append(y, 25, 60)
	mc, err := stability.MapClusters(y, stability.MapClusterConfig{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("clusters", mc.K, "sizes", mc.Sizes, "noise", mc.Noise)
	fmt.Println("far point: label", mc.Labels[200], "group", mc.Groups[200])
	// Output:
	// clusters 2 sizes [100 100] noise 1
	// far point: label -1 group 1
}

// Three runs of six points; the third run embedded rows 0–4 only and put
// row 2 with rows 3 and 4. Cluster 0 of the reference {0,1,2} matches
// {0,1,2} in run 1 (Jaccard 1) and {0,1} in run 2 (2/3): mean 0.83.
func ExampleClusterStability() {
	runs := []stability.RunClusters{
		{Labels: []int32{0, 0, 0, 1, 1, 1}},
		{Labels: []int32{1, 1, 1, 0, 0, 0}},
		{Rows: []int32{0, 1, 2, 3, 4}, Labels: []int32{0, 0, 1, 1, 1}},
	}
	labels := []string{"ant", "ant", "bee", "bee", "bee", "bee"}
	cr, err := stability.ClusterStability(runs, 6, 0, labels)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range cr {
		fmt.Printf("cluster %d: %d points, Jaccard %.2f (min %.2f over %d runs), %s, labels %v\n",
			r.Cluster, r.Size, r.Jaccard, r.Min, r.Runs, r.Reading, r.Labels)
	}
	// Output:
	// cluster 0: 3 points, Jaccard 0.83 (min 0.67 over 2 runs), stable, labels [{ant 2} {bee 1}]
	// cluster 1: 3 points, Jaccard 0.83 (min 0.67 over 2 runs), stable, labels [{bee 3}]
}

// Point 2 sits with rows 0 and 1 in two runs and with rows 3–5 in the
// third: its score is (1 + 1/6 + 1/6)/3 = 0.44 and it is flagged.
func ExampleCoAssignment() {
	same := stability.RunClusters{Labels: []int32{0, 0, 0, 1, 1, 1}}
	moved := stability.RunClusters{Labels: []int32{0, 0, 1, 1, 1, 1}}
	ps, err := stability.CoAssignment([]stability.RunClusters{same, same, moved}, 6, 0)
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, s := range ps.Score {
		fmt.Printf("row %d: %.2f flagged %v\n", i, s, ps.Flagged[i])
	}
	fmt.Println("flagged", ps.NumFlagged, "of", ps.Measured, "below", ps.Threshold)
	// Output:
	// row 0: 0.78 flagged false
	// row 1: 0.78 flagged false
	// row 2: 0.44 flagged true
	// row 3: 0.83 flagged false
	// row 4: 0.83 flagged false
	// row 5: 0.83 flagged false
	// flagged 1 of 6 below 0.75
}

// The bee at row 2 joins the wasps in one run of three: the bees' stable
// share is 2/3; over the 9 (point, run) pairs of each label, 8/9 of the
// group-mates share the label and 1/9 carry the other (by hand).
func ExampleLabelStability() {
	same := stability.RunClusters{Labels: []int32{0, 0, 0, 1, 1, 1}}
	moved := stability.RunClusters{Labels: []int32{0, 0, 1, 1, 1, 1}}
	runs := []stability.RunClusters{same, same, moved}
	labels := []string{"bee", "bee", "bee", "wasp", "wasp", "wasp"}
	ps, err := stability.CoAssignment(runs, 6, 0)
	if err != nil {
		fmt.Println(err)
		return
	}
	lr, err := stability.LabelStability(runs, 6, labels, ps)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range lr {
		fmt.Printf("%s: %d points, stable %.2f, mean score %.2f, mixes", r.Label, r.Points, r.Stable, r.MeanScore)
		for _, m := range r.Mixes {
			fmt.Printf(" %s %.2f", m.Label, m.Share)
		}
		fmt.Println()
	}
	// Output:
	// bee: 3 points, stable 0.67, mean score 0.67, mixes bee 0.89 wasp 0.11
	// wasp: 3 points, stable 1.00, mean score 0.83, mixes wasp 0.89 bee 0.11
}

// Four positives and four negatives; one positive ties a negative: 15.5 of
// 16 pairs are ordered right (Hanley & McNeil 1982, ties count ½).
func ExampleROCAUC() {
	positive := []bool{true, true, true, true, false, false, false, false}
	score := []float64{0.9, 0.8, 0.7, 0.4, 0.4, 0.3, 0.2, 0.1}
	auc, err := stability.ROCAUC(positive, score)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("AUC %.4f\n", auc)
	// Output:
	// AUC 0.9688
}

func ExampleReadingOf() {
	for _, j := range []float64{0.45, 0.55, 0.7, 0.8, 0.9} {
		fmt.Printf("%.2f %s\n", j, stability.ReadingOf(j))
	}
	// Output:
	// 0.45 dissolved
	// 0.55 doubtful
	// 0.70 pattern
	// 0.80 stable
	// 0.90 highly stable
}
