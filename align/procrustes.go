package align

import (
	"errors"
	"fmt"
	"math"
)

// ErrDegenerate reports a layout on which Procrustes analysis is undefined:
// fewer than three points, or all points at the same position.
var ErrDegenerate = errors.New("align: degenerate layout")

// Transform is a similarity transform of the plane acting on row vectors:
//
//	p' = Scale · p · R + Translation
//
// where p = (x, y) is a row vector and R is the 2×2 matrix stored row-major in
// Rotation (R = [[Rotation[0], Rotation[1]], [Rotation[2], Rotation[3]]]), so
//
//	x' = Scale·(x·R00 + y·R10) + Translation[0]
//	y' = Scale·(x·R01 + y·R11) + Translation[1]
//
// R is orthogonal; det R = −1 means the transform includes a reflection.
type Transform struct {
	Scale       float64
	Rotation    [4]float64
	Translation [2]float64
}

// Identity is the transform that leaves every point where it is.
var Identity = Transform{Scale: 1, Rotation: [4]float64{1, 0, 0, 1}}

// Apply returns a transformed copy of the flat layout y (x0, y0, x1, y1, …).
// It panics with "align: odd layout length" if len(y) is odd.
func (t Transform) Apply(y []float64) []float64 {
	if len(y)%2 != 0 {
		panic("align: odd layout length")
	}
	out := make([]float64, len(y))
	t.applyTo(out, y)
	return out
}

// Reflects reports whether the transform includes a reflection (det R < 0).
func (t Transform) Reflects() bool {
	return t.Rotation[0]*t.Rotation[3]-t.Rotation[1]*t.Rotation[2] < 0
}

func (t Transform) applyTo(dst, y []float64) {
	s, r, tr := t.Scale, t.Rotation, t.Translation
	for i := 0; i+1 < len(y); i += 2 {
		x0, y0 := y[i], y[i+1]
		dst[i] = s*(x0*r[0]+y0*r[2]) + tr[0]
		dst[i+1] = s*(x0*r[1]+y0*r[3]) + tr[1]
	}
}

// check validates one layout: even length, at least 3 points, finite values.
func check(name string, y []float64) error {
	if len(y)%2 != 0 {
		return fmt.Errorf("align: layout %s has odd length %d (want 2 values per point)", name, len(y))
	}
	if n := len(y) / 2; n < 3 {
		return fmt.Errorf("%w: layout %s has %d points, need at least 3", ErrDegenerate, name, n)
	}
	for i, v := range y {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("align: layout %s point %d has non-finite coordinate %v", name, i/2, v)
		}
	}
	return nil
}

func checkPair(a, b []float64) error {
	if err := check("a", a); err != nil {
		return err
	}
	if err := check("b", b); err != nil {
		return err
	}
	if len(a) != len(b) {
		return fmt.Errorf("align: layouts have %d and %d points", len(a)/2, len(b)/2)
	}
	return nil
}

// centroid returns the mean point of a flat layout.
func centroid(y []float64) (cx, cy float64) {
	for i := 0; i < len(y); i += 2 {
		cx += y[i]
		cy += y[i+1]
	}
	n := float64(len(y) / 2)
	return cx / n, cy / n
}

// cross returns M = B0ᵀ A0 (row-major 2×2) and ‖B0‖²_F for the centred
// layouts A0 = a − ā, B0 = b − b̄.
func cross(a []float64, ax, ay float64, b []float64, bx, by float64) (m [4]float64, bb float64) {
	for i := 0; i < len(a); i += 2 {
		xa, ya := a[i]-ax, a[i+1]-ay
		xb, yb := b[i]-bx, b[i+1]-by
		m[0] += xb * xa
		m[1] += xb * ya
		m[2] += yb * xa
		m[3] += yb * ya
		bb += xb*xb + yb*yb
	}
	return m, bb
}

// bestOrthogonal returns the orthogonal R maximising tr(Rᵀ M) and that
// maximum, which equals the sum of the singular values of M.
//
// In two dimensions the problem has a closed form. A rotation
// R = [[c, s], [−s, c]] gives tr(RᵀM) = c(m00+m11) + s(m01−m10), maximal at
// p = hypot(m00+m11, m01−m10); a reflection R = [[c, s], [s, −c]] gives
// c(m00−m11) + s(m01+m10), maximal at q = hypot(m00−m11, m01+m10). The SVD
// solution R = U Vᵀ of Schönemann (1966) is whichever is larger, and
// σ1 + σ2 = max(p, q), σ1 − σ2 = min(p, q). Ties (p = q, M singular) go to
// the rotation.
func bestOrthogonal(m [4]float64) (r [4]float64, trace float64) {
	u, v := m[0]+m[3], m[1]-m[2]
	p := math.Hypot(u, v)
	w, z := m[0]-m[3], m[1]+m[2]
	q := math.Hypot(w, z)
	if p >= q {
		if p == 0 {
			return [4]float64{1, 0, 0, 1}, 0
		}
		c, s := u/p, v/p
		return [4]float64{c, s, -s, c}, p
	}
	c, s := w/q, z/q
	return [4]float64{c, s, s, -c}, q
}

// Procrustes moves layout b onto layout a (a is not moved) by the
// similarity transform that minimises Σ_i ‖a_i − b'_i‖² (Schönemann 1966):
//
//	M = B0ᵀ A0 = U Σ Vᵀ,   A0 = a − ā,  B0 = b − b̄   (N×2, centred)
//	R = U Vᵀ                      (orthogonal; reflections allowed)
//	s = tr Σ / ‖B0‖²_F            (if scale; otherwise s = 1)
//	aligned_i = s·(b_i − b̄)·R + ā
//
// The returned Transform maps original b coordinates to aligned ones,
// aligned = t.Apply(b), with t.Translation = ā − s·b̄·R.
//
// Errors: odd or unequal lengths, fewer than 3 points, NaN or ±Inf
// coordinates, or either layout having all its points at one position
// (ErrDegenerate). Cost O(N).
func Procrustes(a, b []float64, scale bool) (aligned []float64, t Transform, err error) {
	if err := checkPair(a, b); err != nil {
		return nil, Transform{}, err
	}
	ax, ay := centroid(a)
	bx, by := centroid(b)
	m, bb := cross(a, ax, ay, b, bx, by)
	if bb == 0 {
		return nil, Transform{}, fmt.Errorf("%w: all points of layout b coincide", ErrDegenerate)
	}
	if sumSquares(a, ax, ay) == 0 {
		return nil, Transform{}, fmt.Errorf("%w: all points of layout a coincide", ErrDegenerate)
	}
	r, tr := bestOrthogonal(m)
	s := 1.0
	if scale {
		s = tr / bb
	}
	t = Transform{Scale: s, Rotation: r}
	t.Translation[0] = ax - s*(bx*r[0]+by*r[2])
	t.Translation[1] = ay - s*(bx*r[1]+by*r[3])
	aligned = make([]float64, len(b))
	// Apply to the centred coordinates for accuracy, then add ā.
	for i := 0; i < len(b); i += 2 {
		x0, y0 := b[i]-bx, b[i+1]-by
		aligned[i] = s*(x0*r[0]+y0*r[2]) + ax
		aligned[i+1] = s*(x0*r[1]+y0*r[3]) + ay
	}
	return aligned, t, nil
}

func sumSquares(y []float64, cx, cy float64) float64 {
	var ss float64
	for i := 0; i < len(y); i += 2 {
		dx, dy := y[i]-cx, y[i+1]-cy
		ss += dx*dx + dy*dy
	}
	return ss
}

// Disparity returns the Procrustes disparity of two layouts in the
// convention of scipy.spatial.procrustes (SciPy 1.10):
//
//	A = (a − ā)/‖a − ā‖_F,  B = (b − b̄)/‖b − b̄‖_F
//	AᵀB = U Σ Vᵀ,  s = tr Σ,  R = U Vᵀ
//	disparity = Σ_i ‖A_i − s·B_i·Rᵀ‖² = 1 − (tr Σ)²
//
// computed, like SciPy, as the explicit residual sum of squares. It lies in
// [0, 1], is 0 exactly when b is a similarity transform (with or without
// reflection) of a, and is symmetric in a and b up to rounding. Errors as
// for Procrustes. Cost O(N).
func Disparity(a, b []float64) (float64, error) {
	if err := checkPair(a, b); err != nil {
		return 0, err
	}
	ax, ay := centroid(a)
	bx, by := centroid(b)
	na := math.Sqrt(sumSquares(a, ax, ay))
	nb := math.Sqrt(sumSquares(b, bx, by))
	if na == 0 {
		return 0, fmt.Errorf("%w: all points of layout a coincide", ErrDegenerate)
	}
	if nb == 0 {
		return 0, fmt.Errorf("%w: all points of layout b coincide", ErrDegenerate)
	}
	// M = B̃ᵀ Ã of the standardised layouts; bestOrthogonal gives R' with
	// B̃·R' ≈ Ã, which is scipy's B·Rᵀ.
	var m [4]float64
	for i := 0; i < len(a); i += 2 {
		xa, ya := (a[i]-ax)/na, (a[i+1]-ay)/na
		xb, yb := (b[i]-bx)/nb, (b[i+1]-by)/nb
		m[0] += xb * xa
		m[1] += xb * ya
		m[2] += yb * xa
		m[3] += yb * ya
	}
	r, s := bestOrthogonal(m)
	var d float64
	for i := 0; i < len(a); i += 2 {
		xa, ya := (a[i]-ax)/na, (a[i+1]-ay)/na
		xb, yb := (b[i]-bx)/nb, (b[i+1]-by)/nb
		ex := xa - s*(xb*r[0]+yb*r[2])
		ey := ya - s*(xb*r[1]+yb*r[3])
		d += ex*ex + ey*ey
	}
	return d, nil
}
