package stability

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"
)

// naiveCoranking computes Q_NX, B_NX, R_NX and the AUC straight from the
// published definition (Lee & Verleysen 2009; Lee et al. 2015): full rank
// matrices by sorting, the co-ranking matrix, and block sums. O(N³); for
// small N only.
func naiveCoranking(x []float64, d int, y []float64, queries []int) (q, b, r []float64, auc float64) {
	n := len(y) / 2
	rank := func(dist func(i, j int) float64, i int) []int {
		idx := make([]int, 0, n-1)
		for j := 0; j < n; j++ {
			if j != i {
				idx = append(idx, j)
			}
		}
		sort.SliceStable(idx, func(a, b int) bool { return dist(i, idx[a]) < dist(i, idx[b]) })
		rk := make([]int, n)
		for p, j := range idx {
			rk[j] = p + 1
		}
		return rk
	}
	dx := func(i, j int) float64 {
		var s float64
		for c := 0; c < d; c++ {
			t := x[i*d+c] - x[j*d+c]
			s += t * t
		}
		return s
	}
	dy := func(i, j int) float64 { return sqDist(y[2*j], y[2*j+1], y[2*i], y[2*i+1]) }
	co := make([][]float64, n)
	for k := range co {
		co[k] = make([]float64, n)
	}
	if queries == nil {
		for i := 0; i < n; i++ {
			queries = append(queries, i)
		}
	}
	for _, i := range queries {
		ri, rm := rank(dx, i), rank(dy, i)
		for j := 0; j < n; j++ {
			if j != i {
				co[ri[j]][rm[j]]++
			}
		}
	}
	nq := float64(len(queries))
	var harm float64
	for K := 1; K <= n-2; K++ {
		var s, sg float64
		for k := 1; k <= K; k++ {
			for l := 1; l <= K; l++ {
				s += co[k][l]
				if k > l {
					sg += co[k][l]
				} else if k < l {
					sg -= co[k][l]
				}
			}
		}
		qk := s / (float64(K) * nq)
		q = append(q, qk)
		b = append(b, sg/(float64(K)*nq))
		rk := (float64(n-1)*qk - float64(K)) / float64(n-1-K)
		r = append(r, rk)
		auc += rk / float64(K)
		harm += 1 / float64(K)
	}
	return q, b, r, auc / harm
}

func TestRNXMatchesDefinition(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	for _, tc := range []struct {
		name    string
		n, d    int
		ties    bool
		queries int
	}{
		{"continuous", 40, 3, false, -1},
		{"tied integer input and map", 50, 2, true, -1},
		{"sampled queries", 60, 4, false, 17},
	} {
		t.Run(tc.name, func(t *testing.T) {
			x := make([]float64, tc.n*tc.d)
			y := make([]float64, 2*tc.n)
			for i := range x {
				x[i] = rng.NormFloat64()
				if tc.ties {
					x[i] = float64(rng.IntN(3))
				}
			}
			for i := range y {
				y[i] = x[i%len(x)] + 0.5*rng.NormFloat64()
				if tc.ties {
					y[i] = float64(rng.IntN(4))
				}
			}
			opt := RNXOptions{Queries: tc.queries, Seed: 3, Threads: 2}
			c, err := RNX(x, tc.d, y, opt)
			if err != nil {
				t.Fatal(err)
			}
			qs := samplePoints(tc.n, tc.queries, 3, 4)
			q, b, r, auc := naiveCoranking(x, tc.d, y, qs)
			// Both sides count the same integers; 1e-12 absorbs the
			// rounding of the final divisions (common practice).
			for k := range q {
				if math.Abs(c.QNX[k]-q[k]) > 1e-12 || math.Abs(c.BNX[k]-b[k]) > 1e-12 || math.Abs(c.RNX[k]-r[k]) > 1e-12 {
					t.Fatalf("K=%d: got Q %g B %g R %g want %g %g %g", k+1, c.QNX[k], c.BNX[k], c.RNX[k], q[k], b[k], r[k])
				}
			}
			if math.Abs(c.AUC-auc) > 1e-12 {
				t.Errorf("AUC: got %.15g want %.15g", c.AUC, auc)
			}
		})
	}
}
