package tsne

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// Init names an initialisation of the layout.
type Init string

// The initialisations.
const (
	InitPCA    Init = "pca"
	InitRandom Init = "random"
)

// initScale is the standard deviation of the first coordinate of every
// initial layout (Kobak & Berens 2019; scikit-learn 1.2.1's default).
const initScale = 1e-4

// randomInitStream is the PCG stream used by RandomInit, so that the same
// seed gives different streams in different parts of a program.
const randomInitStream = 0x74736e65696e6974 // "tsneinit"

// RandomInit returns a layout of n points with independent Gaussian
// coordinates of standard deviation 1e-4, drawn from
// rand.New(rand.NewPCG(seed, randomInitStream)) in the order x0, y0, x1, ….
func RandomInit(n int, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, randomInitStream))
	y := make([]float64, 2*n)
	for k := range y {
		y[k] = initScale * rng.NormFloat64()
	}
	return y
}

// PCAInit returns the scores of x (n×d, row-major) on its first two
// principal components, scaled so that the first column has standard
// deviation (divisor n) 1e-4; the second column is scaled by the same
// factor, keeping the aspect ratio:
//
//	Y = X_c V₂ · 1e-4 / sd(X_c v₁),   X_c = X − column means
//
// (Kobak & Berens 2019; scikit-learn 1.2.1 TSNE with init="pca" does the
// same). The components come from the eigen-decomposition (gonum
// mat.EigenSym) of the smaller of the two Gram matrices: the d×d
// covariance X_cᵀX_c when d ≤ n — the usual case for t-SNE inputs, costing
// O(nd² + d³) time and O(d²) memory beyond the copy of X — or the n×n matrix
// X_c X_cᵀ when d > n, whose eigenvectors scaled by the square roots of
// their eigenvalues are the same scores. Forming a Gram matrix squares the
// condition number, which only matters for components near the rounding
// floor; the top two components of real data are far from it, and a thin
// SVD of the n×d matrix would cost as much time and more memory.
//
// Signs are fixed deterministically as in scikit-learn's svd_flip: each
// column is negated if needed so that its entry of largest absolute value
// (first such entry on ties) is positive.
//
// It fails if d < 2, n < 2, x has non-finite values, or the data have no
// variance: total variance at most (1e-12·max|x|)² (all points identical up
// to rounding), or none along the first component.
func PCAInit(x []float64, n, d int) ([]float64, error) {
	switch {
	case d < 2:
		return nil, fmt.Errorf("tsne: PCA initialisation needs at least 2 features, got %d (use random initialisation)", d)
	case n < 2:
		return nil, fmt.Errorf("tsne: PCA initialisation needs at least 2 points, got %d", n)
	case len(x) != n*d:
		return nil, fmt.Errorf("tsne: PCA initialisation: %d values for %d×%d data", len(x), n, d)
	}
	xc := make([]float64, n*d)
	scale, total := 0.0, 0.0
	for c := 0; c < d; c++ {
		m := 0.0
		for i := 0; i < n; i++ {
			v := x[i*d+c]
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("tsne: PCA initialisation: value at row %d, column %d is not finite", i, c)
			}
			m += v
			scale = max(scale, math.Abs(v))
		}
		m /= float64(n)
		for i := 0; i < n; i++ {
			xc[i*d+c] = x[i*d+c] - m
			total += xc[i*d+c] * xc[i*d+c]
		}
	}
	// No variance up to rounding: a column mean of values such as 5.1 (not
	// exact in binary) is rounded, so identical rows centre to noise of
	// order 1e-16·|x| rather than to zero. Refuse total variance
	// Σ_c var(x_·c) ≤ (1e-12·max|x|)² (common practice: a relative
	// tolerance far above rounding, far below any real spread).
	if tol := 1e-12 * scale; total/float64(n) <= tol*tol {
		return nil, errors.New("tsne: PCA initialisation: the data have no variance (all points identical; use random initialisation)")
	}
	X := mat.NewDense(n, d, xc)
	y := make([]float64, 2*n)
	if d <= n {
		var cov mat.SymDense
		cov.SymOuterK(1, X.T())
		var eig mat.EigenSym
		if !eig.Factorize(&cov, true) {
			return nil, errors.New("tsne: PCA initialisation: eigen-decomposition did not converge")
		}
		var v mat.Dense
		eig.VectorsTo(&v)
		// eigenvalues ascending: the last two columns are PC1, PC2
		var s mat.Dense
		s.Mul(X, v.Slice(0, d, d-2, d))
		for i := 0; i < n; i++ {
			y[2*i] = s.At(i, 1)
			y[2*i+1] = s.At(i, 0)
		}
	} else {
		var gram mat.SymDense
		gram.SymOuterK(1, X)
		var eig mat.EigenSym
		if !eig.Factorize(&gram, true) {
			return nil, errors.New("tsne: PCA initialisation: eigen-decomposition did not converge")
		}
		vals := eig.Values(nil)
		var u mat.Dense
		eig.VectorsTo(&u)
		s1, s2 := math.Sqrt(max(vals[n-1], 0)), math.Sqrt(max(vals[n-2], 0))
		for i := 0; i < n; i++ {
			y[2*i] = u.At(i, n-1) * s1
			y[2*i+1] = u.At(i, n-2) * s2
		}
	}
	for c := 0; c < 2; c++ {
		best, bi := -1.0, 0
		for i := 0; i < n; i++ {
			if a := math.Abs(y[2*i+c]); a > best {
				best, bi = a, i
			}
		}
		if y[2*bi+c] < 0 {
			for i := 0; i < n; i++ {
				y[2*i+c] = -y[2*i+c]
			}
		}
	}
	var m, ss float64
	for i := 0; i < n; i++ {
		m += y[2*i]
	}
	m /= float64(n)
	for i := 0; i < n; i++ {
		t := y[2*i] - m
		ss += t * t
	}
	sd := math.Sqrt(ss / float64(n))
	if !(sd > 0) || math.IsInf(sd, 0) {
		return nil, errors.New("tsne: PCA initialisation: the data have no variance (all points identical; use random initialisation)")
	}
	f := initScale / sd
	for k := range y {
		y[k] *= f
	}
	return y, nil
}
