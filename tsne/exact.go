package tsne

import "plumb/internal/par"

// Exact computes the t-SNE gradient by summing over every pair of points,
// O(N²) time and O(N) memory per evaluation:
//
//	w_ij = (1 + ‖y_i − y_j‖²)⁻¹,   Z = Σ_{i≠j} w_ij
//	∂C/∂y_i = 4 Σ_j (α p_ij − w_ij / Z) w_ij (y_i − y_j)
//
// The attractive part runs over the stored entries of P only; the repulsive
// part and Z over all pairs. Rows are split into fixed chunks of 64 and
// processed in parallel; Z is reduced row by row in index order, so the
// result does not depend on the number of threads.
//
// Coincident points (duplicates) contribute w = 1 and no force on each
// other; nothing divides by a distance.
type Exact struct {
	pool *par.Pool

	// per-call inputs
	y     []float64
	p     *Sparse
	alpha float64
	dst   []float64

	rep  []float64 // 2N repulsion numerators Σ_j w² (y_i − y_j)
	zRow []float64 // N per-row sums Σ_j w_ij

	rowsFn func(worker, chunk int)
}

var _ Gradient = (*Exact)(nil)

// NewExact returns an exact gradient using up to threads goroutines
// (0 means runtime.GOMAXPROCS(0)).
func NewExact(threads int) *Exact {
	g := &Exact{pool: par.NewPool(threads)}
	g.rowsFn = g.rows
	return g
}

// Reset sizes the workspace for n points. Gradient calls it when the size
// changes; calling it ahead of time moves the allocation out of the first
// evaluation.
func (g *Exact) Reset(n int) {
	if cap(g.zRow) < n {
		g.zRow = make([]float64, n)
		g.rep = make([]float64, 2*n)
	}
	g.zRow = g.zRow[:n]
	g.rep = g.rep[:2*n]
}

// Gradient implements Gradient with the exact sums; the returned Z is exact.
func (g *Exact) Gradient(dst, y []float64, p *Sparse, exaggeration float64) ([]float64, float64) {
	n := len(y) / 2
	dst = checkGradientArgs(dst, y, p)
	g.Reset(n)
	g.y, g.p, g.alpha, g.dst = y, p, exaggeration, dst
	g.pool.Run(numChunks(n, chunkRows), g.rowsFn)
	z := 0.0
	for _, v := range g.zRow {
		z += v
	}
	combineGradient(dst, g.rep, z)
	g.y, g.p, g.dst = nil, nil, nil
	return dst, z
}

// rows computes, for one chunk of rows, the attraction (written to dst),
// the repulsion numerators and the row sums of w.
func (g *Exact) rows(_, chunk int) {
	y, n := g.y, len(g.y)/2
	lo, hi := chunk*chunkRows, min((chunk+1)*chunkRows, n)
	for i := lo; i < hi; i++ {
		xi, yi := y[2*i], y[2*i+1]
		// Every other point: those before i, then those after.
		zi, rx, ry := sumDirect(xi, yi, y[:2*i])
		z, x, v := sumDirect(xi, yi, y[2*i+2:])
		zi += z
		rx += x
		ry += v
		g.zRow[i] = zi
		g.rep[2*i], g.rep[2*i+1] = rx, ry
		ax, ay := attraction(y, g.p, i, xi, yi)
		g.dst[2*i], g.dst[2*i+1] = g.alpha*ax, g.alpha*ay
	}
}

// combineGradient turns dst (holding α·attraction) and rep into the
// gradient 4(α·attraction − rep/Z).
func combineGradient(dst, rep []float64, z float64) {
	invZ := 1 / z
	for k := range dst {
		dst[k] = 4 * (dst[k] - rep[k]*invZ)
	}
}

// checkGradientArgs validates the shapes shared by every Gradient and
// returns dst, allocated if nil. Mismatches are programmer errors and panic.
func checkGradientArgs(dst, y []float64, p *Sparse) []float64 {
	if len(y)%2 != 0 {
		panic("tsne: layout length is odd")
	}
	n := len(y) / 2
	if p == nil || p.N != n || len(p.RowPtr) != n+1 {
		panic("tsne: affinity matrix size does not match layout")
	}
	if dst == nil {
		return make([]float64, 2*n)
	}
	if len(dst) != 2*n {
		panic("tsne: destination length mismatch")
	}
	return dst
}
