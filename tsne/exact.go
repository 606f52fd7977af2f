package tsne

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
	runner *chunkRunner

	// per-call inputs
	y     []float64
	p     *Sparse
	alpha float64
	dst   []float64

	rep  []float64 // 2N repulsion numerators Σ_j w² (y_i − y_j)
	zRow []float64 // N per-row sums Σ_j w_ij

	rowsFn func(chunk int)
}

var _ Gradient = (*Exact)(nil)

// NewExact returns an exact gradient using up to threads goroutines
// (0 means runtime.GOMAXPROCS(0)).
func NewExact(threads int) *Exact {
	g := &Exact{runner: newChunkRunner(threads)}
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
	g.runner.run(numChunks(n, chunkRows), g.rowsFn)
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
func (g *Exact) rows(chunk int) {
	y, n := g.y, len(g.y)/2
	lo, hi := chunk*chunkRows, min((chunk+1)*chunkRows, n)
	for i := lo; i < hi; i++ {
		xi, yi := y[2*i], y[2*i+1]
		var zi, rx, ry float64
		for j := 0; j < n; j++ {
			if j == i {
				continue
			}
			dx, dy := xi-y[2*j], yi-y[2*j+1]
			w := 1 / (1 + dx*dx + dy*dy)
			zi += w
			w2 := w * w
			rx += w2 * dx
			ry += w2 * dy
		}
		g.zRow[i] = zi
		g.rep[2*i], g.rep[2*i+1] = rx, ry
		ax, ay := attraction(y, g.p, i, xi, yi)
		g.dst[2*i], g.dst[2*i+1] = g.alpha*ax, g.alpha*ay
	}
}

// attraction returns Σ_j p_ij w_ij (y_i − y_j) over the stored entries of
// row i of P.
func attraction(y []float64, p *Sparse, i int, xi, yi float64) (ax, ay float64) {
	e, end := p.RowPtr[i], p.RowPtr[i+1]
	col, val := p.Col[e:end], p.Val[e:end]
	// Four edges share one division: with a..d the values 1 + d², r =
	// 1/(ab·cd) gives 1/(ab) = r·cd and 1/(cd) = r·ab, hence 1/a = b/(ab)
	// and so on (a few ulp from four separate divisions; every a ≥ 1). A
	// product beyond 1e300 (distances beyond about 1e37) falls back to
	// separate divisions. Four pairs of accumulators (one per lane) break
	// the dependency chain of the sums; they are combined in a fixed order.
	var ax0, ay0, ax1, ay1, ax2, ay2, ax3, ay3 float64
	k := 0
	for ; k+4 <= len(col); k += 4 {
		j0, j1, j2, j3 := int(col[k]), int(col[k+1]), int(col[k+2]), int(col[k+3])
		dx0, dy0 := xi-y[2*j0], yi-y[2*j0+1]
		dx1, dy1 := xi-y[2*j1], yi-y[2*j1+1]
		dx2, dy2 := xi-y[2*j2], yi-y[2*j2+1]
		dx3, dy3 := xi-y[2*j3], yi-y[2*j3+1]
		a := 1 + dx0*dx0 + dy0*dy0
		b := 1 + dx1*dx1 + dy1*dy1
		c := 1 + dx2*dx2 + dy2*dy2
		d := 1 + dx3*dx3 + dy3*dy3
		ab, cd := a*b, c*d
		abcd := ab * cd
		v := val[k : k+4 : k+4]
		var pw0, pw1, pw2, pw3 float64
		if abcd < 1e300 {
			r := 1 / abcd
			rab, rcd := r*cd, r*ab
			pw0, pw1 = v[0]*(rab*b), v[1]*(rab*a)
			pw2, pw3 = v[2]*(rcd*d), v[3]*(rcd*c)
		} else {
			pw0, pw1, pw2, pw3 = v[0]/a, v[1]/b, v[2]/c, v[3]/d
		}
		ax0 += pw0 * dx0
		ay0 += pw0 * dy0
		ax1 += pw1 * dx1
		ay1 += pw1 * dy1
		ax2 += pw2 * dx2
		ay2 += pw2 * dy2
		ax3 += pw3 * dx3
		ay3 += pw3 * dy3
	}
	ax, ay = (ax0+ax1)+(ax2+ax3), (ay0+ay1)+(ay2+ay3)
	for ; k < len(col); k++ {
		j := int(col[k])
		dx, dy := xi-y[2*j], yi-y[2*j+1]
		pw := val[k] / (1 + dx*dx + dy*dy)
		ax += pw * dx
		ay += pw * dy
	}
	return ax, ay
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
