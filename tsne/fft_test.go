package tsne

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
)

// fftRefGradient is the O(N²) gradient of the Gradient interface written
// straight from van der Maaten & Hinton (2008), eq. 5, with the constant 4:
//
//	∂C/∂y_i = 4 Σ_j (α p_ij − q_ij) (1 + ‖y_i − y_j‖²)⁻¹ (y_i − y_j)
func fftRefGradient(y []float64, p *Sparse, exag float64) ([]float64, float64) {
	n := len(y) / 2
	g := make([]float64, 2*n)
	var z float64
	rep := make([]float64, 2*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			if i == j {
				continue
			}
			dx, dy := y[2*i]-y[2*j], y[2*i+1]-y[2*j+1]
			w := 1 / (1 + dx*dx + dy*dy)
			z += w
			rep[2*i] += w * w * dx
			rep[2*i+1] += w * w * dy
		}
	}
	for i := 0; i < n; i++ {
		var ax, ay float64
		for e := p.RowPtr[i]; e < p.RowPtr[i+1]; e++ {
			j := int(p.Col[e])
			dx, dy := y[2*i]-y[2*j], y[2*i+1]-y[2*j+1]
			w := 1 / (1 + dx*dx + dy*dy)
			ax += p.Val[e] * w * dx
			ay += p.Val[e] * w * dy
		}
		g[2*i] = 4 * (exag*ax - rep[2*i]/z)
		g[2*i+1] = 4 * (exag*ay - rep[2*i+1]/z)
	}
	return g, z
}

// fftTestP builds a seeded symmetric sparse P with k random partners per
// point drawn from the point's nearest layout neighbours' vicinity (index
// neighbours after sorting by cluster), summing to one.
func fftTestP(n, k int, seed uint64) *Sparse {
	r := rand.New(rand.NewPCG(seed, 7))
	w := make([]map[int32]float64, n)
	for i := range w {
		w[i] = map[int32]float64{}
	}
	for i := 0; i < n; i++ {
		for c := 0; c < k; c++ {
			j := (i + 1 + r.IntN(40)) % n
			v := r.Float64()
			w[i][int32(j)] += v
			w[j][int32(i)] += v
		}
	}
	p := &Sparse{N: n, RowPtr: make([]int, n+1)}
	var sum float64
	for i := 0; i < n; i++ {
		cols := make([]int32, 0, len(w[i]))
		for j := range w[i] {
			cols = append(cols, j)
		}
		for a := 1; a < len(cols); a++ { // insertion sort: ascending columns
			for b := a; b > 0 && cols[b] < cols[b-1]; b-- {
				cols[b], cols[b-1] = cols[b-1], cols[b]
			}
		}
		for _, j := range cols {
			p.Col = append(p.Col, j)
			p.Val = append(p.Val, w[i][j])
			sum += w[i][j]
		}
		p.RowPtr[i+1] = len(p.Col)
	}
	for e := range p.Val {
		p.Val[e] /= sum
	}
	return p
}

// fftTestLayout returns a seeded layout: "uniform" fills a square of
// half-width spread; "clusters" puts ten Gaussian blobs (sd spread/15) at
// random centres within ±spread, as in a converged t-SNE map.
func fftTestLayout(kind string, n int, spread float64, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 11))
	y := make([]float64, 2*n)
	switch kind {
	case "uniform":
		for i := range y {
			y[i] = spread * (2*r.Float64() - 1)
		}
	case "clusters":
		var cx, cy [10]float64
		for c := range cx {
			cx[c] = spread * (2*r.Float64() - 1) * 0.85
			cy[c] = spread * (2*r.Float64() - 1) * 0.85
		}
		for i := 0; i < n; i++ {
			c := i * 10 / n
			y[2*i] = cx[c] + r.NormFloat64()*spread/15
			y[2*i+1] = cy[c] + r.NormFloat64()*spread/15
		}
	}
	return y
}

func fftRelRMS(got, want []float64) float64 {
	var num, den float64
	for i := range got {
		d := got[i] - want[i]
		num += d * d
		den += want[i] * want[i]
	}
	return math.Sqrt(num / den)
}

func TestFFTAgainstExact(t *testing.T) {
	const n = 2000
	p := fftTestP(n, 10, 3)
	for _, tc := range []struct {
		name    string
		kind    string
		spread  float64
		exag    float64
		perUnit float64 // 0: default (one interval per unit)
		maxRMS  float64
		maxZ    float64
	}{
		// Converged-map extents at the defaults (4 nodes, 1.25 intervals
		// per unit): the engine issue's bounds, relative RMS gradient error
		// ≤ 5e-3 (at least as accurate as Barnes-Hut at DefaultTheta, whose
		// repulsion error on converged digits maps is 4.1e-4–4.1e-3,
		// testdata/sklearn_bh) and Z within 1e-4.
		{"uniform ±30", "uniform", 30, 1, 0, 5e-3, 1e-4},
		{"clusters ±30", "clusters", 30, 1, 0, 5e-3, 1e-4},
		// Four intervals per unit: the Lagrange remainder falls as h³
		// (numerical analysis fact), and the error meets the 1e-3 of
		// Linderman et al. (2019); common practice to check against the
		// exact sum.
		// Z within 1e-4 relative: tolerance of the team's issue 3 (common
		// practice).
		{"uniform ±30, 4 per unit", "uniform", 30, 1, 4, 1e-3, 1e-4},
		{"clusters ±30, 4 per unit", "clusters", 30, 1, 4, 1e-3, 1e-4},
		// Early-phase (exaggerated, compact) layouts: the floor of 50
		// intervals makes h ≤ 0.2, and 1e-3 holds at the defaults.
		{"clusters ±5 exaggerated", "clusters", 5, 12, 0, 1e-3, 1e-4},
		{"uniform ±8 exaggerated", "uniform", 8, 12, 0, 1e-3, 1e-4},
		{"compact 1e-4 (PCA init scale)", "uniform", 1e-4, 12, 0, 1e-3, 1e-4},
	} {
		t.Run(tc.name, func(t *testing.T) {
			y := fftTestLayout(tc.kind, n, tc.spread, 5)
			want, wantZ := fftRefGradient(y, p, tc.exag)
			g := NewFFT(2)
			g.IntervalsPerUnit = tc.perUnit
			got, gotZ := g.Gradient(nil, y, p, tc.exag)
			e := fftRelRMS(got, want)
			ez := math.Abs(gotZ-wantZ) / wantZ
			t.Logf("%d intervals: rel RMS %.3g, Z rel err %.3g", g.s.nb, e, ez)
			if e > tc.maxRMS {
				t.Errorf("gradient relative RMS error %.3g, want < %g", e, tc.maxRMS)
			}
			if ez > tc.maxZ {
				t.Errorf("Z = %.10g, want %.10g (rel err %.3g > %g)", gotZ, wantZ, ez, tc.maxZ)
			}
		})
	}
}

// TestFFTConvergence checks that halving the interval width cuts the error
// by about 2^p for p Lagrange nodes per interval, as the remainder of
// interpolation by a polynomial of degree p − 1 predicts (numerical
// analysis fact; allow a factor 0.6 to 1.5 around 2^p).
func TestFFTConvergence(t *testing.T) {
	const n = 1500
	p := fftTestP(n, 10, 4)
	y := fftTestLayout("uniform", n, 50, 6)
	want, _ := fftRefGradient(y, p, 1)
	for _, nodes := range []int{3, 4} {
		var prev float64
		for _, pu := range []float64{1, 2} {
			g := NewFFT(1)
			g.IntervalsPerUnit, g.Nodes = pu, nodes
			got, _ := g.Gradient(nil, y, p, 1)
			e := fftRelRMS(got, want)
			if prev > 0 {
				w := math.Exp2(float64(nodes))
				if r := prev / e; r < 0.6*w || r > 1.5*w {
					t.Errorf("%d nodes: error ratio for halved h = %.3g, want about %g", nodes, r, w)
				}
			}
			prev = e
		}
	}
}

// TestFFTDeterministic checks bit-identical results for 1, 2 and 3 threads
// (team rule: results must not depend on the thread count).
func TestFFTDeterministic(t *testing.T) {
	const n = 9000
	p := fftTestP(n, 5, 8)
	y := fftTestLayout("clusters", n, 20, 9)
	ref, refZ := NewFFT(1).Gradient(nil, y, p, 12)
	for _, th := range []int{2, 3} {
		got, z := NewFFT(th).Gradient(nil, y, p, 12)
		if z != refZ {
			t.Errorf("threads=%d: Z = %v, want %v", th, z, refZ)
		}
		for i := range got {
			if got[i] != ref[i] {
				t.Fatalf("threads=%d: grad[%d] = %v, want %v", th, i, got[i], ref[i])
			}
		}
	}
}

// TestFFTAllocs checks that repeated evaluations allocate nothing (house
// style: an optimiser iteration allocates nothing).
func TestFFTAllocs(t *testing.T) {
	const n = 5000
	p := fftTestP(n, 5, 8)
	y := fftTestLayout("clusters", n, 20, 9)
	g := NewFFT(2)
	dst, _ := g.Gradient(nil, y, p, 1)
	if a := testing.AllocsPerRun(5, func() { g.Gradient(dst, y, p, 1) }); a != 0 {
		t.Errorf("allocs per call = %v, want 0", a)
	}
}

func TestFFTDestinationMismatch(t *testing.T) {
	defer func() {
		if r := recover(); r != "tsne: destination length mismatch" {
			t.Errorf("panic = %v, want destination length mismatch", r)
		}
	}()
	p := fftTestP(10, 2, 1)
	NewFFT(1).Gradient(make([]float64, 3), make([]float64, 20), p, 1)
}

func BenchmarkFFTGradient(b *testing.B) {
	for _, n := range []int{10000, 100000} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			p := fftTestP(n, 45, 3)
			y := fftTestLayout("clusters", n, 40, 5)
			g := NewFFT(0)
			dst, _ := g.Gradient(nil, y, p, 1)
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				dst, fftSink = g.Gradient(dst, y, p, 1)
			}
		})
	}
}

var fftSink float64

// TestFFTDefaultAccuracy: at its default grid the FFT repulsion is at
// least as accurate as the engine issue asks (relative RMS error ≤ 5e-3,
// Z within 1e-4) on the three digits layouts of testdata/sklearn_bh (a
// converged scikit-learn map, a uniform square ±30, the converged map ×
// 0.05), against the exact sum. Barnes-Hut at DefaultTheta measures
// 4.1e-4–4.1e-3 on the same layouts (TestDefaultThetaAccuracy). The
// repulsion is isolated by an empty P, as in the fixture's script.
func TestFFTDefaultAccuracy(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "testdata", "sklearn_bh", "repulsion.json"))
	if err != nil {
		t.Fatal(err)
	}
	var fx struct {
		N       int `json:"n"`
		Layouts []struct {
			Name string    `json:"name"`
			Y    []float64 `json:"y"`
		} `json:"layouts"`
	}
	if err := json.Unmarshal(b, &fx); err != nil {
		t.Fatal(err)
	}
	if len(fx.Layouts) != 3 {
		t.Fatalf("%d layouts in the fixture, want 3", len(fx.Layouts))
	}
	p := &Sparse{N: fx.N, RowPtr: make([]int, fx.N+1)} // no attraction
	for _, l := range fx.Layouts {
		want, wantZ := NewExact(0).Gradient(nil, l.Y, p, 1)
		g := NewFFT(0)
		got, z := g.Gradient(nil, l.Y, p, 1)
		e, ez := fftRelRMS(got, want), math.Abs(z-wantZ)/wantZ
		t.Logf("%s: %d intervals, relative RMS repulsion error %.3g, Z %.3g", l.Name, g.s.nb, e, ez)
		if e > 5e-3 || ez > 1e-4 {
			t.Errorf("%s: repulsion error %.3g (want ≤ 5e-3), Z error %.3g (want ≤ 1e-4)", l.Name, e, ez)
		}
	}
}
