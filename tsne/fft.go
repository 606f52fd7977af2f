package tsne

import (
	"math"
	"runtime"

	"plumb/internal/par"
)

// FFT computes the t-SNE gradient with FFT-accelerated interpolation
// (Linderman et al. 2019). Attraction is summed exactly over the stored
// entries of P; repulsion and the normalisation Z come from four potentials
// of the kernel K(y, y') = (1 + ‖y − y'‖²)⁻²,
//
//	φ_c(y_i) = Σ_j K(y_i, y_j) q_c(y_j),   q = [1, x, y, x² + y²],
//
// so that
//
//	Σ_j K_ij (y_i − y_j)    = y_i φ_1 − (φ_x, φ_y)
//	Z = Σ_{i≠j} (1 + d_ij²)⁻¹ = Σ_i [(1 + ‖y_i‖²) φ_1 − 2 y_i·(φ_x, φ_y) + φ_{x²+y²}] − N
//
// because (1 + d²)·(1 + d²)⁻² = (1 + d²)⁻¹. The charges are spread onto an
// equispaced grid (the layout's bounding square split into B×B intervals,
// Nodes Lagrange nodes per interval), convolved with the kernel sampled on
// the grid by a zero-padded 2-D FFT (our batched Stockham transform,
// checked against gonum's dsp/fourier), and gathered back with the same
// weights; each point's interpolated self-interaction is removed exactly.
// B is the smallest 3-smooth integer not below max(MinIntervals,
// IntervalsPerUnit · side), at most about MaxIntervals; beyond that cap
// the intervals widen with the layout and the error grows as h^Nodes for
// interval width h.
//
// Accuracy at the defaults (4 nodes, 1.25 intervals per unit): relative
// RMS repulsion error at most 5e-3 and Z within 1e-4 on converged layouts
// below the cap (TestFFTDefaultAccuracy); the table the defaults were
// chosen from is in internal/scripts/bench/README.md.
//
// Cost per evaluation: O(N·Nodes² + nnz(P) + M² log M) for M = Nodes·B
// grid nodes a side; memory O(N + M²). The work is split into fixed tasks
// reduced in task order, so results are bit-identical for any thread
// count; after the first call, calls at the same N with a grid no larger
// than any seen before allocate nothing. Duplicate points are fine. An FFT
// is not safe for concurrent use.
//
// References:
//
//	G. C. Linderman, M. Rachh, J. G. Hoskins, S. Steinerberger, Y. Kluger,
//	"Fast interpolation-based t-SNE for improved visualization of single-cell
//	RNA-seq data", Nature Methods 16, 243–245, 2019.
//	L. van der Maaten, G. Hinton, "Visualizing Data using t-SNE", JMLR 9, 2008.
type FFT struct {
	// MinIntervals is the least number of interpolation intervals per
	// dimension. If it is 0, 50 is used (Linderman et al. 2019).
	MinIntervals int
	// IntervalsPerUnit is the number of intervals per unit of layout extent.
	// If it is 0, DefaultFFTIntervalsPerUnit is used.
	IntervalsPerUnit float64
	// Nodes is the number of Lagrange interpolation nodes per interval and
	// dimension, 2 to 8. If it is 0, DefaultFFTNodes is used. A count that
	// is not a product of 2s and 3s is rounded up to one (5 → 6, 7 → 8).
	Nodes int
	// MaxIntervals caps the intervals per dimension; beyond it the
	// intervals widen with the layout. If it is 0, DefaultFFTMaxIntervals
	// is used.
	MaxIntervals int

	threads int
	pool    *par.Pool
	s       fftState
}

var _ Gradient = (*FFT)(nil)

// NewFFT returns an FFT gradient that uses the given number of threads
// (0 means runtime.GOMAXPROCS(0)).
func NewFFT(threads int) *FFT {
	if threads <= 0 {
		threads = runtime.GOMAXPROCS(0)
	}
	g := &FFT{threads: threads}
	g.pool = par.NewPool(threads)
	g.s.init(threads)
	return g
}

// The defaults of FFT's grid (see FFT).
const (
	DefaultFFTNodes            = 4
	DefaultFFTIntervalsPerUnit = 1.25
	DefaultFFTMaxIntervals     = 432
)

const (
	fftMaxNodes  = 8    // most Lagrange nodes per interval
	fftPointTask = 4096 // points per task
)

// fftState holds every workspace of an FFT evaluation.
type fftState struct {
	// Inputs of the current call.
	y     []float64
	p     *Sparse
	exag  float64
	n     int
	dst   []float64
	zPart []float64 // per point task: partial sums for Z
	// Bounding square.
	x0, y0, h float64 // origin and interval width
	nb        int     // intervals per dimension
	np        int     // Lagrange nodes per interval
	m         int     // grid nodes per dimension (np·nb)
	l         int     // padded FFT length (2m)
	hl        int     // l/2 + 1
	// Per point.
	box   []int32   // interval index by·nb + bx
	wts   []float64 // 2·np per point: wx0..np−1, wy0..np−1
	order []int32   // points sorted by box (stable)
	start []int32   // nb² + 1 box starts into order
	rep   []float64 // 2 per point: y_i φ_1 − (φ_x, φ_y)
	// Grid.
	charge []float64       // m×m nodes (row = y node) × 4 channels, interleaved
	pot    []float64       // the potentials, laid out as charge
	half   [2][]complex128 // l × nsx·fftBatch: channels 2q + i·(2q+1) transformed along y, by strips
	khat   []float64       // hl×hl: the kernel's transform at frequencies ≤ l/2 (it is real and even)
	plan   *fftPlan        // length l
	nsx    int             // strips of fftBatch grid columns (x < m)
	nsy    int             // strips of fftBatch rows of half (all l)
	// Per worker.
	work []fftWorker
	// Stored task functions (method values allocate when created).
	fnBounds, fnPrep, fnSpread, fnKRows, fnKCols, fnColsFwd, fnRowsConv, fnColsInv, fnGather, fnFinish func(w, t int)

	mins  []float64 // 4 per point task
	zinv  float64
	kself [fftMaxNodes * fftMaxNodes]float64 // kernel between nodes of one interval, [dy·np + dx] apart
	lagT  [fftMaxNodes]float64               // node positions (c + ½)/np within an interval
	lagD  [fftMaxNodes]float64               // 1 / Π_{e≠c} (t_c − t_e)
	kh    float64                            // interval width of the kernel transform in khat
	knb   int                                // interval count of khat (0: none)
}

type fftWorker struct {
	buf, tmp []complex128 // l·fftBatch each: a strip and the transform's scratch

}

func (s *fftState) init(threads int) {
	s.work = make([]fftWorker, threads)
	s.fnBounds = s.taskBounds
	s.fnPrep = s.taskPrep
	s.fnSpread = s.taskSpread
	s.fnKCols = s.taskKernelCols
	s.fnKRows = s.taskKernelRows
	s.fnColsFwd = s.taskColsFwd
	s.fnRowsConv = s.taskRowsConv
	s.fnColsInv = s.taskColsInv
	s.fnGather = s.taskGather
	s.fnFinish = s.taskFinish
}

func fftGrowF(b []float64, n int) []float64 {
	if cap(b) < n {
		return make([]float64, n)
	}
	return b[:n]
}

func fftGrowI(b []int32, n int) []int32 {
	if cap(b) < n {
		return make([]int32, n)
	}
	return b[:n]
}

func fftGrowC(b []complex128, n int) []complex128 {
	if cap(b) < n {
		return make([]complex128, n)
	}
	return b[:n]
}

// fftSmooth returns the smallest integer ≥ n whose only prime factors are
// 2 and 3.
func fftSmooth(n int) int {
	if n < 1 {
		n = 1
	}
	for ; ; n++ {
		k := n
		for _, p := range [2]int{2, 3} {
			for k%p == 0 {
				k /= p
			}
		}
		if k == 1 {
			return n
		}
	}
}

// Gradient implements Gradient. See the type's documentation.
func (g *FFT) Gradient(dst, y []float64, p *Sparse, exaggeration float64) ([]float64, float64) {
	n := len(y) / 2
	if len(y) != 2*n || p == nil || p.N != n {
		panic("tsne: layout and P sizes differ")
	}
	if dst == nil {
		dst = make([]float64, 2*n)
	} else if len(dst) != 2*n {
		panic("tsne: destination length mismatch")
	}
	if n == 0 {
		return dst, 0
	}
	s := &g.s
	s.y, s.p, s.exag, s.n, s.dst = y, p, exaggeration, n, dst
	ntask := (n + fftPointTask - 1) / fftPointTask
	s.mins = fftGrowF(s.mins, 4*ntask)
	s.zPart = fftGrowF(s.zPart, ntask)

	// Bounding box.
	g.pool.Run(ntask, s.fnBounds)
	xmin, xmax, ymin, ymax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for t := 0; t < ntask; t++ {
		xmin = math.Min(xmin, s.mins[4*t])
		xmax = math.Max(xmax, s.mins[4*t+1])
		ymin = math.Min(ymin, s.mins[4*t+2])
		ymax = math.Max(ymax, s.mins[4*t+3])
	}
	side := math.Max(xmax-xmin, ymax-ymin)
	if !(side > 1e-12) {
		side = 1e-12 // all points coincide (or NaN): any grid will do
	}
	minB, perUnit, maxB, nodes := g.MinIntervals, g.IntervalsPerUnit, g.MaxIntervals, g.Nodes
	if minB <= 0 {
		minB = 50
	}
	if perUnit <= 0 {
		perUnit = DefaultFFTIntervalsPerUnit
	}
	if maxB <= 0 {
		maxB = DefaultFFTMaxIntervals
	}
	if nodes <= 0 {
		nodes = DefaultFFTNodes
	}
	nodes = fftSmooth(min(max(nodes, 2), fftMaxNodes))
	nb, h := fftIntervals(side, minB, perUnit, maxB)
	s.setGrid(nb, nodes)
	s.x0, s.y0, s.h = xmin, ymin, h
	kernelStale := h != s.kh || nb != s.knb
	if kernelStale {
		s.setLocal()
	}

	// Per-point interval and Lagrange weights; counting sort by interval.
	s.box = fftGrowI(s.box, n)
	s.wts = fftGrowF(s.wts, 2*s.np*n)
	s.order = fftGrowI(s.order, n)
	s.rep = fftGrowF(s.rep, 2*n)
	g.pool.Run(ntask, s.fnPrep)
	nbox := nb * nb
	s.start = fftGrowI(s.start, nbox+1)
	clear(s.start)
	for _, b := range s.box {
		s.start[b+1]++
	}
	for b := 0; b < nbox; b++ {
		s.start[b+1] += s.start[b]
	}
	// Place points; start[b] is used as a cursor and restored after.
	for i, b := range s.box {
		s.order[s.start[b]] = int32(i)
		s.start[b]++
	}
	for b := nbox; b > 0; b-- {
		s.start[b] = s.start[b-1]
	}
	s.start[0] = 0

	// Spread, convolve, gather.
	g.pool.Run(nb, s.fnSpread)
	if kernelStale {
		nk := (s.hl + fftBatch - 1) / fftBatch
		g.pool.Run(nk, s.fnKCols)
		g.pool.Run(nk, s.fnKRows)
		s.kh, s.knb = h, nb
	}
	g.pool.Run(2*s.nsx, s.fnColsFwd)
	g.pool.Run(2*s.nsy, s.fnRowsConv)
	g.pool.Run(2*s.nsx, s.fnColsInv)
	g.pool.Run(ntask, s.fnGather)
	var z float64
	for t := 0; t < ntask; t++ {
		z += s.zPart[t]
	}
	if !(z > math.SmallestNonzeroFloat64) {
		z = math.SmallestNonzeroFloat64
	}
	s.zinv = 1 / z
	g.pool.Run(ntask, s.fnFinish)
	s.y, s.p, s.dst = nil, nil, nil
	return dst, z
}

// fftIntervals returns the number of intervals per dimension and their
// width for a layout whose bounding square has the given side. Once the
// layout spans more than minB intervals of the nominal width 1/perUnit,
// the count follows the extent, min(⌈side·perUnit⌉, maxB) rounded up to a
// 3-smooth number, and the width is side/count (≤ 1/perUnit below the
// cap). Below, minB (rounded up likewise) intervals are used and the
// width is the smallest rung of the ladder 2^(j/16)/perUnit that covers
// the layout (at most 4.4% wider than needed), which keeps the width, and
// so the kernel's transform, unchanged over many iterations of the early,
// compact phase.
func fftIntervals(side float64, minB int, perUnit float64, maxB int) (int, float64) {
	unit := 1 / perUnit
	if side*perUnit > float64(minB) {
		nb := fftSmooth(min(int(math.Ceil(side*perUnit)), max(maxB, minB)))
		return nb, side / float64(nb)
	}
	nb := fftSmooth(minB)
	j := math.Ceil(16 * math.Log2(side/(float64(nb)*unit)))
	h := unit * math.Exp2(j/16)
	for h*float64(nb) < side {
		j++
		h = unit * math.Exp2(j/16)
	}
	return nb, h
}

// setGrid sizes the grid workspaces for nb intervals per dimension and np
// nodes per interval (both 3-smooth, so that the FFT length l = 2·np·nb is
// a product of 2s and 3s).
func (s *fftState) setGrid(nb, np int) {
	if nb == s.nb && np == s.np {
		return
	}
	s.nb, s.np = nb, np
	s.knb = 0 // kernel transform must be redone
	for c := 0; c < np; c++ {
		s.lagT[c] = (float64(c) + 0.5) / float64(np)
	}
	for c := 0; c < np; c++ {
		d := 1.0
		for e := 0; e < np; e++ {
			if e != c {
				d *= s.lagT[c] - s.lagT[e]
			}
		}
		s.lagD[c] = 1 / d
	}
	s.m = np * nb
	s.l = 2 * s.m
	s.hl = s.l/2 + 1
	s.nsx = (s.m + fftBatch - 1) / fftBatch
	s.nsy = (s.l + fftBatch - 1) / fftBatch
	s.charge = fftGrowF(s.charge, 4*s.m*s.m)
	s.pot = fftGrowF(s.pot, 4*s.m*s.m)
	for q := range s.half {
		s.half[q] = fftGrowC(s.half[q], s.l*s.nsx*fftBatch)
	}
	s.khat = fftGrowF(s.khat, s.hl*s.hl)
	s.plan = newFFTPlan(s.l)
	for w := range s.work {
		wk := &s.work[w]
		wk.buf = fftGrowC(wk.buf, s.l*fftBatch)
		wk.tmp = fftGrowC(wk.tmp, s.l*fftBatch)
	}
}

// setLocal fills kself, the kernel between nodes of one interval dy rows
// and dx columns apart.
func (s *fftState) setLocal() {
	np := s.np
	h := s.h / float64(np)
	for dy := 0; dy < np; dy++ {
		for dx := 0; dx < np; dx++ {
			rx, ry := float64(dx)*h, float64(dy)*h
			d := 1 + rx*rx + ry*ry
			s.kself[dy*np+dx] = 1 / (d * d)
		}
	}
}

func (s *fftState) taskRange(t int) (int, int) {
	lo := t * fftPointTask
	return lo, min(lo+fftPointTask, s.n)
}

func (s *fftState) taskBounds(_, t int) {
	lo, hi := s.taskRange(t)
	xmin, xmax, ymin, ymax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for i := lo; i < hi; i++ {
		x, y := s.y[2*i], s.y[2*i+1]
		xmin = math.Min(xmin, x)
		xmax = math.Max(xmax, x)
		ymin = math.Min(ymin, y)
		ymax = math.Max(ymax, y)
	}
	s.mins[4*t], s.mins[4*t+1], s.mins[4*t+2], s.mins[4*t+3] = xmin, xmax, ymin, ymax
}

// lagrange writes into w the Lagrange weights of the np nodes at
// fractions (c + ½)/np of an interval for a point at fraction u:
//
//	w_c(u) = Π_{e≠c} (u − t_e) / (t_c − t_e)
func (s *fftState) lagrange(w []float64, u float64) {
	np := s.np
	var du [fftMaxNodes]float64
	for e := 0; e < np; e++ {
		du[e] = u - s.lagT[e]
	}
	for c := 0; c < np; c++ {
		v := s.lagD[c]
		for e := 0; e < np; e++ {
			if e != c {
				v *= du[e]
			}
		}
		w[c] = v
	}
}

func (s *fftState) taskPrep(_, t int) {
	lo, hi := s.taskRange(t)
	nb, np := s.nb, s.np
	inv := 1 / s.h
	for i := lo; i < hi; i++ {
		fx := (s.y[2*i] - s.x0) * inv
		fy := (s.y[2*i+1] - s.y0) * inv
		bx, by := int(fx), int(fy)
		if bx >= nb {
			bx = nb - 1
		}
		if by >= nb {
			by = nb - 1
		}
		if bx < 0 {
			bx = 0
		}
		if by < 0 {
			by = 0
		}
		s.box[i] = int32(by*nb + bx)
		w := s.wts[2*np*i : 2*np*(i+1) : 2*np*(i+1)]
		s.lagrange(w[:np], fx-float64(bx))
		s.lagrange(w[np:], fy-float64(by))
	}
}

// taskSpread spreads the charges of the points in interval row t onto the
// np grid rows of that interval row. Points are visited in index order
// within each interval, so the sums do not depend on scheduling.
func (s *fftState) taskSpread(_, t int) {
	m, nb, np := s.m, s.nb, s.np
	ch := s.charge
	clear(ch[4*np*t*m : 4*np*(t+1)*m])
	// Charges use coordinates relative to the grid centre (shift
	// invariance of the kernel) to keep x² + y² small.
	cx := s.x0 + 0.5*s.h*float64(nb)
	cy := s.y0 + 0.5*s.h*float64(nb)
	for bx := 0; bx < nb; bx++ {
		b := t*nb + bx
		for _, ii := range s.order[s.start[b]:s.start[b+1]] {
			i := int(ii)
			x, y := s.y[2*i]-cx, s.y[2*i+1]-cy
			q3 := x*x + y*y
			w := s.wts[2*np*i : 2*np*(i+1) : 2*np*(i+1)]
			for a := 0; a < np; a++ {
				row := (np*t+a)*m + np*bx
				for c := 0; c < np; c++ {
					wc := w[np+a] * w[c]
					k := 4 * (row + c)
					q := ch[k : k+4 : k+4]
					q[0] += wc
					q[1] += wc * x
					q[2] += wc * y
					q[3] += wc * q3
				}
			}
		}
	}
}

// fftFold maps a circulant index k of a length-l grid to its distance
// from 0: k for k ≤ l/2, l − k beyond.
func fftFold(k, l int) int {
	if 2*k > l {
		return l - k
	}
	return k
}

// transform runs the plan on in (l·fftBatch long: buf, tmp or a strip of
// the grid) with tmp, or buf if in is tmp, as scratch and returns the
// result and the other buffer.
func (wk *fftWorker) transform(pl *fftPlan, in []complex128, inverse bool) (res, spare []complex128) {
	in = in[:len(wk.tmp)]
	spare = wk.tmp
	if &in[0] == &wk.tmp[0] {
		spare = wk.buf
	}
	res = pl.transform(in, spare, inverse)
	if &res[0] == &spare[0] {
		spare = in
	}
	return res, spare
}

// kernelAt is the kernel sampled on the padded grid in circulant order:
// (1 + d²)⁻² at node offsets (fold(x), fold(y)), and 0 on the offset m row
// and column, which no pair of nodes uses.
func (s *fftState) kernelAt(x, y int) float64 {
	dc, dr := fftFold(x, s.l), fftFold(y, s.l)
	if dc == s.m || dr == s.m {
		return 0
	}
	h := s.h / float64(s.np)
	rx, ry := float64(dc)*h, float64(dr)*h
	d := 1 + rx*rx + ry*ry
	return 1 / (d * d)
}

// taskKernelCols transforms along y the kernel's grid columns x in
// [t·fftBatch, …) ∩ [0, hl) and keeps the (real) transform at y
// frequencies ≤ l/2 in khat. The kernel is even in x and y, so its
// transform is real and even, and a quarter of it is all there is.
func (s *fftState) taskKernelCols(w, t int) {
	wk := &s.work[w]
	l, hl := s.l, s.hl
	x0 := t * fftBatch
	nc := min(fftBatch, hl-x0)
	buf := wk.buf
	for y := 0; y < l; y++ {
		row := buf[y*fftBatch : (y+1)*fftBatch]
		for c := range row {
			row[c] = 0
			if c < nc {
				row[c] = complex(s.kernelAt(x0+c, y), 0)
			}
		}
	}
	res, _ := wk.transform(s.plan, buf, false)
	for ky := 0; ky < hl; ky++ {
		for c := 0; c < nc; c++ {
			s.khat[ky*hl+x0+c] = real(res[ky*fftBatch+c])
		}
	}
}

// taskKernelRows finishes the kernel's transform on the rows
// [t·fftBatch, …) ∩ [0, hl) of khat, in place (a task reads only its rows).
func (s *fftState) taskKernelRows(w, t int) {
	wk := &s.work[w]
	l, hl := s.l, s.hl
	k0 := t * fftBatch
	nr := min(fftBatch, hl-k0)
	buf := wk.buf
	for x := 0; x < l; x++ {
		row := buf[x*fftBatch : (x+1)*fftBatch]
		xf := fftFold(x, l)
		for r := range row {
			row[r] = 0
			if r < nr {
				row[r] = complex(s.khat[(k0+r)*hl+xf], 0)
			}
		}
	}
	res, _ := wk.transform(s.plan, buf, false)
	for r := 0; r < nr; r++ {
		out := s.khat[(k0+r)*hl : (k0+r+1)*hl]
		for kx := range out {
			out[kx] = real(res[kx*fftBatch+r])
		}
	}
}

// The half-transformed grid half[q] is stored by strips of fftBatch
// columns: column x, row ky is at (x/fftBatch)·l·fftBatch + ky·fftBatch +
// x%fftBatch, so the column passes read and write one contiguous block per
// strip and the row pass reads 8×8 blocks. Columns m ≤ x < nsx·fftBatch
// are zero padding.

// taskColsFwd packs charge channels 2q and 2q + 1 (q = t / nsx) of the
// grid columns of strip t % nsx as re + i·im, pads them with zeros to
// length l and transforms them along y into half[q].
func (s *fftState) taskColsFwd(w, t int) {
	wk := &s.work[w]
	l, m := s.l, s.m
	q, x0 := t/s.nsx, (t%s.nsx)*fftBatch
	nc := min(fftBatch, m-x0)
	ch := s.charge[2*q:]
	blk := s.half[q][x0*l : (x0+fftBatch)*l]
	for y := 0; y < m; y++ {
		row := blk[y*fftBatch : (y+1)*fftBatch]
		k := 4 * (y*m + x0)
		for c := range row {
			row[c] = 0
			if c < nc {
				row[c] = complex(ch[k+4*c], ch[k+4*c+1])
			}
		}
	}
	clear(blk[m*fftBatch:])
	if res, _ := wk.transform(s.plan, blk, false); &res[0] != &blk[0] {
		copy(blk, res)
	}
}

// taskRowsConv takes the rows [k0, k0 + fftBatch) ∩ [0, l) of half[q]
// (q = t / nsy), pads them with zeros to length l, transforms them along x,
// multiplies by the kernel's transform, transforms back along x and keeps
// the first m entries.
func (s *fftState) taskRowsConv(w, t int) {
	wk := &s.work[w]
	l, m, hl := s.l, s.m, s.hl
	q, k0 := t/s.nsy, (t%s.nsy)*fftBatch
	nr := min(fftBatch, l-k0)
	half := s.half[q]
	buf := wk.buf
	for x := 0; x < m; x++ {
		blk := half[(x/fftBatch)*fftBatch*l+k0*fftBatch+x%fftBatch:]
		row := buf[x*fftBatch : (x+1)*fftBatch]
		for r := range row {
			row[r] = 0
			if r < nr {
				row[r] = blk[r*fftBatch]
			}
		}
	}
	clear(buf[m*fftBatch:])
	res, _ := wk.transform(s.plan, buf, false)
	var kyf [fftBatch]int
	for r := 0; r < nr; r++ {
		kyf[r] = fftFold(k0+r, l) * hl
	}
	for kx := 0; kx < l; kx++ {
		kxf := fftFold(kx, l)
		row := res[kx*fftBatch : (kx+1)*fftBatch]
		for r := 0; r < nr; r++ {
			k := s.khat[kyf[r]+kxf]
			row[r] = complex(real(row[r])*k, imag(row[r])*k)
		}
	}
	out, _ := wk.transform(s.plan, res, true)
	for x := 0; x < m; x++ {
		blk := half[(x/fftBatch)*fftBatch*l+k0*fftBatch+x%fftBatch:]
		for r := 0; r < nr; r++ {
			blk[r*fftBatch] = out[x*fftBatch+r]
		}
	}
}

// taskColsInv transforms the columns of strip t % nsx of half[q] back along
// y (in place) and keeps the m×m block of potentials of channels 2q (real
// part) and 2q + 1 (imaginary part), scaled by 1/l².
func (s *fftState) taskColsInv(w, t int) {
	wk := &s.work[w]
	l, m := s.l, s.m
	q, x0 := t/s.nsx, (t%s.nsx)*fftBatch
	nc := min(fftBatch, m-x0)
	blk := s.half[q][x0*l : (x0+fftBatch)*l]
	res, _ := wk.transform(s.plan, blk, true)
	scale := 1 / float64(l*l)
	pot := s.pot[2*q:]
	for y := 0; y < m; y++ {
		for c := 0; c < nc; c++ {
			v := res[y*fftBatch+c]
			k := 4 * (y*m + x0 + c)
			pot[k] = real(v) * scale
			pot[k+1] = imag(v) * scale
		}
	}
}

// taskGather interpolates the potentials back to the points of task t,
// writes the exact attraction into dst and the partial Z sum into zPart.
func (s *fftState) taskGather(_, t int) {
	lo, hi := s.taskRange(t)
	m, nb, np := s.m, s.nb, s.np
	pot := s.pot
	cx := s.x0 + 0.5*s.h*float64(nb)
	cy := s.y0 + 0.5*s.h*float64(nb)
	y := s.y
	p := s.p
	var zsum float64
	for i := lo; i < hi; i++ {
		b := int(s.box[i])
		bx, by := b%nb, b/nb
		w := s.wts[2*np*i : 2*np*(i+1) : 2*np*(i+1)]
		var f0, f1, f2, f3 float64
		for a := 0; a < np; a++ {
			row := (np*by+a)*m + np*bx
			for c := 0; c < np; c++ {
				wc := w[np+a] * w[c]
				k := 4 * (row + c)
				q := pot[k : k+4 : k+4]
				f0 += wc * q[0]
				f1 += wc * q[1]
				f2 += wc * q[2]
				f3 += wc * q[3]
			}
		}
		xi, yi := y[2*i], y[2*i+1]
		u, v := xi-cx, yi-cy
		// The interpolated self-interaction K̃_ii (≈ 1) is removed exactly
		// with the same weights, so the i = j term cancels in Z:
		// K̃_ii = Σ_{a,b} W_a W_b K(node_a − node_b) with W the tensor
		// product of the x and y weights, which is
		// Σ_{dx,dy ∈ 0..np−1} K(dx, dy)·Ax(dx)·Ay(dy), where A(d) sums the
		// products of weights d nodes apart (both orders).
		var ax, ay [fftMaxNodes]float64
		for d := 0; d < np; d++ {
			var sx, sy float64
			for c := 0; c+d < np; c++ {
				sx += w[c] * w[c+d]
				sy += w[np+c] * w[np+c+d]
			}
			if d > 0 {
				sx, sy = 2*sx, 2*sy
			}
			ax[d], ay[d] = sx, sy
		}
		var self float64
		for dy := 0; dy < np; dy++ {
			var r float64
			for dx := 0; dx < np; dx++ {
				r += s.kself[dy*np+dx] * ax[dx]
			}
			self += ay[dy] * r
		}
		zsum += (1+u*u+v*v)*f0 - 2*(u*f1+v*f2) + f3 - self
		s.rep[2*i] = u*f0 - f1
		s.rep[2*i+1] = v*f0 - f2
		// Attraction: Σ_j p_ij (1 + d²)⁻¹ (y_i − y_j).
		fx, fy := attraction(y, p, i, xi, yi)
		s.dst[2*i] = fx
		s.dst[2*i+1] = fy
	}
	s.zPart[t] = zsum
}

// taskFinish combines attraction and repulsion:
//
//	∂C/∂y_i = 4 [α Σ_j p_ij (1 + d_ij²)⁻¹ (y_i − y_j) − Z⁻¹ Σ_j (1 + d_ij²)⁻² (y_i − y_j)]
func (s *fftState) taskFinish(_, t int) {
	lo, hi := s.taskRange(t)
	a := 4 * s.exag
	r := 4 * s.zinv
	for k := 2 * lo; k < 2*hi; k++ {
		s.dst[k] = a*s.dst[k] - r*s.rep[k]
	}
}
