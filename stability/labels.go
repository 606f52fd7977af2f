package stability

import (
	"fmt"

	"plumb/internal/par"
)

func checkLabels(y []float64, labels []string, k int) (int, error) {
	if err := checkLayout("layout", y); err != nil {
		return 0, err
	}
	n := len(y) / 2
	if len(labels) != n {
		return 0, fmt.Errorf("stability: %d labels for %d points", len(labels), n)
	}
	if k < 1 {
		return 0, fmt.Errorf("stability: k = %d, want k ≥ 1", k)
	}
	if k >= n {
		return 0, fmt.Errorf("%w: k = %d needs at least %d points, have %d", ErrTooFewPoints, k, k+1, n)
	}
	return n, nil
}

// LabelAccuracy returns the leave-one-out k-nearest-neighbour classification
// accuracy in the map: each point's label is predicted by a majority vote
// of its k nearest other points in the layout y (Euclidean, ties in distance
// by smaller index), and the share of correct predictions is returned.
//
// A tie in the vote goes to the tied label whose nearest member is closest
// to the point (the first of them in the distance-sorted neighbour list).
// With two labels and odd k no tie can arise and the result equals
// scikit-learn's leave-one-out KNeighborsClassifier(n_neighbors=k) accuracy.
// Labels are compared as exact strings. Requires 1 ≤ k < N. Cost
// O(N k log N) with a 2-d k-d tree.
func LabelAccuracy(y []float64, labels []string, k int) (float64, error) {
	return labelScore(y, labels, k, 0, false)
}

// LabelAccuracyThreads is LabelAccuracy on up to threads goroutines
// (0 = GOMAXPROCS); the result does not depend on threads.
func LabelAccuracyThreads(y []float64, labels []string, k, threads int) (float64, error) {
	return labelScore(y, labels, k, threads, false)
}

// LabelAgreement returns the share of points whose k nearest map neighbours
// mostly share the point's label: more than k/2 of them (strict majority)
// carry the same label as the point. Neighbours as in LabelAccuracy.
// Requires 1 ≤ k < N.
func LabelAgreement(y []float64, labels []string, k int) (float64, error) {
	return labelScore(y, labels, k, 0, true)
}

// LabelPredictions returns the label LabelAccuracy predicts for each point
// (majority of its k nearest map neighbours, ties to the nearest tied
// label), on up to threads goroutines (0 = GOMAXPROCS).
func LabelPredictions(y []float64, labels []string, k, threads int) ([]string, error) {
	n, err := checkLabels(y, labels, k)
	if err != nil {
		return nil, err
	}
	code, names := encode(labels)
	pred := predict(y, code, len(names), k, threads)
	out := make([]string, n)
	for i, c := range pred {
		out[i] = names[c]
	}
	return out, nil
}

func encode(labels []string) (code []int32, names []string) {
	code = make([]int32, len(labels))
	ids := map[string]int32{}
	for i, l := range labels {
		c, ok := ids[l]
		if !ok {
			c = int32(len(names))
			ids[l] = c
			names = append(names, l)
		}
		code[i] = c
	}
	return code, names
}

// predict returns each point's majority label code among its k map
// neighbours.
func predict(y []float64, code []int32, nLabels, k, threads int) []int32 {
	n := len(code)
	nb := mapNeighbors(y, k, nil, threads)
	pred := make([]int32, n)
	par.Chunks(n, chunk, threads, func(_, lo, hi int) {
		count := make([]int, nLabels)
		for i := lo; i < hi; i++ {
			row := nb[i*k : (i+1)*k]
			for _, j := range row {
				count[code[j]]++
			}
			// Walking the row in distance order and keeping the first label
			// to reach the maximum count breaks ties by nearest member.
			best, bestC := int32(-1), 0
			for _, j := range row {
				if c := count[code[j]]; c > bestC {
					best, bestC = code[j], c
				}
			}
			for _, j := range row {
				count[code[j]] = 0
			}
			pred[i] = best
		}
	})
	return pred
}

func labelScore(y []float64, labels []string, k, threads int, agreement bool) (float64, error) {
	n, err := checkLabels(y, labels, k)
	if err != nil {
		return 0, err
	}
	code, names := encode(labels)
	good := make([]bool, n)
	if !agreement {
		for i, p := range predict(y, code, len(names), k, threads) {
			good[i] = p == code[i]
		}
		return share(good), nil
	}
	nb := mapNeighbors(y, k, nil, threads)
	par.Chunks(n, chunk, threads, func(_, lo, hi int) {
		for i := lo; i < hi; i++ {
			same := 0
			for _, j := range nb[i*k : (i+1)*k] {
				if code[j] == code[i] {
					same++
				}
			}
			good[i] = 2*same > k
		}
	})
	return share(good), nil
}

func share(good []bool) float64 {
	var c int
	for _, g := range good {
		if g {
			c++
		}
	}
	return float64(c) / float64(len(good))
}
