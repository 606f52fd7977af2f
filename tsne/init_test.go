package tsne

import (
	"math"
	"path/filepath"
	"testing"

	"plumb/internal/fixture"
)

// initTestFeatures reads the feature columns (all but id and label) of a
// headed CSV in testdata.
func initTestFeatures(t *testing.T, name, label string) ([]float64, int, int) {
	t.Helper()
	x, n, d, err := fixture.MustReadCSV(t, filepath.Join("..", "testdata", name)).Numbers("id", label)
	if err != nil {
		t.Fatal(err)
	}
	return x, n, d
}

func TestPCAInitAgainstScikitLearn(t *testing.T) {
	// Source: scikit-learn 1.2.1 PCA(n_components=2).fit_transform scaled by
	// 1e-4 / np.std(column 0), as TSNE(init="pca") does, sign convention
	// svd_flip; testdata/sklearn_engine/optimizer.json from
	// make_fixtures.py. "full" is LAPACK's exact SVD: agreement to 1e-9
	// relative to the scale 1e-4 (rounding only). "randomized" is what
	// TSNE uses (randomised SVD, random_state=0): agreement to 1e-6
	// relative, its approximation error on these data.
	f := readOptimizerFixture(t)
	for _, tc := range []struct {
		data, label string
		stride      int
	}{
		{"iris", "species", 1},
		{"digits", "digit", 10},
	} {
		x, n, d := initTestFeatures(t, tc.data+".csv", tc.label)
		y, err := PCAInit(x, n, d)
		if err != nil {
			t.Fatal(err)
		}
		for _, solver := range []struct {
			name string
			tol  float64
		}{{"full", 1e-9}, {"randomized", 1e-6}} {
			want := f.PCA[tc.data+"_"+solver.name]
			if len(want) == 0 {
				t.Fatalf("fixture lacks %s_%s", tc.data, solver.name)
			}
			worst := 0.0
			for r := 0; r < len(want)/2; r++ {
				i := r * tc.stride
				worst = max(worst, math.Abs(y[2*i]-want[2*r]), math.Abs(y[2*i+1]-want[2*r+1]))
			}
			if rel := worst / 1e-4; !(rel < solver.tol) {
				t.Errorf("%s vs scikit-learn PCA %s: largest difference %.3g of the scale 1e-4, want < %g", tc.data, solver.name, rel, solver.tol)
			}
		}
		// sd of the first column is 1e-4 (Kobak & Berens 2019).
		var m, ss float64
		for i := 0; i < n; i++ {
			m += y[2*i]
		}
		m /= float64(n)
		for i := 0; i < n; i++ {
			ss += (y[2*i] - m) * (y[2*i] - m)
		}
		if sd := math.Sqrt(ss / float64(n)); math.Abs(sd-1e-4) > 1e-16 {
			t.Errorf("%s: sd of column 0 got %.17g want 1e-4", tc.data, sd)
		}
	}
}

func TestPCAInitWideData(t *testing.T) {
	// Source: common practice (linear algebra) — PCA scores from the n×n
	// Gram matrix equal those from the d×d covariance. The first 20 iris
	// rows with their 4 features repeated 10 times (d = 40 > n = 20, Gram
	// route) have the principal scores of the 4 features (covariance route)
	// times √10, so after the 1e-4 rescaling the layouts agree.
	x, _, d := initTestFeatures(t, "iris.csv", "species")
	const n = 20
	narrow := x[:n*d]
	wide := make([]float64, 0, n*d*10)
	for i := 0; i < n; i++ {
		for r := 0; r < 10; r++ {
			wide = append(wide, narrow[i*d:(i+1)*d]...)
		}
	}
	a, err := PCAInit(narrow, n, d)
	if err != nil {
		t.Fatal(err)
	}
	b, err := PCAInit(wide, n, 10*d)
	if err != nil {
		t.Fatal(err)
	}
	for k := range a {
		if math.Abs(a[k]-b[k]) > 1e-12 {
			t.Fatalf("coordinate %d: covariance route %.6g, Gram route %.6g", k, a[k], b[k])
		}
	}
}

func TestPCAInitErrors(t *testing.T) {
	// Source: common practice — degenerate inputs are refused clearly.
	for _, tc := range []struct {
		name string
		x    []float64
		n, d int
	}{
		{"one feature", []float64{1, 2, 3}, 3, 1},
		{"identical points", []float64{1, 1, 1, 1, 1, 1}, 3, 2},
		{"NaN", []float64{1, 2, math.NaN(), 4, 5, 6}, 3, 2},
	} {
		if _, err := PCAInit(tc.x, tc.n, tc.d); err == nil {
			t.Errorf("%s: got nil error", tc.name)
		}
	}
}

func TestRandomInit(t *testing.T) {
	// Source: engine issue — Gaussian with sd 1e-4 from an explicit seed.
	// For 20,000 draws the sample sd is within 2% of 1e-4 with overwhelming
	// probability (its relative standard error is 1/√(2·20000) ≈ 0.5%).
	a := RandomInit(10000, 7)
	b := RandomInit(10000, 7)
	c := RandomInit(10000, 8)
	ss, same, diff := 0.0, true, false
	for k := range a {
		ss += a[k] * a[k]
		same = same && a[k] == b[k]
		diff = diff || a[k] != c[k]
	}
	if sd := math.Sqrt(ss / float64(len(a))); math.Abs(sd-1e-4) > 2e-6 {
		t.Errorf("sample sd got %.4g want 1e-4 ± 2%%", sd)
	}
	if !same || !diff {
		t.Errorf("same seed identical: %v (want true); different seeds differ: %v (want true)", same, diff)
	}
}
