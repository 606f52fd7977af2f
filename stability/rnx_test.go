package stability

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
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

// rnxReference mirrors testdata/rnx/reference.json, written by
// make_reference.py beside it from the co-ranking matrix (numpy 1.24.2,
// scikit-learn 1.2.1 for the iris PCA layout; versions in the file).
type rnxReference struct {
	Versions map[string]string `json:"versions"`
	Cases    map[string]struct {
		N      int       `json:"n"`
		AUC    float64   `json:"auc"`
		K      []int     `json:"k"`
		QNX    []float64 `json:"qnx"`
		BNX    []float64 `json:"bnx"`
		RNX    []float64 `json:"rnx"`
		X      []float64 `json:"x"`
		Layout []float64 `json:"layout"`
	} `json:"cases"`
}

func TestRNXReference(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "testdata", "rnx", "reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref rnxReference
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	tr, dd := loadReference(t)
	inputs := map[string]struct {
		x []float64
		d int
		y []float64
	}{
		// Raw digits (integers 0..16) and the "pca_noise" layout of
		// testdata/sklearn_trustworthiness.
		"digits_pca_noise": {dd.raw, 64, tr.Layouts["pca_noise"]},
		// Iris × 10, rounded (integers) and its scikit-learn PCA layout,
		// both stored in the fixture.
		"iris_pca": {ref.Cases["iris_pca"].X, 4, ref.Cases["iris_pca"].Layout},
	}
	for name, in := range inputs {
		c := ref.Cases[name]
		t.Run(name, func(t *testing.T) {
			got, err := RNX(in.x, in.d, in.y, RNXOptions{Queries: -1})
			if err != nil {
				t.Fatal(err)
			}
			if got.N != c.N || !got.Exact() {
				t.Fatalf("got N %d exact %v want N %d exact", got.N, got.Exact(), c.N)
			}
			// The co-ranking counts are integers on both sides; 1e-12
			// absorbs the rounding of the divisions and of the AUC's
			// sums (common practice).
			const tol = 1e-12
			var worst float64
			for m, k := range c.K {
				for _, p := range [][2]float64{{got.QNX[k-1], c.QNX[m]}, {got.BNX[k-1], c.BNX[m]}, {got.RNX[k-1], c.RNX[m]}} {
					worst = math.Max(worst, math.Abs(p[0]-p[1]))
				}
			}
			if worst > tol {
				t.Errorf("largest |difference| over Q_NX, B_NX, R_NX at %d K: %.3g, want ≤ %g", len(c.K), worst, tol)
			}
			if d := math.Abs(got.AUC - c.AUC); d > tol {
				t.Errorf("AUC: got %.15f want %.15f (numpy reference)", got.AUC, c.AUC)
			}
			t.Logf("AUC %.12f (reference %.12f), largest curve difference %.3g", got.AUC, c.AUC, worst)
		})
	}
}

// Batches, thread counts and subsamples: RNXBatch equals separate RNX
// calls, bit for bit, whatever the thread count; a point sample ranks
// among the sample only, and is the same sample for every layout.
func TestRNXBatchThreadsAndSamples(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 1))
	n, d := 300, 5
	x := make([]float64, n*d)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	ys := make([][]float64, 3)
	for l := range ys {
		ys[l] = make([]float64, 2*n)
		for i := range ys[l] {
			ys[l][i] = x[(i/2)*d+i%2] + float64(l)*0.3*rng.NormFloat64()
		}
	}
	for _, opt := range []RNXOptions{
		{Queries: -1},
		{Queries: 70, Seed: 5},
		{Points: 120, Queries: 50, Seed: 9},
	} {
		one := RNXOptions{Queries: opt.Queries, Points: opt.Points, Seed: opt.Seed, Threads: 1}
		opt.Threads = 4
		batch, err := RNXBatch(x, d, ys, opt)
		if err != nil {
			t.Fatal(err)
		}
		for l, y := range ys {
			c, err := RNX(x, d, y, one)
			if err != nil {
				t.Fatal(err)
			}
			if c.AUC != batch[l].AUC || c.N != batch[l].N || c.Queries != batch[l].Queries {
				t.Errorf("%+v layout %d: batch AUC %v (N %d, %d queries) single %v (N %d, %d queries)", opt, l, batch[l].AUC, batch[l].N, batch[l].Queries, c.AUC, c.N, c.Queries)
			}
		}
		if opt.Points > 0 {
			// The sampled curve is the exact curve of the sampled points.
			pts := samplePoints(n, opt.Points, opt.Seed, 3)
			xs, ys0 := make([]float64, 0, len(pts)*d), make([]float64, 0, 2*len(pts))
			for _, i := range pts {
				xs = append(xs, x[i*d:(i+1)*d]...)
				ys0 = append(ys0, ys[0][2*i], ys[0][2*i+1])
			}
			_, _, _, auc := naiveCoranking(xs, d, ys0, samplePoints(len(pts), opt.Queries, opt.Seed, 4))
			if math.Abs(batch[0].AUC-auc) > 1e-12 || batch[0].Total != n || batch[0].N != opt.Points {
				t.Errorf("point sample: got AUC %.15g (N %d of %d) want %.15g", batch[0].AUC, batch[0].N, batch[0].Total, auc)
			}
		}
	}
	// A better layout scores higher: less noise, higher AUC.
	c, _ := RNXBatch(x, d, ys, RNXOptions{})
	if !(c[0].AUC > c[1].AUC && c[1].AUC > c[2].AUC) {
		t.Errorf("AUC by noise level 0, 0.3, 0.6: got %.4f %.4f %.4f, want decreasing", c[0].AUC, c[1].AUC, c[2].AUC)
	}
	if _, err := RNX(x[:3*d], d, ys[0][:6], RNXOptions{}); err == nil {
		t.Error("3 points: got no error")
	}
	if _, err := RNX(x, d, ys[0][:10], RNXOptions{}); err == nil {
		t.Error("mismatched sizes: got no error")
	}
}

func BenchmarkRNX(b *testing.B) {
	for _, n := range []int{2000, 5000, 20000} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(1, 2))
			d := 50
			x := make([]float64, n*d)
			for i := range x {
				x[i] = rng.NormFloat64()
			}
			ys := [][]float64{make([]float64, 2*n), make([]float64, 2*n)}
			for _, y := range ys {
				for i := range y {
					y[i] = x[(i/2)*d+i%2] + rng.NormFloat64()
				}
			}
			b.ReportAllocs()
			b.ResetTimer()
			var sink float64
			for it := 0; it < b.N; it++ {
				c, err := RNXBatch(x, d, ys, RNXOptions{Threads: 1})
				if err != nil {
					b.Fatal(err)
				}
				sink += c[0].AUC
			}
			_ = sink
		})
	}
}

// With a sample of query points the AUC is an unbiased estimate of the
// exact one: over 20 samples of 300 of the 1797 digits points, the mean
// lies within 4 standard errors of the numpy reference, and the spread is
// logged (it is what RNXOptions.Queries trades for speed).
func TestRNXSampledQueriesDigits(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "testdata", "rnx", "reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref rnxReference
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	want := ref.Cases["digits_pca_noise"].AUC // numpy, co-ranking matrix
	tr, dd := loadReference(t)
	var v []float64
	for seed := uint64(1); seed <= 20; seed++ {
		c, err := RNX(dd.raw, 64, tr.Layouts["pca_noise"], RNXOptions{Queries: 300, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		if c.Queries != 300 || c.N != 1797 || c.Exact() {
			t.Fatalf("got %d queries of %d points (exact %v), want 300 of 1797", c.Queries, c.N, c.Exact())
		}
		v = append(v, c.AUC)
	}
	var m, ss float64
	for _, a := range v {
		m += a
	}
	m /= float64(len(v))
	for _, a := range v {
		ss += (a - m) * (a - m)
	}
	sd := math.Sqrt(ss / float64(len(v)-1))
	se := sd / math.Sqrt(float64(len(v)))
	t.Logf("300 queries: AUC mean %.5f, sd %.5f over 20 samples; exact %.5f", m, sd, want)
	if math.Abs(m-want) > 4*se {
		t.Errorf("mean of sampled AUCs %.5f is more than 4 standard errors (%.5f) from the exact %.5f", m, se, want)
	}
}

// BenchmarkRNXLayouts shows what one more layout costs once the input
// ranks are shared: n = 20 000 points, 5 000 queries, 1 and 4 layouts.
func BenchmarkRNXLayouts(b *testing.B) {
	n, d := 20000, 50
	rng := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, n*d)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	ys := make([][]float64, 4)
	for l := range ys {
		ys[l] = make([]float64, 2*n)
		for i := range ys[l] {
			ys[l][i] = x[(i/2)*d+i%2] + rng.NormFloat64()
		}
	}
	for _, L := range []int{1, 4} {
		b.Run(fmt.Sprintf("layouts=%d", L), func(b *testing.B) {
			b.ReportAllocs()
			var sink float64
			for it := 0; it < b.N; it++ {
				c, err := RNXBatch(x, d, ys[:L], RNXOptions{Threads: 1})
				if err != nil {
					b.Fatal(err)
				}
				sink += c[0].AUC
			}
			_ = sink
		})
	}
}
