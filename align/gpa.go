package align

import (
	"fmt"
	"math"
)

// GPAResult is the outcome of generalised Procrustes analysis.
type GPAResult struct {
	// Consensus is the mean shape (flat, 2N), centred at the origin, in the
	// orientation of the first layout, and, when scaling is on, with RMS
	// radius equal to the mean RMS radius of the input layouts.
	Consensus []float64
	// Aligned[k] is layout k moved onto the consensus:
	// Aligned[k] = Transforms[k].Apply(layouts[k]).
	Aligned    [][]float64
	Transforms []Transform
	// Residuals[k] is layout k's RMS distance from the consensus in units
	// of the consensus's RMS radius:
	//
	//	Residuals[k] = sqrt(1/N Σ_i ‖Aligned[k]_i − c_i‖²) / RMSRadius
	Residuals []float64
	// RMSRadius = sqrt(1/N Σ_i ‖c_i‖²) of the (centred) consensus.
	RMSRadius float64
	// Iters is the number of align-then-average rounds run; Converged says
	// whether the last one moved the consensus by at most the tolerance.
	Iters     int
	Converged bool
}

// GPAOptions configures GeneralizedWith.
type GPAOptions struct {
	// Tol is the convergence tolerance on the relative change of the
	// consensus, ‖C_new − C‖_F / ‖C‖_F. If Tol is 0 (or negative), 1e-10 is
	// used.
	Tol float64
	// MaxIter bounds the align-then-average rounds. If MaxIter is 0 (or
	// negative), 200 is used. Reaching it is not an error; see
	// GPAResult.Converged.
	MaxIter int
	// Rigid turns uniform scaling off: layouts are only translated,
	// rotated and reflected, and the consensus is their plain mean.
	Rigid bool
}

// Generalized runs generalised Procrustes analysis (Gower 1975) with
// uniform scaling on S ≥ 2 layouts of the same N points; it is
// GeneralizedWith(layouts, GPAOptions{Tol: tol, MaxIter: maxIter}).
func Generalized(layouts [][]float64, tol float64, maxIter int) (*GPAResult, error) {
	return GeneralizedWith(layouts, GPAOptions{Tol: tol, MaxIter: maxIter})
}

// GeneralizedWith runs generalised Procrustes analysis (Gower 1975;
// ten Berge 1977) on S ≥ 2 layouts of the same N ≥ 3 points:
//
//	X_k ← X_k − x̄_k                       centre every layout
//	ρ   = 1/S Σ_k sqrt(‖X_k‖²_F / N)       target RMS radius
//	C   ← X_1 · ρ / rms(X_1)               start from the first layout
//	repeat
//	    (s_k, R_k) = Procrustes fit of X_k onto C   (s_k = 1 if Rigid)
//	    C_new = 1/S Σ_k s_k X_k R_k, rescaled to RMS radius ρ unless Rigid
//	until ‖C_new − C‖_F ≤ Tol·‖C‖_F or MaxIter rounds
//
// and finally fits every layout once more onto the last consensus, so
// Aligned, Transforms and Residuals refer to the returned Consensus. Fixing
// the consensus size keeps the scaled problem from shrinking every layout
// towards zero. Every step is a fixed-order serial loop, so the result is
// deterministic. Cost O(S·N) per round.
//
// Errors: fewer than 2 layouts, layouts of different lengths, and any error
// Procrustes would return for one layout (fewer than 3 points, NaN/Inf,
// all points coinciding), or a consensus whose points all coincide.
func GeneralizedWith(layouts [][]float64, opt GPAOptions) (*GPAResult, error) {
	tol, maxIter := opt.Tol, opt.MaxIter
	if tol <= 0 {
		tol = 1e-10
	}
	if maxIter <= 0 {
		maxIter = 200
	}
	S := len(layouts)
	if S < 2 {
		return nil, fmt.Errorf("align: generalised Procrustes needs at least 2 layouts, got %d", S)
	}
	L := len(layouts[0])
	for k, y := range layouts {
		if err := check(fmt.Sprint(k), y); err != nil {
			return nil, err
		}
		if len(y) != L {
			return nil, fmt.Errorf("align: layout %d has %d points, layout 0 has %d", k, len(y)/2, L/2)
		}
	}
	n := float64(L / 2)
	centred := make([][]float64, S)
	means := make([][2]float64, S)
	var rho float64
	for k, y := range layouts {
		cx, cy := centroid(y)
		c := make([]float64, L)
		for i := 0; i < L; i += 2 {
			c[i] = y[i] - cx
			c[i+1] = y[i+1] - cy
		}
		ss := sumSquares(c, 0, 0)
		if ss == 0 {
			return nil, fmt.Errorf("%w: all points of layout %d coincide", ErrDegenerate, k)
		}
		centred[k] = c
		means[k] = [2]float64{cx, cy}
		rho += math.Sqrt(ss / n)
	}
	rho /= float64(S)

	cons := make([]float64, L)
	copy(cons, centred[0])
	if !opt.Rigid {
		scaleTo(cons, rho, n)
	}
	next := make([]float64, L)
	aligned := make([][]float64, S)
	for k := range aligned {
		aligned[k] = make([]float64, L)
	}
	rs := make([][4]float64, S)
	ss := make([]float64, S)

	fit := func() {
		for k := 0; k < S; k++ {
			m, bb := cross(cons, 0, 0, centred[k], 0, 0)
			r, tr := bestOrthogonal(m)
			s := 1.0
			if !opt.Rigid {
				s = tr / bb
			}
			rs[k], ss[k] = r, s
			Transform{Scale: s, Rotation: r}.applyTo(aligned[k], centred[k])
		}
	}

	res := &GPAResult{}
	for it := 1; it <= maxIter; it++ {
		fit()
		for i := range next {
			var sum float64
			for k := 0; k < S; k++ {
				sum += aligned[k][i]
			}
			next[i] = sum / float64(S)
		}
		if !opt.Rigid {
			if sumSquares(next, 0, 0) == 0 {
				return nil, fmt.Errorf("%w: consensus points coincide at round %d", ErrDegenerate, it)
			}
			scaleTo(next, rho, n)
		}
		var diff, norm float64
		for i := range next {
			d := next[i] - cons[i]
			diff += d * d
			norm += cons[i] * cons[i]
		}
		cons, next = next, cons
		res.Iters = it
		if diff <= tol*tol*norm {
			res.Converged = true
			break
		}
	}
	fit()

	radius := math.Sqrt(sumSquares(cons, 0, 0) / n)
	if radius == 0 {
		return nil, fmt.Errorf("%w: consensus points coincide", ErrDegenerate)
	}
	res.Consensus = cons
	res.Aligned = aligned
	res.RMSRadius = radius
	res.Transforms = make([]Transform, S)
	res.Residuals = make([]float64, S)
	for k := 0; k < S; k++ {
		r, s := rs[k], ss[k]
		mx, my := means[k][0], means[k][1]
		res.Transforms[k] = Transform{
			Scale:       s,
			Rotation:    r,
			Translation: [2]float64{-s * (mx*r[0] + my*r[2]), -s * (mx*r[1] + my*r[3])},
		}
		var d2 float64
		for i := 0; i < L; i++ {
			d := aligned[k][i] - cons[i]
			d2 += d * d
		}
		res.Residuals[k] = math.Sqrt(d2/n) / radius
	}
	return res, nil
}

// scaleTo rescales the centred layout c in place to RMS radius rho.
func scaleTo(c []float64, rho, n float64) {
	f := rho / math.Sqrt(sumSquares(c, 0, 0)/n)
	for i := range c {
		c[i] *= f
	}
}
