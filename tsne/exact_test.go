package tsne

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
)

// gradTestRandomP returns a random symmetric joint P over all pairs of n
// points (dense, stored as CSR), normalised to sum to one.
func gradTestRandomP(n int, rng *rand.Rand) *Sparse {
	w := make([]float64, n*n)
	s := 0.0
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			v := rng.Float64()
			w[i*n+j], w[j*n+i] = v, v
			s += 2 * v
		}
	}
	for k := range w {
		w[k] /= s
	}
	return gradTestDenseToSparse(w, n, false)
}

// gradTestDenseToSparse stores a dense n×n matrix in CSR form, skipping
// the diagonal and (if dropZero) zero entries.
func gradTestDenseToSparse(w []float64, n int, dropZero bool) *Sparse {
	p := &Sparse{N: n, RowPtr: make([]int, n+1)}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if i == j || (dropZero && w[i*n+j] == 0) {
				continue
			}
			p.Col = append(p.Col, int32(j))
			p.Val = append(p.Val, w[i*n+j])
		}
		p.RowPtr[i+1] = len(p.Col)
	}
	return p
}

// gradTestKNNP returns a sparse symmetric P over each point's k nearest
// neighbours in the layout-independent input x (n×d), with Gaussian weights
// of fixed width, symmetrised and normalised. Enough structure for
// gradient tests; not a perplexity calibration.
func gradTestKNNP(x []float64, n, d, k int) *Sparse {
	w := make([]float64, n*n)
	idx := make([]int, n)
	dist := make([]float64, n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			s := 0.0
			for c := 0; c < d; c++ {
				t := x[i*d+c] - x[j*d+c]
				s += t * t
			}
			dist[j] = s
			idx[j] = j
		}
		dist[i] = math.Inf(1)
		// partial selection sort of the k smallest
		for a := 0; a < k; a++ {
			b := a
			for c := a + 1; c < n; c++ {
				if dist[idx[c]] < dist[idx[b]] {
					b = c
				}
			}
			idx[a], idx[b] = idx[b], idx[a]
			j := idx[a]
			v := math.Exp(-dist[j] / 2)
			w[i*n+j] += v
			w[j*n+i] += v
		}
	}
	s := 0.0
	for _, v := range w {
		s += v
	}
	for k := range w {
		w[k] /= s
	}
	return gradTestDenseToSparse(w, n, true)
}

func gradTestLayout(n int, sd float64, rng *rand.Rand) []float64 {
	y := make([]float64, 2*n)
	for k := range y {
		y[k] = sd * rng.NormFloat64()
	}
	return y
}

// exactObjective is the objective whose gradient the exaggerated t-SNE
// gradient is, computed directly from the definitions (no shared code with
// Exact), for finite differences:
//
//	C_α = Σ αp log(αp) + Σ αp log(1 + d²) + log Z,   Z = Σ_{i≠j} (1 + d²)⁻¹
//
// For α = 1 and Σp = 1 this is KL(P‖Q) = Σ p log(p/q), q = (1 + d²)⁻¹/Z.
func exactObjective(y []float64, p *Sparse, alpha float64) float64 {
	n := p.N
	z := 0.0
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if i != j {
				dx, dy := y[2*i]-y[2*j], y[2*i+1]-y[2*j+1]
				z += 1 / (1 + dx*dx + dy*dy)
			}
		}
	}
	c := 0.0
	for i := 0; i < n; i++ {
		for e := p.RowPtr[i]; e < p.RowPtr[i+1]; e++ {
			j := int(p.Col[e])
			dx, dy := y[2*i]-y[2*j], y[2*i+1]-y[2*j+1]
			ap := alpha * p.Val[e]
			c += ap*math.Log(ap) + ap*math.Log(1+dx*dx+dy*dy)
		}
	}
	return c + math.Log(z)
}

func TestExactGradientFiniteDifferences(t *testing.T) {
	// Source: common practice — the analytic gradient of KL(P‖Q) must match
	// central finite differences of the objective, (C(y+h) − C(y−h)) / 2h.
	// With h = 1e-5 the truncation error is O(h²) ≈ 1e-10 relative; 1e-6 is
	// a tolerance well above rounding noise.
	for _, tc := range []struct {
		name  string
		n     int
		sd    float64
		alpha float64
	}{
		{"n12-sd1", 12, 1, 1},
		{"n25-sd3", 25, 3, 1},
		{"n20-exaggerated", 20, 0.5, 12},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(uint64(tc.n), 7))
			p := gradTestRandomP(tc.n, rng)
			y := gradTestLayout(tc.n, tc.sd, rng)
			g, _ := NewExact(1).Gradient(nil, y, p, tc.alpha)
			const h = 1e-5
			yy := append([]float64(nil), y...)
			num, den := 0.0, 0.0
			for k := range y {
				yy[k] = y[k] + h
				cp := exactObjective(yy, p, tc.alpha)
				yy[k] = y[k] - h
				cm := exactObjective(yy, p, tc.alpha)
				yy[k] = y[k]
				fd := (cp - cm) / (2 * h)
				num += (fd - g[k]) * (fd - g[k])
				den += fd * fd
			}
			if rel := math.Sqrt(num / den); !(rel < 1e-6) {
				t.Errorf("relative difference from finite differences: got %.3g, want < 1e-6", rel)
			}
		})
	}
}

type klFixture struct {
	Versions map[string]string
	N        int
	P        []float64
	Y        []float64
	KL       float64
	Grad     []float64
}

func readKLFixture(t *testing.T) klFixture {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "testdata", "sklearn_engine", "kl_gradient.json"))
	if err != nil {
		t.Fatal(err)
	}
	var f klFixture
	if err := json.Unmarshal(b, &f); err != nil {
		t.Fatal(err)
	}
	if len(f.P) != f.N*f.N || len(f.Y) != 2*f.N || len(f.Grad) != 2*f.N {
		t.Fatalf("fixture shapes: n=%d len(P)=%d len(Y)=%d len(grad)=%d", f.N, len(f.P), len(f.Y), len(f.Grad))
	}
	return f
}

func TestExactAgainstScikitLearn(t *testing.T) {
	// Source: scikit-learn 1.2.1 sklearn.manifold._t_sne._kl_divergence
	// (exact method, degrees_of_freedom 1) on a fixed (P, Y) pair,
	// testdata/sklearn_engine/kl_gradient.json made by make_fixtures.py.
	// scikit-learn floors q at machine epsilon; for this layout no q is that
	// small, so agreement to 1e-10 relative is expected from rounding alone.
	f := readKLFixture(t)
	p := gradTestDenseToSparse(f.P, f.N, false)
	g, z := NewExact(2).Gradient(nil, f.Y, p, 1)
	for _, tc := range []struct {
		name string
		kl   float64
	}{
		{"KL", KL(f.Y, p, z)},
		{"ExactKL", ExactKL(f.Y, p, 1)},
	} {
		if d := math.Abs(tc.kl-f.KL) / f.KL; !(d < 1e-10) {
			t.Errorf("%s: got %.15g want %.15g (scikit-learn), relative difference %.3g", tc.name, tc.kl, f.KL, d)
		}
	}
	for k := range g {
		if d := math.Abs(g[k] - f.Grad[k]); !(d < 1e-10*(1+math.Abs(f.Grad[k]))) {
			t.Errorf("grad[%d]: got %.15g want %.15g (scikit-learn)", k, g[k], f.Grad[k])
		}
	}
}

func TestGradientDestinationMismatchPanics(t *testing.T) {
	// Source: house style — a wrong-length destination panics with this text.
	p := gradTestRandomP(5, rand.New(rand.NewPCG(1, 1)))
	y := make([]float64, 10)
	for _, g := range []Gradient{NewExact(1), NewBarnesHut(0.5, 1)} {
		func() {
			defer func() {
				if r := recover(); r != "tsne: destination length mismatch" {
					t.Errorf("%T: got panic %v, want destination length mismatch", g, r)
				}
			}()
			g.Gradient(make([]float64, 3), y, p, 1)
		}()
	}
}
