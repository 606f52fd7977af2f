package stability_test

import (
	"fmt"

	"plumb/align"
	"plumb/stability"
)

// Points on a line in 3-d: laid out on a line in the same order, every
// neighbourhood at every scale is kept (R_NX = 1 at every K); with the two
// halves of the map line swapped, the large scales are broken. By hand
// for K = 1: the nearest neighbour (ties to the smaller index) is kept by
// 38 of the 40 points (points 39 and 20 lose theirs at the cut), so
// Q_NX(1) = 0.95 and R_NX(1) = (39·0.95 − 1)/38 = 0.949.
func ExampleRNX() {
	n := 40
	x := make([]float64, 0, 3*n)
	same := make([]float64, 0, 2*n)
	swapped := make([]float64, 0, 2*n)
	for i := 0; i < n; i++ {
		x = append(x, float64(i), 2*float64(i), 0)
		same = append(same, float64(i), 0)
		swapped = append(swapped, float64((i+n/2)%n), 0)
	}
	for _, y := range [][]float64{same, swapped} {
		c, _ := stability.RNX(x, 3, y, stability.RNXOptions{})
		fmt.Printf("R_NX(1) %.3f  R_NX(10) %.3f  R_NX(30) %.3f  AUC %.3f  exact %v\n", c.RNX[0], c.RNX[9], c.RNX[29], c.AUC, c.Exact())
	}
	// Output:
	// R_NX(1) 1.000  R_NX(10) 1.000  R_NX(30) 1.000  AUC 1.000  exact true
	// R_NX(1) 0.949  R_NX(10) 0.798  R_NX(30) -0.300  AUC 0.732  exact true
}

// RNXBatch scores the runs of a study against the input once.
func ExampleRNXBatch() {
	n := 30
	x := make([]float64, 0, 2*n)
	for i := 0; i < n; i++ {
		x = append(x, float64(i%6), float64(i/6))
	}
	flipped := make([]float64, len(x))
	for i := 0; i < n; i++ {
		flipped[2*i], flipped[2*i+1] = x[2*i+1], x[2*i] // a reflection keeps every rank
	}
	cs, _ := stability.RNXBatch(x, 2, [][]float64{x, flipped}, stability.RNXOptions{})
	fmt.Printf("%.3f %.3f\n", cs[0].AUC, cs[1].AUC)
	// Output:
	// 1.000 1.000
}

// Five runs: seeds 1–3 give one map, seeds 4–5 another (disparity 0.0002
// within, 0.19 across, as in issue #13).
func ExampleArrange() {
	d := [][]float64{
		{0, 0.0002, 0.0002, 0.19, 0.19},
		{0.0002, 0, 0.0002, 0.19, 0.19},
		{0.0002, 0.0002, 0, 0.19, 0.19},
		{0.19, 0.19, 0.19, 0, 0.0002},
		{0.19, 0.19, 0.19, 0.0002, 0},
	}
	ar, _ := stability.Arrange(d, 0)
	fmt.Println("groups:", ar.Groups, "sizes:", ar.Sizes, "bimodal:", ar.Bimodal)
	fmt.Printf("silhouette %.3f, gap %.1f\n", ar.Silhouette, ar.Gap)
	m, _ := stability.Medoid(d)
	ok, why, _ := stability.ConsensusAgrees(d, true, 0)
	fmt.Println("medoid run:", m, "consensus shown:", ok, "-", why)
	// Output:
	// groups: [[0 1 2] [3 4]] sizes: [3 2] bimodal: true
	// silhouette 0.968, gap 30.8
	// medoid run: 0 consensus shown: false - the runs fall into 2 distinct arrangements
}

func ExampleMedoid() {
	// Three runs on a line: the middle one is nearest the others.
	m, _ := stability.Medoid([][]float64{{0, 0.01, 0.04}, {0.01, 0, 0.01}, {0.04, 0.01, 0}})
	fmt.Println(m)
	// Output:
	// 1
}

func ExampleConsensusAgrees() {
	close := [][]float64{{0, 0.01, 0.012}, {0.01, 0, 0.008}, {0.012, 0.008, 0}}
	ok, _, _ := stability.ConsensusAgrees(close, true, 0)
	fmt.Println(ok)
	ok, why, _ := stability.ConsensusAgrees(close, false, 0) // pca starts: identical by construction
	fmt.Println(ok, why)
	// Output:
	// true
	// false nothing varied between the runs
}

func ExampleDisparityMatrix() {
	a := []float64{0, 0, 1, 0, 0, 1, 1, 1}
	b := []float64{0, 0, 1, 0, 0, 1, 1, 1.2}
	c := []float64{0, 0, 1, 0.1, 0, 1, 1, 1}
	ag, _ := stability.SettingAgreement([][]float64{a, b, c}, 1, 1)
	m, _ := stability.DisparityMatrix(ag, 3)
	d, _ := align.Disparity(b, c)
	fmt.Printf("%.4f %.4f\n", m[1][2], d)
	// Output:
	// 0.0163 0.0163
}

func ExampleMissProbability() {
	for _, s := range []int{3, 5, 11} {
		fmt.Printf("%d seeds miss a 1-in-4 arrangement with probability %.3f\n", s, stability.MissProbability(0.25, s))
	}
	// Output:
	// 3 seeds miss a 1-in-4 arrangement with probability 0.422
	// 5 seeds miss a 1-in-4 arrangement with probability 0.237
	// 11 seeds miss a 1-in-4 arrangement with probability 0.042
}

func ExampleSeedsNeeded() {
	fmt.Println(stability.SeedsNeeded(0.25, 0.05), stability.SeedsNeeded(0.5, 0.05), stability.SeedsNeeded(0.1, 0.05))
	// Output:
	// 11 5 29
}

func ExampleSeedWarning() {
	fmt.Println(stability.SeedWarning(3))
	fmt.Printf("%q\n", stability.SeedWarning(12))
	// Output:
	// only 3 seeds: an arrangement that one run in 4 falls into is missed with probability 42%; 11 seeds bring that under 5%
	// ""
}
