package tsne

import "testing"

func TestVPTreeMatchesBruteForce(t *testing.T) {
	// Property: the vantage-point tree search is exact (Yianilos 1993), so
	// it must return exactly the brute-force result, ties included.
	tests := []struct {
		name    string
		x       []float64
		n, d, k int
	}{
		{"uniform", nbtUniform(2500, 4, 11), 2500, 4, 15},
		{"clusters", nbtClusters(2200, 10, 6, 12), 2200, 10, 30},
		{"clusters high-d", nbtClusters(1500, 50, 10, 13), 1500, 50, 90},
		{"duplicates", nbtWithDuplicates(1800, 6, 14), 1800, 6, 30},
		{"integer grid", nbtGrid(2000, 3, 15), 2000, 3, 25},
		{"all identical", make([]float64, 500*3), 500, 3, 20},
		{"tiny", nbtUniform(20, 2, 16), 20, 2, 19},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			brute := nbBruteForce(tc.x, tc.n, tc.d, tc.k, 2)
			nbtCheckSorted(t, brute, tc.x, tc.d)
			vp := nbVPTree(tc.x, tc.n, tc.d, tc.k, 2)
			if err := nbtNeighborsEqual(vp, brute); err != nil {
				t.Fatalf("vp-tree vs brute force: %v", err)
			}
		})
	}
}
