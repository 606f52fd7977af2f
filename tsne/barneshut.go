package tsne

import "math"

// BarnesHut computes the t-SNE gradient with the tree approximation of
// van der Maaten (2014): attraction exactly over the stored entries of P,
// repulsion and Z from a quadtree over the layout. A cell of side w whose
// centre of mass c lies at distance d from y_i, with w < θ·d and y_i not in
// the cell (the criterion of scikit-learn's quadtree, w the full side), is
// summarised by its point count m placed at c plus the quadrupole term of
// the Taylor expansion about c, using the second moments
// M = Σ_{j∈cell} (y_j − c)(y_j − c)ᵀ (the dipole term vanishes at the centre
// of mass). With Δ = y_i − c and u = 1 + ‖Δ‖²:
//
//	Z_i     += m/u − tr(M)/u² + 4 ΔᵀMΔ/u³
//	F_rep,i += (m/u² − 2 tr(M)/u³ + 12 ΔᵀMΔ/u⁴) Δ − 4 MΔ/u³
//	∂C/∂y_i = 4 (α Σ_j p_ij w_ij (y_i − y_j) − F_rep,i / Z),   Z = Σ_i Z_i
//
// The kernel (1 + d²)⁻¹ is not harmonic in two dimensions, so the plain
// monopole is biased (it underestimates Z by about ⟨s²⟩/d² per cell); the
// quadrupole term removes that bias and cuts the gradient error at θ = 0.5
// by roughly a factor of 7 on a random layout for a few extra flops per cell.
//
// Other cells are opened; leaves hold up to 8 points and sum exactly.
// θ = 0 opens every cell (exact sums through the tree); larger θ is faster
// and coarser. The tree is built sequentially by recursive splitting into
// quadrants (O(N log N)); the per-point traversals run in parallel over fixed
// chunks and Z is reduced in index order, so the bits do not depend on the
// thread count. Cells stop splitting at depth 48, which keeps coincident
// points (duplicates) in one leaf where they exert no force on each other.
//
// Cost per evaluation: O(N log N) for the tree and traversal plus O(nnz(P)).
//
// References: L. van der Maaten, "Accelerating t-SNE using Tree-Based
// Algorithms", JMLR 15, 2014; J. Barnes & P. Hut, "A hierarchical O(N log N)
// force-calculation algorithm", Nature 324, 1986.
type BarnesHut struct {
	theta  float64
	runner *chunkRunner

	// per-call inputs
	y     []float64
	p     *Sparse
	alpha float64
	dst   []float64

	nodes []bhNode
	perm  []int32   // points in tree order
	pos   []int32   // pos[i] = index of point i in perm
	ys    []float64 // coordinates in tree order
	rep   []float64
	zRow  []float64

	rowsFn func(chunk int)
}

var _ Gradient = (*BarnesHut)(nil)

type bhNode struct {
	cx, cy        float64 // centre of mass
	mass          float64 // number of points
	width         float64 // side of the square cell
	mxx, mxy, myy float64 // second moments about the centre of mass
	lo, hi        int32   // points perm[lo:hi]
	child         int32   // first of four children, −1 for a leaf
}

const (
	bhLeafSize = 8
	bhMaxDepth = 48
)

// NewBarnesHut returns a Barnes-Hut gradient with opening angle theta
// (θ ≥ 0; 0.5 is the usual choice) using up to threads goroutines (0 means
// runtime.GOMAXPROCS(0)). A negative or NaN theta panics.
func NewBarnesHut(theta float64, threads int) *BarnesHut {
	if !(theta >= 0) {
		panic("tsne: negative Barnes-Hut theta")
	}
	g := &BarnesHut{theta: theta, runner: newChunkRunner(threads)}
	g.rowsFn = g.rows
	return g
}

// Theta returns the opening angle.
func (g *BarnesHut) Theta() float64 { return g.theta }

// Reset sizes the workspace for n points; Gradient calls it as needed.
func (g *BarnesHut) Reset(n int) {
	if cap(g.zRow) < n {
		g.zRow = make([]float64, n)
		g.rep = make([]float64, 2*n)
		g.perm = make([]int32, n)
		g.pos = make([]int32, n)
		g.ys = make([]float64, 2*n)
		g.nodes = make([]bhNode, 0, 2*n+64)
	}
	g.zRow = g.zRow[:n]
	g.rep = g.rep[:2*n]
	g.perm = g.perm[:n]
	g.pos = g.pos[:n]
	g.ys = g.ys[:2*n]
	g.nodes = g.nodes[:0]
}

// Gradient implements Gradient; the returned Z is the tree approximation.
func (g *BarnesHut) Gradient(dst, y []float64, p *Sparse, exaggeration float64) ([]float64, float64) {
	n := len(y) / 2
	dst = checkGradientArgs(dst, y, p)
	g.Reset(n)
	if n == 0 {
		return dst, 0
	}
	g.build(y)
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

// build constructs the quadtree over y.
func (g *BarnesHut) build(y []float64) {
	n := len(y) / 2
	minX, minY := math.Inf(1), math.Inf(1)
	maxX, maxY := math.Inf(-1), math.Inf(-1)
	for i := 0; i < n; i++ {
		x, v := y[2*i], y[2*i+1]
		minX, maxX = min(minX, x), max(maxX, x)
		minY, maxY = min(minY, v), max(maxY, v)
		g.perm[i] = int32(i)
	}
	side := max(maxX-minX, maxY-minY)
	side = side*(1+1e-9) + 1e-300
	g.nodes = append(g.nodes, bhNode{})
	g.split(0, y, 0, int32(n), minX, minY, side, 0)
	for k, i := range g.perm {
		g.pos[i] = int32(k)
		g.ys[2*k], g.ys[2*k+1] = y[2*i], y[2*i+1]
	}
}

// split fills node idx for points perm[lo:hi] in the square cell with
// lower-left corner (x0, y0) and the given side, recursing into quadrants.
func (g *BarnesHut) split(idx int, y []float64, lo, hi int32, x0, y0, side float64, depth int) {
	if hi-lo <= bhLeafSize || depth >= bhMaxDepth {
		var sx, sy float64
		for k := lo; k < hi; k++ {
			i := g.perm[k]
			sx += y[2*i]
			sy += y[2*i+1]
		}
		m := float64(hi - lo)
		nd := bhNode{mass: m, width: side, lo: lo, hi: hi, child: -1}
		if m > 0 {
			nd.cx, nd.cy = sx/m, sy/m
		}
		if m > 1 {
			for k := lo; k < hi; k++ {
				i := g.perm[k]
				dx, dy := y[2*i]-nd.cx, y[2*i+1]-nd.cy
				nd.mxx += dx * dx
				nd.mxy += dx * dy
				nd.myy += dy * dy
			}
		}
		g.nodes[idx] = nd
		return
	}
	h := side / 2
	mx, my := x0+h, y0+h
	m1 := g.partition(y, lo, hi, 1, my)
	m0 := g.partition(y, lo, m1, 0, mx)
	m2 := g.partition(y, m1, hi, 0, mx)
	child := len(g.nodes)
	g.nodes = append(g.nodes, bhNode{}, bhNode{}, bhNode{}, bhNode{})
	g.split(child, y, lo, m0, x0, y0, h, depth+1)
	g.split(child+1, y, m0, m1, mx, y0, h, depth+1)
	g.split(child+2, y, m1, m2, x0, my, h, depth+1)
	g.split(child+3, y, m2, hi, mx, my, h, depth+1)
	var sx, sy, m float64
	for c := child; c < child+4; c++ {
		nd := &g.nodes[c]
		sx += nd.mass * nd.cx
		sy += nd.mass * nd.cy
		m += nd.mass
	}
	nd := bhNode{cx: sx / m, cy: sy / m, mass: m, width: side, lo: lo, hi: hi, child: int32(child)}
	for c := child; c < child+4; c++ {
		ch := &g.nodes[c]
		if ch.mass == 0 {
			continue
		}
		dx, dy := ch.cx-nd.cx, ch.cy-nd.cy
		nd.mxx += ch.mxx + ch.mass*dx*dx
		nd.mxy += ch.mxy + ch.mass*dx*dy
		nd.myy += ch.myy + ch.mass*dy*dy
	}
	g.nodes[idx] = nd
}

// partition reorders perm[lo:hi] so that points with coordinate axis below
// cut come first, and returns the boundary.
func (g *BarnesHut) partition(y []float64, lo, hi int32, axis int, cut float64) int32 {
	i, j := lo, hi-1
	for i <= j {
		if y[2*int(g.perm[i])+axis] < cut {
			i++
			continue
		}
		g.perm[i], g.perm[j] = g.perm[j], g.perm[i]
		j--
	}
	return i
}

// rows runs the traversal for one chunk of points (in tree order, for
// locality; each point's sums are independent of the order).
func (g *BarnesHut) rows(chunk int) {
	n := len(g.perm)
	lo, hi := chunk*chunkRows, min((chunk+1)*chunkRows, n)
	theta2 := g.theta * g.theta
	var stack [4*bhMaxDepth + 8]int32
	for k := lo; k < hi; k++ {
		i := int(g.perm[k])
		xi, yi := g.ys[2*k], g.ys[2*k+1]
		pk := int32(k)
		var zi, rx, ry float64
		sp := 1
		stack[0] = 0
		for sp > 0 {
			sp--
			nd := &g.nodes[stack[sp]]
			if nd.mass == 0 {
				continue
			}
			inside := nd.lo <= pk && pk < nd.hi
			if !inside {
				dx, dy := xi-nd.cx, yi-nd.cy
				d2 := dx*dx + dy*dy
				if nd.width*nd.width < theta2*d2 {
					// Monopole plus quadrupole terms of the expansion
					// about the centre of mass (the dipole term vanishes).
					w := 1 / (1 + d2)
					w2 := w * w
					tr := nd.mxx + nd.myy
					dmd := dx*dx*nd.mxx + 2*dx*dy*nd.mxy + dy*dy*nd.myy
					zi += nd.mass*w - tr*w2 + 4*dmd*w2*w
					mdx := nd.mxx*dx + nd.mxy*dy
					mdy := nd.mxy*dx + nd.myy*dy
					s := nd.mass*w2 - 2*tr*w2*w + 12*dmd*w2*w2
					rx += s*dx - 4*mdx*w2*w
					ry += s*dy - 4*mdy*w2*w
					continue
				}
			}
			if nd.child < 0 {
				for q := nd.lo; q < nd.hi; q++ {
					if q == pk {
						continue
					}
					dx, dy := xi-g.ys[2*q], yi-g.ys[2*q+1]
					w := 1 / (1 + dx*dx + dy*dy)
					zi += w
					w2 := w * w
					rx += w2 * dx
					ry += w2 * dy
				}
				continue
			}
			c := nd.child
			stack[sp], stack[sp+1], stack[sp+2], stack[sp+3] = c+3, c+2, c+1, c
			sp += 4
		}
		g.zRow[i] = zi
		g.rep[2*i], g.rep[2*i+1] = rx, ry
		ax, ay := attraction(g.y, g.p, i, g.y[2*i], g.y[2*i+1])
		g.dst[2*i], g.dst[2*i+1] = g.alpha*ax, g.alpha*ay
	}
}
