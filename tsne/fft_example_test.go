package tsne_test

import (
	"fmt"

	"plumb/tsne"
)

// Four points on the corners of the unit square, every pair with p = 1/12.
// Each point has two neighbours at distance 1 and one at √2, so
// Z = 4·(2·½ + ⅓) = 16/3 ≈ 5.3333, and for point 0 (plain arithmetic):
//
//	attraction Σ p_0j w_0j (y_0 − y_j) = −(1/24 + 1/36) = −0.069444 per axis
//	repulsion  Σ w_0j² (y_0 − y_j) / Z = −(1/4 + 1/9)·3/16 = −0.067708 per axis
//	gradient   4·(−0.069444 + 0.067708) = −0.0069 per axis
func ExampleNewFFT() {
	y := []float64{0, 0, 1, 0, 0, 1, 1, 1}
	p := &tsne.Sparse{N: 4, RowPtr: []int{0, 3, 6, 9, 12}}
	for i := 0; i < 4; i++ {
		for j := 0; j < 4; j++ {
			if i != j {
				p.Col = append(p.Col, int32(j))
				p.Val = append(p.Val, 1.0/12)
			}
		}
	}
	grad, z := tsne.NewFFT(1).Gradient(nil, y, p, 1)
	fmt.Printf("Z = %.4f\n", z)
	fmt.Printf("gradient of point 0: (%.4f, %.4f)\n", grad[0], grad[1])
	// Output:
	// Z = 5.3333
	// gradient of point 0: (-0.0069, -0.0069)
}

// Below ApproxMinN points the exact search answers; the result has the same
// form either way: rows by ascending distance, self excluded.
func ExampleApproxNeighbors() {
	x := []float64{0, 1, 3, 7, 15} // five points on a line (d = 1)
	nb, err := tsne.ApproxNeighbors(x, 5, 1, 2, 1, 1)
	if err != nil {
		fmt.Println(err)
		return
	}
	for i := 0; i < nb.N; i++ {
		fmt.Println(i, nb.Index[2*i:2*i+2], nb.Dist[2*i:2*i+2])
	}
	// Output:
	// 0 [1 2] [1 3]
	// 1 [0 2] [1 2]
	// 2 [1 0] [2 3]
	// 3 [2 1] [4 6]
	// 4 [3 2] [8 12]
}
