package tsne

import (
	"errors"
	"fmt"
	"math"
)

// Config holds the optimiser's settings. Every zero value selects the
// documented default.
type Config struct {
	// LearningRate is the step size η in the convention where the constant
	// 4 is part of the gradient. If LearningRate is 0,
	// LearningRateAuto(N, Exaggeration) is used.
	LearningRate float64
	// Exaggeration is the early-exaggeration factor α applied to P during
	// the first ExaggerationIters iterations. If Exaggeration is 0, 12 is
	// used; 1 switches early exaggeration off.
	Exaggeration float64
	// ExaggerationIters is the length of the first phase (exaggerated P,
	// momentum 0.5). If ExaggerationIters is 0, 250 is used.
	ExaggerationIters int
	// Iters is the total number of iterations, the first phase included.
	// If Iters is 0, 1000 is used.
	Iters int
	// Method selects the gradient. If Method is "" or MethodAuto,
	// Choose(N, d).Method is used.
	Method Method
	// Theta is the Barnes-Hut opening angle. If Theta is 0, DefaultTheta
	// is used.
	Theta float64
	// Threads bounds the goroutines used inside one run. If Threads is 0,
	// runtime.GOMAXPROCS(0) is used. Results do not depend on it.
	Threads int
	// KLEvery sets how often the KL divergence is computed: every KLEvery
	// iterations and after the last one. If KLEvery is 0, 50 is used.
	KLEvery int
	// Progress, if not nil, is called after every iteration. Returning false
	// stops the run early (Optimize then returns the partial result and an
	// error wrapping ErrStopped).
	Progress func(Progress) bool
}

// Progress describes the state after an iteration.
type Progress struct {
	// Iter is the number of iterations completed (1-based); Iters the total.
	Iter, Iters int
	// KL is the divergence of the layout the iteration started from
	// (unexaggerated P, Z from the gradient); valid when HaveKL is true.
	KL     float64
	HaveKL bool
	// Y is the current layout. It is read-only and valid only during the
	// call; copy it to keep it.
	Y []float64
}

// TracePoint is one recorded value of the KL divergence.
type TracePoint struct {
	Iter int
	KL   float64
}

// Result is the outcome of Optimize.
type Result struct {
	// Y is the final layout, 2N values.
	Y []float64
	// KL is the divergence of the final layout Y: exact (all pairs) for
	// N ≤ ExactKLMaxN, otherwise with Z from one more evaluation of the run's
	// gradient method.
	KL float64
	// Iters is the number of iterations run.
	Iters int
	// Method is the gradient method used (never MethodAuto).
	Method Method
	// LearningRate is the step size used, 4-in-gradient convention.
	LearningRate float64
	// Exaggeration and ExaggerationIters are the early-exaggeration
	// settings used, defaults resolved.
	Exaggeration      float64
	ExaggerationIters int
	// Theta is the Barnes-Hut opening angle used (0 for other methods).
	Theta float64
	// Trace holds the KL every KLEvery iterations, of the layout that
	// iteration started from (as in Progress), and as its last point the
	// KL of the final layout Y (the same value as KL), at Iter = Iters.
	Trace []TracePoint
}

// ExactKLMaxN is the largest N for which Result.KL is computed with the
// exact O(N²) normalisation (about 0.1 s on 2 cores at N = 5000, once per
// run); beyond it the run's gradient method supplies Z.
const ExactKLMaxN = 5000

// ErrStopped is wrapped by the error Optimize returns when the Progress
// callback asks it to stop.
var ErrStopped = errors.New("tsne: stopped by caller")

// DivergedError reports a non-finite gradient or layout.
type DivergedError struct {
	Iter int    // 1-based iteration at which it was detected
	What string // "gradient" or "layout"
}

func (e *DivergedError) Error() string {
	return fmt.Sprintf("tsne: diverged at iteration %d (non-finite %s); try a smaller learning rate", e.Iter, e.What)
}

// LearningRateAuto returns the automatic learning rate
//
//	η = max(N / (4α), 50)
//
// in the convention where the constant 4 is part of the gradient; it equals
// N/α (floor 200) in the convention without the 4 (Belkina et al. 2019;
// Kobak & Berens 2019), and is what scikit-learn 1.2.1 uses for
// learning_rate="auto". α ≤ 0 is treated as 12.
func LearningRateAuto(n int, exaggeration float64) float64 {
	if exaggeration <= 0 {
		exaggeration = 12
	}
	return max(float64(n)/(4*exaggeration), 50)
}

// resolved is a Config with defaults filled in and checked.
type resolved struct {
	Config
	n int
}

func resolveConfig(cfg Config, n int) (resolved, error) {
	r := resolved{Config: cfg, n: n}
	if r.Exaggeration == 0 {
		r.Exaggeration = 12
	}
	if r.ExaggerationIters == 0 {
		r.ExaggerationIters = 250
	}
	if r.Iters == 0 {
		r.Iters = 1000
	}
	if r.KLEvery == 0 {
		r.KLEvery = 50
	}
	switch {
	case !(r.Exaggeration >= 1) || math.IsInf(r.Exaggeration, 0):
		return r, fmt.Errorf("tsne: exaggeration %g must be at least 1", cfg.Exaggeration)
	case r.ExaggerationIters < 0:
		return r, fmt.Errorf("tsne: exaggeration iterations %d must not be negative", cfg.ExaggerationIters)
	case r.Iters < 0:
		return r, fmt.Errorf("tsne: iterations %d must not be negative", cfg.Iters)
	case r.Iters < r.ExaggerationIters:
		return r, fmt.Errorf("tsne: iterations %d is fewer than the %d exaggeration iterations", r.Iters, r.ExaggerationIters)
	case r.KLEvery < 0:
		return r, fmt.Errorf("tsne: KL interval %d must not be negative", cfg.KLEvery)
	case !(r.LearningRate >= 0) || math.IsInf(r.LearningRate, 0):
		return r, fmt.Errorf("tsne: learning rate %g must be positive", cfg.LearningRate)
	case !(r.Theta >= 0) || math.IsInf(r.Theta, 0):
		return r, fmt.Errorf("tsne: theta %g must be positive", cfg.Theta)
	}
	if r.LearningRate == 0 {
		r.LearningRate = LearningRateAuto(n, r.Exaggeration)
	}
	if r.Theta == 0 {
		r.Theta = DefaultTheta
	}
	r.Threads = resolveThreads(r.Threads)
	m, err := ResolveMethod(r.Method, n)
	if err != nil {
		return r, err
	}
	r.Method = m
	return r, nil
}

// optimizer holds the state of one gradient-descent run; step performs one
// iteration without allocating.
type optimizer struct {
	cfg    resolved
	p      *Sparse
	grad   Gradient
	y      []float64
	g      []float64
	update []float64
	gains  []float64
	iter   int // iterations completed
	trace  []TracePoint
	kl     *klEval
}

func newOptimizer(p *Sparse, init []float64, cfg Config) (*optimizer, error) {
	if p == nil {
		return nil, errors.New("tsne: nil affinity matrix")
	}
	n := p.N
	if n < 2 {
		return nil, fmt.Errorf("tsne: need at least 2 points, got %d", n)
	}
	if len(init) != 2*n {
		return nil, fmt.Errorf("tsne: initial layout has %d values, want %d (2 per point)", len(init), 2*n)
	}
	if len(p.RowPtr) != n+1 || len(p.Col) != len(p.Val) || p.RowPtr[n] != len(p.Col) {
		return nil, errors.New("tsne: malformed affinity matrix")
	}
	for k, v := range init {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("tsne: initial layout point %d is not finite", k/2)
		}
	}
	r, err := resolveConfig(cfg, n)
	if err != nil {
		return nil, err
	}
	grad, err := newGradient(r.Method, r.Theta, r.Threads)
	if err != nil {
		return nil, err
	}
	o := &optimizer{
		cfg:    r,
		p:      p,
		grad:   grad,
		y:      append([]float64(nil), init...),
		g:      make([]float64, 2*n),
		update: make([]float64, 2*n),
		gains:  make([]float64, 2*n),
		trace:  make([]TracePoint, 0, r.Iters/max(r.KLEvery, 1)+2),
		kl:     newKLEval(p, r.Threads),
	}
	for k := range o.gains {
		o.gains[k] = 1
	}
	return o, nil
}

// step performs one iteration: gradient, KL when due, gains, momentum
// update, re-centring, progress callback. It returns false when the
// callback asks to stop.
//
// The update is scikit-learn 1.2.1's _gradient_descent rule, per
// coordinate:
//
//	gain ← gain + 0.2 if update·grad < 0, else gain·0.8; gain ← max(gain, 0.01)
//	update ← μ·update − η·gain·grad;   y ← y + update
//
// with μ = 0.5 and exaggerated P for the first ExaggerationIters iterations
// and μ = 0.8 after. As in scikit-learn, the update and the gains restart
// from 0 and 1 when the second phase begins.
func (o *optimizer) step() (bool, error) {
	it := o.iter // 0-based index of this iteration
	alpha, mom := o.cfg.Exaggeration, 0.5
	if it >= o.cfg.ExaggerationIters {
		alpha, mom = 1, 0.8
		if it == o.cfg.ExaggerationIters && it > 0 {
			for k := range o.update {
				o.update[k] = 0
				o.gains[k] = 1
			}
		}
	}
	_, z := o.grad.Gradient(o.g, o.y, o.p, alpha)
	for _, v := range o.g {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return false, &DivergedError{Iter: it + 1, What: "gradient"}
		}
	}
	done := it + 1
	pr := Progress{Iter: done, Iters: o.cfg.Iters}
	if done%o.cfg.KLEvery == 0 || done == o.cfg.Iters {
		pr.KL, pr.HaveKL = o.kl.kl(o.y, z), true
		if len(o.trace) < cap(o.trace) {
			o.trace = append(o.trace, TracePoint{Iter: done, KL: pr.KL})
		}
	}
	eta := o.cfg.LearningRate
	var mx, my float64
	for k, gk := range o.g {
		u := o.update[k]
		gain := o.gains[k]
		// gain + 0.2 where the step reverses the last update, gain·0.8
		// elsewhere, at least 0.01: chosen by bit masks (conditional
		// moves), since the sign test is close to a coin toss for a
		// branch predictor.
		inc, dec := gain+0.2, gain*0.8
		gain = selectFloat(u*gk < 0, inc, dec)
		gain = selectFloat(gain < 0.01, 0.01, gain)
		o.gains[k] = gain
		u = mom*u - eta*gain*gk
		o.update[k] = u
		v := o.y[k] + u
		o.y[k] = v
		if k&1 == 0 {
			mx += v
		} else {
			my += v
		}
	}
	n := float64(len(o.y) / 2)
	mx, my = mx/n, my/n
	if math.IsNaN(mx+my) || math.IsInf(mx+my, 0) {
		return false, &DivergedError{Iter: done, What: "layout"}
	}
	for k := 0; k < len(o.y); k += 2 {
		o.y[k] -= mx
		o.y[k+1] -= my
	}
	o.iter = done
	if o.cfg.Progress != nil {
		pr.Y = o.y
		if !o.cfg.Progress(pr) {
			return false, nil
		}
	}
	return true, nil
}

// Optimize runs t-SNE gradient descent on the joint affinities p from the
// layout init (2N values; not modified) with the settings in cfg, and
// returns the final layout and its KL divergence.
//
// The schedule: ExaggerationIters iterations with P multiplied by
// Exaggeration and momentum 0.5, then Iters − ExaggerationIters with the
// plain P and momentum 0.8; per-coordinate gains as in scikit-learn 1.2.1
// (see step). The layout's mean is subtracted after every iteration; this
// changes nothing in the objective (it is translation invariant) and keeps
// coordinates centred for the tree and grid methods.
//
// KL values in Progress and Result.Trace are computed during iteration t
// from the layout that iteration starts from, with the Z the gradient
// returned, always against the unexaggerated P (so the trace is comparable
// across the phase change). Result.KL is that of the final layout, and so
// is the trace's last point.
//
// A non-finite gradient or layout stops the run with a *DivergedError
// naming the iteration. If the Progress callback returns false, Optimize
// returns the result so far together with an error wrapping ErrStopped.
// Apart from the callback, an iteration allocates nothing.
func Optimize(p *Sparse, init []float64, cfg Config) (*Result, error) {
	o, err := newOptimizer(p, init, cfg)
	if err != nil {
		return nil, err
	}
	var stopErr error
	for o.iter < o.cfg.Iters {
		ok, err := o.step()
		if err != nil {
			return nil, err
		}
		if !ok {
			stopErr = fmt.Errorf("tsne: after %d of %d iterations: %w", o.iter, o.cfg.Iters, ErrStopped)
			break
		}
	}
	return o.result(), stopErr
}

// result packages the optimiser state, computing the final KL.
func (o *optimizer) result() *Result {
	n := o.p.N
	var kl float64
	if n <= ExactKLMaxN {
		kl = ExactKL(o.y, o.p, o.cfg.Threads)
	} else {
		_, z := o.grad.Gradient(o.g, o.y, o.p, 1)
		kl = o.kl.kl(o.y, z)
	}
	// The trace ends with the final layout's KL (step recorded the layout
	// the last iteration started from).
	if o.iter > 0 {
		if t := len(o.trace); t > 0 && o.trace[t-1].Iter == o.iter {
			o.trace[t-1].KL = kl
		} else {
			o.trace = append(o.trace, TracePoint{Iter: o.iter, KL: kl})
		}
	}
	res := &Result{
		Y:                 o.y,
		KL:                kl,
		Iters:             o.iter,
		Method:            o.cfg.Method,
		LearningRate:      o.cfg.LearningRate,
		Exaggeration:      o.cfg.Exaggeration,
		ExaggerationIters: o.cfg.ExaggerationIters,
		Trace:             o.trace,
	}
	if o.cfg.Method == MethodBarnesHut {
		res.Theta = o.cfg.Theta
	}
	return res
}

// selectFloat returns a if c, else b, without a branch.
func selectFloat(c bool, a, b float64) float64 {
	var m uint64
	if c {
		m = ^uint64(0)
	}
	return math.Float64frombits(math.Float64bits(a)&m | math.Float64bits(b)&^m)
}
