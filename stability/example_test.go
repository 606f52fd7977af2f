package stability_test

import (
	"fmt"
	"math"

	"plumb/align"
	"plumb/stability"
)

// circle returns n points on a circle of radius r, rotated by phase.
func circle(n int, r, phase float64) []float64 {
	y := make([]float64, 0, 2*n)
	for i := 0; i < n; i++ {
		a := 2*math.Pi*float64(i)/float64(n) + phase
		y = append(y, r*math.Cos(a), r*math.Sin(a))
	}
	return y
}

// Points on a line in 3-d, laid out on the same line in the map: every map
// neighbour is an input neighbour. Swapping the two ends of the map line
// makes those points' map neighbours strangers: the penalties are 42 for
// each moved point, 16 for each of its three new neighbours and 1 for point
// 2 (whose tie at map distance 2 goes to point 4, input rank 4), 133 in all,
// so T = 1 − 2·133/(20·3·30) = 0.8522 (by hand).
func ExampleTrustworthiness() {
	n := 20
	x := make([]float64, 0, 3*n)
	y := make([]float64, 0, 2*n)
	for i := 0; i < n; i++ {
		x = append(x, float64(i), 2*float64(i), 0)
		y = append(y, float64(i), 0)
	}
	t, _ := stability.Trustworthiness(x, 3, y, 3)
	fmt.Printf("same order: %.4f\n", t)
	y[0], y[2*(n-1)] = y[2*(n-1)], y[0]
	t, _ = stability.Trustworthiness(x, 3, y, 3)
	c, _ := stability.Continuity(x, 3, y, 3)
	fmt.Printf("ends swapped: trustworthiness %.4f continuity %.4f\n", t, c)
	// Output:
	// same order: 1.0000
	// ends swapped: trustworthiness 0.8522 continuity 0.8522
}

func ExampleLabelAccuracy() {
	// Points 0-2 ("a") sit together with point 5 ("b"); points 3-4 ("b")
	// are far away. By hand: points 0-2 have point 5 nearest and one "a"
	// neighbour, a 1-1 tie that goes to the nearest ("b"): wrong; point 5's
	// two nearest are "a": wrong; points 3 and 4 are right. Only point 3 has
	// both neighbours sharing its label.
	y := []float64{0, 0, 0, 1, 1, 0, 10, 10, 10, 11, 0.5, 0.5}
	labels := []string{"a", "a", "a", "b", "b", "b"}
	acc, _ := stability.LabelAccuracy(y, labels, 2)
	agree, _ := stability.LabelAgreement(y, labels, 2)
	fmt.Printf("accuracy %.4f, agreement %.4f\n", acc, agree)
	// Output: accuracy 0.3333, agreement 0.1667
}

func ExampleNeighborJaccard() {
	a := circle(12, 1, 0)
	b := circle(12, 5, 1) // same circle, larger and turned: same neighbours
	j, _ := stability.NeighborJaccard(a, b, 2)
	fmt.Printf("Jaccard %.4f\n", j)
	// Output: Jaccard 1.0000
}

func ExampleSettingAgreement() {
	runs := [][]float64{circle(10, 1, 0), circle(10, 2, 0.5), circle(10, 1, 1)}
	runs[2][0] += 0.5 // one run moves point 0, which swaps neighbour 1 for 8
	// (by hand: Jaccard 1/3 at point 0, 1 elsewhere, mean 0.9333)
	ag, _ := stability.SettingAgreement(runs, 2, 1)
	for _, p := range ag.Pairs {
		fmt.Printf("runs %d-%d: disparity %.4f Jaccard %.4f\n", p.A, p.B, p.Disparity, p.Jaccard)
	}
	fmt.Printf("median disparity %.4f IQR %.4f\n", ag.Disparity.Median, ag.Disparity.IQR)
	// Output:
	// runs 0-1: disparity 0.0000 Jaccard 1.0000
	// runs 0-2: disparity 0.0186 Jaccard 0.9333
	// runs 1-2: disparity 0.0186 Jaccard 0.9333
	// median disparity 0.0186 IQR 0.0093
}

func ExampleSpread() {
	runs := [][]float64{circle(10, 1, 0), circle(10, 1, 2), circle(10, 1, 4)}
	runs[1][0] += 0.6 // point 0 wanders in one run
	g, _ := align.Generalized(runs, 0, 0)
	ps, _ := stability.Spread(g, 0) // default threshold 0.1
	fmt.Printf("point 0 %.3f, point 5 %.3f, flagged %d\n", ps.Spread[0], ps.Spread[5], ps.NumFlagged)
	// Output: point 0 0.230, point 5 0.011, flagged 1
}

func ExampleQuantile() {
	v := []float64{1, 2, 3, 4}
	fmt.Println(stability.Quantile(v, 0.25), stability.Quantile(v, 0.5), stability.Quantile(v, 0.75))
	// Output: 1.75 2.5 3.25
}

// spiral returns n points on an Archimedean spiral (all pairwise distances
// distinct), scaled by r and rotated by phase.
func spiral(n int, r, phase float64) []float64 {
	y := make([]float64, 0, 2*n)
	for i := 0; i < n; i++ {
		t := 0.5 * float64(i+1)
		y = append(y, r*t*math.Cos(t+phase), r*t*math.Sin(t+phase))
	}
	return y
}

// Trustworthiness, continuity and kNN recall of one layout in one pass, with
// the number of query points used.
func ExampleFaithfulnessAt() {
	// A 3-d helix laid out as its shadow on the plane: points one turn
	// apart land almost on top of each other, so map neighbours are mostly
	// strangers (low T) while input neighbours stay fairly close (higher C).
	// scikit-learn 1.2.1 gives trustworthiness 0.33707 and, roles swapped,
	// 0.91075 for these points (checked once by hand, not a fixture).
	n := 60
	x := make([]float64, 0, 3*n)
	y := make([]float64, 0, 2*n)
	for i := 0; i < n; i++ {
		a := 2 * math.Pi * float64(i) / 20
		x = append(x, math.Cos(a), math.Sin(a), 0.3*float64(i))
		y = append(y, math.Cos(a)+0.001*float64(i), math.Sin(a))
	}
	f, _ := stability.FaithfulnessAt(x, 3, y, 4, stability.Options{})
	fmt.Printf("T %.3f  C %.3f  recall %.3f  over %d of %d points\n",
		f.Trustworthiness.Value, f.Continuity.Value, f.KNNRecall.Value,
		f.Trustworthiness.Queries, f.Trustworthiness.N)
	// Output: T 0.337  C 0.911  recall 0.013  over 60 of 60 points
}

func ExampleDistanceCorrelation() {
	a := spiral(30, 1, 0)
	b := spiral(30, 3, 2) // same shape, scaled and turned: same distance order
	s, _ := stability.DistanceCorrelation(a, 2, b, 2, 0, 1)
	fmt.Printf("Spearman %.4f over %d pairs (all: %v)\n", s.Value, s.Pairs, s.All)
	// Output: Spearman 1.0000 over 435 pairs (all: true)
}

func ExampleSpearman() {
	// Monotone but not linear: rank correlation 1.
	r, _ := stability.Spearman([]float64{1, 2, 3, 4, 5}, []float64{1, 8, 27, 64, 125})
	fmt.Printf("%.4f\n", r)
	// Output: 1.0000
}

// Several layouts of the same input scored together: each query point's
// input distances are computed once for all of them, and every result is
// what FaithfulnessAt gives for that layout alone.
func ExampleFaithfulnessBatch() {
	// The helix of ExampleFaithfulnessAt, laid out as its shadow on the
	// plane and unrolled along its length (which keeps every neighbour).
	n := 60
	x := make([]float64, 0, 3*n)
	shadow := make([]float64, 0, 2*n)
	unrolled := make([]float64, 0, 2*n)
	for i := 0; i < n; i++ {
		a := 2 * math.Pi * float64(i) / 20
		x = append(x, math.Cos(a), math.Sin(a), 0.3*float64(i))
		shadow = append(shadow, math.Cos(a)+0.001*float64(i), math.Sin(a))
		unrolled = append(unrolled, float64(i), 0)
	}
	fs, _ := stability.FaithfulnessBatch(x, 3, [][]float64{shadow, unrolled}, 4, stability.Options{})
	for i, name := range []string{"shadow", "unrolled"} {
		fmt.Printf("%-8s T %.3f  C %.3f  recall %.3f\n", name,
			fs[i].Trustworthiness.Value, fs[i].Continuity.Value, fs[i].KNNRecall.Value)
	}
	// Output:
	// shadow   T 0.337  C 0.911  recall 0.013
	// unrolled T 1.000  C 1.000  recall 1.000
}

// The input side of a distance correlation ranked once and compared with
// several layouts; the results equal DistanceCorrelation's.
func ExampleDistanceRanks() {
	// Four points on a line at 0, 1, 2 and 4: pair distances 1, 2, 4, 1,
	// 3, 2 for (0,1), (0,2), (0,3), (1,2), (1,3), (2,3).
	in, _ := stability.NewDistanceRanks([]float64{0, 1, 2, 4}, 1, 0, 1)
	// Stretched threefold and laid along the y axis: same distance order.
	same, _ := in.Correlation([]float64{0, 0, 0, 3, 0, 6, 0, 12}, 2)
	// Moved to 0, 1, 3, 4: distances 1, 3, 4, 2, 3, 1. By hand, with tied
	// distances sharing their mean rank, the rank correlation is
	// 12.75 / 16.5 = 0.7727.
	moved, _ := in.Correlation([]float64{0, 0, 1, 0, 3, 0, 4, 0}, 2)
	fmt.Printf("stretched %.4f, moved %.4f, over %d pairs (all: %v)\n", same.Value, moved.Value, moved.Pairs, moved.All)
	// Output: stretched 1.0000, moved 0.7727, over 6 pairs (all: true)
}

// Four runs, two in each set: runs 0 and 1 (the baseline) lie close
// together, as do runs 2 and 3, but the two sets lie apart. Pair scores are
// distances between the runs (a dissimilarity). Of the 6 relabelings, the
// observed one and its mirror give the largest shift, so p = 2/6, the
// smallest possible with 2 and 2 runs.
func ExampleCompareSets() {
	pos := []float64{0, 0.1, 1, 1.1}
	n := len(pos)
	score := make([]float64, n*n)
	for i := range pos {
		for j := range pos {
			score[i*n+j] = math.Abs(pos[i] - pos[j])
		}
	}
	res, err := stability.CompareSets(score, []bool{false, false, true, true}, false, 1)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("within %.2f and %.2f, across %.2f, shift %.2f, p = %.3f (smallest %.3f of %d relabelings)\n",
		res.WithinA, res.WithinB, res.Across, res.Shift, res.P, res.PMin, res.Relabelings)
	// Output:
	// within 0.10 and 0.10, across 1.00, shift 0.90, p = 0.333 (smallest 0.333 of 6 relabelings)
}
