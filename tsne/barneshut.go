package tsne

import (
	"math"

	"plumb/internal/par"
)

// BarnesHut computes the t-SNE gradient with the tree approximation of
// van der Maaten (2014): attraction exactly over the stored entries of P,
// repulsion and Z from a quadtree over the layout. A cell of side w whose
// centre of mass c lies at distance d from y_i, with w < θ·d and y_i not in
// the cell (scikit-learn's criterion, w the full side), is summarised by
// its point count m at c plus the quadrupole term of the Taylor expansion
// about c, with second moments M = Σ_{j∈cell} (y_j − c)(y_j − c)ᵀ. With
// Δ = y_i − c and u = 1 + ‖Δ‖²:
//
//	Z_i     += m/u − tr(M)/u² + 4 ΔᵀMΔ/u³
//	F_rep,i += (m/u² − 2 tr(M)/u³ + 12 ΔᵀMΔ/u⁴) Δ − 4 MΔ/u³
//	∂C/∂y_i = 4 (α Σ_j p_ij w_ij (y_i − y_j) − F_rep,i / Z),   Z = Σ_i Z_i
//
// The quadrupole term removes the plain monopole's bias (the kernel is not
// harmonic in two dimensions). Other cells are opened; leaves hold up to
// 64 points and are summed exactly. The points of a leaf share one walk
// (Barnes 1990), tested against the distance from c to the leaf's bounding
// box, so each point sees the cells it would accept alone or finer ones.
// θ = 0 opens every cell (exact sums); larger θ is faster and coarser.
// Coincident points stay in one leaf (cells stop splitting at depth 24)
// and exert no force on each other.
//
// Cost per evaluation: O(N log N) for the tree and the walks plus
// O(nnz(P)) for the attraction; memory O(N). The walks run in parallel
// over fixed chunks and Z is reduced in index order, so the result does not
// depend on the thread count. After the first call at a given N an
// evaluation allocates nothing. A BarnesHut is not safe for concurrent use.
// Measurements (accuracy by θ, leaf size, build time) are in
// internal/scripts/bench/README.md.
//
// References:
//
//	L. van der Maaten, "Accelerating t-SNE using Tree-Based Algorithms",
//	JMLR 15, 2014.
//	J. Barnes, P. Hut, "A hierarchical O(N log N) force-calculation
//	algorithm", Nature 324, 1986.
//	J. E. Barnes, "A modified tree code: don't laugh; it runs", J. Comp.
//	Phys. 87, 1990.
type BarnesHut struct {
	theta float64
	pool  *par.Pool

	// per-call inputs
	y     []float64
	p     *Sparse
	alpha float64
	dst   []float64

	nodes []bhNode
	perm  []int32  // points in tree order
	permN int      // len(perm) of the last build: perm is a permutation of it
	keys  []uint64 // the points' Morton keys, in tree order
	perm2 []int32  // the radix sort's second buffers
	keys2 []uint64
	ys    []float64 // coordinates in tree order
	rep   []float64
	zRow  []float64

	leaves  []int32 // leaf nodes in tree order
	scratch chan *bhScratch

	firstFn func(worker, chunk int) // tree build and attraction
	rowsFn  func(worker, chunk int) // tree walks
}

// bhScratch holds one worker's interaction lists for a group of points.
type bhScratch struct {
	cells  cellList  // nodes summarised by their expansion
	direct []int32   // point ranges [lo, hi) summed exactly, as pairs
	near   []float64 // coordinates of the points summed exactly
}

var _ Gradient = (*BarnesHut)(nil)

// DefaultTheta is the default Barnes-Hut opening angle: the largest θ, in
// steps of 0.1, at which the repulsion is at least as accurate as
// scikit-learn 1.2.1's Barnes-Hut at its default θ = 0.5 on the three
// digits layouts of testdata/sklearn_bh (TestDefaultThetaAccuracy; the
// errors are in internal/scripts/bench/README.md).
const DefaultTheta = 0.8

type bhNode struct {
	cx, cy        float64 // centre of mass
	mass          float64 // number of points
	crit          float64 // width²/θ²: the cell is summarised when crit < d²
	mxx, mxy, myy float64 // second moments about the centre of mass
	lo, hi        int32   // points perm[lo:hi]
	child         int32   // first child, −1 for a leaf
	nchild        int32   // number of (non-empty) children, stored consecutively
}

const (
	bhLeafChunk = 4 // leaves (groups) per parallel chunk
	bhLeafSize  = 64
	bhKeyBits   = 24 // bits of each quantised coordinate in a key
	bhMaxDepth  = bhKeyBits
)

// NewBarnesHut returns a Barnes-Hut gradient with opening angle theta
// (θ ≥ 0; 0.5 is the usual choice) using up to threads goroutines (0 means
// runtime.GOMAXPROCS(0)). A negative or NaN theta panics.
func NewBarnesHut(theta float64, threads int) *BarnesHut {
	if !(theta >= 0) {
		panic("tsne: negative Barnes-Hut theta")
	}
	g := &BarnesHut{theta: theta, pool: par.NewPool(threads)}
	g.scratch = make(chan *bhScratch, g.pool.Threads())
	for t := 0; t < g.pool.Threads(); t++ {
		// Sized for typical lists so that steady-state calls do not
		// allocate; append grows them if a group needs more.
		g.scratch <- &bhScratch{cells: cellList{buf: make([]float64, 0, 1024*cellBlockLen)}, direct: make([]int32, 0, 1024), near: make([]float64, 0, 8192)}
	}
	g.firstFn = g.first
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
		g.keys = make([]uint64, n)
		g.perm2 = make([]int32, n)
		g.keys2 = make([]uint64, n)
		g.ys = make([]float64, 2*n)
		g.nodes = make([]bhNode, 0, 2*n+64)
	}
	g.zRow = g.zRow[:n]
	g.rep = g.rep[:2*n]
	g.perm = g.perm[:n]
	g.keys = g.keys[:n]
	g.perm2 = g.perm2[:n]
	g.keys2 = g.keys2[:n]
	g.ys = g.ys[:2*n]
	g.nodes = g.nodes[:0]
	g.leaves = g.leaves[:0]
}

// Gradient implements Gradient; the returned Z is the tree approximation.
func (g *BarnesHut) Gradient(dst, y []float64, p *Sparse, exaggeration float64) ([]float64, float64) {
	n := len(y) / 2
	dst = checkGradientArgs(dst, y, p)
	g.Reset(n)
	if n == 0 {
		return dst, 0
	}
	g.y, g.p, g.alpha, g.dst = y, p, exaggeration, dst
	// First pass: chunk 0 builds the tree (sequential) while the other
	// threads compute the attraction, which does not need it; second pass:
	// the tree walks. The outputs are disjoint (tree, dst, rep and zRow).
	g.pool.Run(1+numChunks(n, chunkRows), g.firstFn)
	g.pool.Run(numChunks(len(g.leaves), bhLeafChunk), g.rowsFn)
	z := 0.0
	for _, v := range g.zRow {
		z += v
	}
	combineGradient(dst, g.rep, z)
	g.y, g.p, g.dst = nil, nil, nil
	return dst, z
}

// build constructs the quadtree over y. Each point gets a key that
// interleaves the bits of its coordinates quantised to bhKeyBits bits over
// the root square (a Morton code, y bits above x bits), so that sorting
// the points by (key, index) lists them in tree order: the quadrants of a
// cell in the order x < mid and y < mid, x ≥ mid and y < mid, x < mid and
// y ≥ mid, then the rest, and a cell's points contiguous. Layouts move
// little between iterations, so the sort starts from the previous call's
// order with an insertion sort, or, when that would move more than a few
// points per point, with a radix sort. Either way the order is the same,
// a function of the layout alone. Points whose keys agree (closer than
// the root side / 2^24) share a leaf.
func (g *BarnesHut) build(y []float64) {
	n := len(y) / 2
	minX, minY := math.Inf(1), math.Inf(1)
	maxX, maxY := math.Inf(-1), math.Inf(-1)
	for i := 0; i < n; i++ {
		// Plain comparisons (the min and max builtins order NaN and ±0
		// and cost twice as much here): a NaN coordinate is skipped and
		// its key clamped below.
		x, v := y[2*i], y[2*i+1]
		if x < minX {
			minX = x
		}
		if x > maxX {
			maxX = x
		}
		if v < minY {
			minY = v
		}
		if v > maxY {
			maxY = v
		}
	}
	side := max(maxX-minX, maxY-minY)
	if !(side >= 0) { // no finite coordinate
		minX, minY, side = 0, 0, 1
	}
	side = side*(1+1e-9) + 1e-300
	scale := (1 << bhKeyBits) / side
	perm, keys := g.perm, g.keys
	if g.permN != n {
		for i := range perm {
			perm[i] = int32(i)
		}
		g.permN = n
	}
	descents := 0
	prev := uint64(0)
	for k, i := range perm {
		key := bhKey((y[2*i]-minX)*scale, (y[2*i+1]-minY)*scale)
		keys[k] = key
		if key < prev {
			descents++
		}
		prev = key
	}
	// Late in a run the previous order is nearly right and the insertion
	// sort moves under one point per point; early on points pass each
	// other by the hundred, and a radix sort is cheaper.
	if descents > n/16 || !insertionSortKeys(keys, perm, 4*n+64) {
		radixSortKeys(keys, perm, g.keys2, g.perm2, 2*bhKeyBits)
	}
	ys := g.ys
	for k, i := range perm {
		ys[2*k], ys[2*k+1] = y[2*i], y[2*i+1]
	}
	g.nodes = append(g.nodes, bhNode{})
	g.split(0, 0, int32(n), side, 0)
}

// bhKey returns the Morton key of a point whose coordinates, scaled to the
// root square, are fx and fy (in [0, 2^bhKeyBits); values outside, and
// NaN, are clamped).
func bhKey(fx, fy float64) uint64 {
	return spreadBits(bhQuant(fx)) | spreadBits(bhQuant(fy))<<1
}

func bhQuant(f float64) uint64 {
	const top = 1<<bhKeyBits - 1
	if !(f < top) { // NaN included
		return top
	}
	if !(f > 0) {
		return 0
	}
	return uint64(f)
}

// spreadBits moves bit b of v (v < 2^24) to bit 2b.
func spreadBits(v uint64) uint64 {
	return uint64(spreadByte[v&255]) | uint64(spreadByte[v>>8&255])<<16 | uint64(spreadByte[v>>16&255])<<32
}

// spreadByte[v] has bit b of v at bit 2b.
var spreadByte = func() (t [256]uint16) {
	for v := range t {
		for b := 0; b < 8; b++ {
			t[v] |= uint16(v>>b&1) << (2 * b)
		}
	}
	return t
}()

// insertionSortKeys sorts keys with perm by (key, perm) and reports true,
// or gives up once it has moved more than budget elements in total and
// reports false (the order is then partly sorted).
func insertionSortKeys(keys []uint64, perm []int32, budget int) bool {
	for k := 1; k < len(keys); k++ {
		key, p := keys[k], perm[k]
		j := k
		for j > 0 && (keys[j-1] > key || keys[j-1] == key && perm[j-1] > p) {
			keys[j], perm[j] = keys[j-1], perm[j-1]
			j--
		}
		keys[j], perm[j] = key, p
		if budget -= k - j; budget < 0 {
			return false
		}
	}
	return true
}

// radixSortKeys sorts keys with perm by (key, perm), the keys' bits below
// shift (a multiple of 8) being the only ones that may differ: a stable
// counting sort on the top byte of those bits through the buffers keys2
// and perm2, then each bucket likewise on the next byte, and buckets of at
// most 32 points by insertion.
func radixSortKeys(keys []uint64, perm []int32, keys2 []uint64, perm2 []int32, shift uint) {
	for {
		if len(keys) <= 32 || shift == 0 {
			insertionSortKeys(keys, perm, math.MaxInt)
			return
		}
		shift -= 8
		var cnt [256]int32
		for _, k := range keys {
			cnt[k>>shift&255]++
		}
		if int(cnt[keys[0]>>shift&255]) == len(keys) {
			continue // one bucket: on to the next byte
		}
		var off [256]int32
		o := int32(0)
		for b, c := range cnt {
			off[b] = o
			o += c
		}
		for e, k := range keys {
			b := k >> shift & 255
			d := off[b]
			off[b] = d + 1
			keys2[d], perm2[d] = k, perm[e]
		}
		copy(keys, keys2[:len(keys)])
		copy(perm, perm2[:len(perm)])
		lo := int32(0)
		for _, c := range cnt {
			if c > 1 {
				radixSortKeys(keys[lo:lo+c], perm[lo:lo+c], keys2, perm2, shift)
			}
			lo += c
		}
		return
	}
}

// split fills node idx for points perm[lo:hi] (never empty, sorted by key)
// in a square cell of the given side at the given depth, recursing into
// the non-empty quadrants; empty quadrants get no node.
func (g *BarnesHut) split(idx int, lo, hi int32, side float64, depth int) {
	crit := side * side / (g.theta * g.theta)
	if hi-lo <= bhLeafSize || depth >= bhMaxDepth {
		ys := g.ys
		var sx, sy float64
		for k := lo; k < hi; k++ {
			sx += ys[2*k]
			sy += ys[2*k+1]
		}
		m := float64(hi - lo)
		nd := bhNode{mass: m, crit: crit, lo: lo, hi: hi, child: -1}
		nd.cx, nd.cy = sx/m, sy/m
		if m > 1 {
			for k := lo; k < hi; k++ {
				dx, dy := ys[2*k]-nd.cx, ys[2*k+1]-nd.cy
				nd.mxx += dx * dx
				nd.mxy += dx * dy
				nd.myy += dy * dy
			}
		}
		g.nodes[idx] = nd
		g.leaves = append(g.leaves, int32(idx))
		return
	}
	// The keys of the cell agree above this depth's two bits, so the
	// quadrants are runs of the sorted keys; each starts at the first key
	// whose two bits reach the quadrant number.
	shift := uint(2 * (bhKeyBits - 1 - depth))
	keys := g.keys
	var bounds [5]int32
	bounds[0], bounds[4] = lo, hi
	for q := uint64(1); q < 4; q++ {
		a, b := bounds[q-1], hi
		for a < b {
			m := int32(uint32(a+b) >> 1)
			if keys[m]>>shift&3 < q {
				a = m + 1
			} else {
				b = m
			}
		}
		bounds[q] = a
	}
	h := side / 2
	nc := 0
	for q := 0; q < 4; q++ {
		if bounds[q] < bounds[q+1] {
			nc++
		}
	}
	child := len(g.nodes)
	for q := 0; q < nc; q++ {
		g.nodes = append(g.nodes, bhNode{})
	}
	c := child
	for q := 0; q < 4; q++ {
		if bounds[q] < bounds[q+1] {
			g.split(c, bounds[q], bounds[q+1], h, depth+1)
			c++
		}
	}
	var sx, sy, m float64
	for c := child; c < child+nc; c++ {
		nd := &g.nodes[c]
		sx += nd.mass * nd.cx
		sy += nd.mass * nd.cy
		m += nd.mass
	}
	nd := bhNode{cx: sx / m, cy: sy / m, mass: m, crit: crit, lo: lo, hi: hi, child: int32(child), nchild: int32(nc)}
	for c := child; c < child+nc; c++ {
		ch := &g.nodes[c]
		dx, dy := ch.cx-nd.cx, ch.cy-nd.cy
		nd.mxx += ch.mxx + ch.mass*dx*dx
		nd.mxy += ch.mxy + ch.mass*dx*dy
		nd.myy += ch.myy + ch.mass*dy*dy
	}
	g.nodes[idx] = nd
}

// rows runs the traversal for one chunk of leaves. The points of a leaf
// form a group that shares one walk of the tree: a cell is summarised when
// its width²/θ² is below the squared distance from its centre of mass to
// the group's bounding box, which implies the per-point criterion for every
// point of the group; the resulting lists of cells and of leaves to sum
// exactly are then evaluated for each point of the group without further
// tests. Each point's sums depend only on the tree, not on the chunking.
func (g *BarnesHut) rows(_, chunk int) {
	sc := <-g.scratch
	defer func() { g.scratch <- sc }()
	nodes, ys := g.nodes, g.ys
	lo, hi := chunk*bhLeafChunk, min((chunk+1)*bhLeafChunk, len(g.leaves))
	var stack [4*bhMaxDepth + 8]int32
	for _, leaf := range g.leaves[lo:hi] {
		gl, gh := nodes[leaf].lo, nodes[leaf].hi
		bx0, by0 := math.Inf(1), math.Inf(1)
		bx1, by1 := math.Inf(-1), math.Inf(-1)
		for q := gl; q < gh; q++ {
			x, v := ys[2*q], ys[2*q+1]
			bx0, bx1 = min(bx0, x), max(bx1, x)
			by0, by1 = min(by0, v), max(by1, v)
		}
		cells, direct := &sc.cells, sc.direct[:0]
		cells.reset()
		sp := 1
		stack[0] = 0
		for sp > 0 {
			sp--
			idx := stack[sp]
			nd := &nodes[idx]
			if nd.lo <= gl && gh <= nd.hi {
				// The group's own leaf or one of its ancestors.
				for c := nd.child + nd.nchild - 1; c >= nd.child && nd.child >= 0; c-- {
					stack[sp] = c
					sp++
				}
				continue
			}
			ex := max(bx0-nd.cx, nd.cx-bx1, 0)
			ey := max(by0-nd.cy, nd.cy-by1, 0)
			if nd.crit < ex*ex+ey*ey {
				cells.add(nd)
				continue
			}
			if nd.child < 0 {
				if m := len(direct); m > 0 && direct[m-1] == nd.lo {
					direct[m-1] = nd.hi // adjacent in tree order: one range
				} else {
					direct = append(direct, nd.lo, nd.hi)
				}
				continue
			}
			for c := nd.child + nd.nchild - 1; c >= nd.child; c-- {
				stack[sp] = c
				sp++
			}
		}
		sc.direct = direct
		// The points of the leaves summed exactly, the group's own leaf
		// last, copied into one run so that each point makes one call.
		near := sc.near[:0]
		for e := 0; e+1 < len(direct); e += 2 {
			near = append(near, ys[2*direct[e]:2*direct[e+1]]...)
		}
		near = append(near, ys[2*gl:2*gh]...)
		for len(near)&15 != 0 {
			near = append(near, farPoint, farPoint) // whole blocks of eight
		}
		sc.near = near
		for k := gl; k < gh; k++ {
			xi, yi := ys[2*k], ys[2*k+1]
			zi, rx, ry := sumCells(xi, yi, cells)
			z, x, v := sumDirect(xi, yi, near)
			// The point itself is in near: w = 1 exactly and no force, so
			// its term is removed by subtracting 1.
			zi += z - 1
			rx += x
			ry += v
			i := g.perm[k]
			g.zRow[i] = zi
			g.rep[2*i], g.rep[2*i+1] = rx, ry
		}
	}
}

// first runs chunk c of the first pass: the tree build for c = 0,
// attraction chunk c − 1 otherwise.
func (g *BarnesHut) first(_, c int) {
	if c == 0 {
		g.build(g.y)
		return
	}
	g.attr(c - 1)
}

// attr computes α times the attraction for one chunk of points (in index
// order, a pass of its own so that the rows of P stream through the cache
// without evicting the tree).
func (g *BarnesHut) attr(chunk int) {
	lo, hi := chunk*chunkRows, min((chunk+1)*chunkRows, len(g.perm))
	y := g.y
	for i := lo; i < hi; i++ {
		ax, ay := attraction(y, g.p, i, y[2*i], y[2*i+1])
		g.dst[2*i], g.dst[2*i+1] = g.alpha*ax, g.alpha*ay
	}
}
