package tsne

import "math"

// The inner loops that dominate a run live here: direct sums over runs of
// points, attraction over a row of P and the expansions of summarised cells
// (the Barnes-Hut and exact gradients), the squared distances of the exact
// neighbour search, and the KL divergence's row sums. Each processes its
// input in blocks of lanes (eight for direct sums and cells, four for the
// others): the generic Go code below spells the lanes out, and on amd64 an
// assembly version (kernels_amd64.s) does the same operations in vector
// registers, with AVX2, or with AVX-512 for the eight-lane kernels where
// the CPU has it (on a 2-core AMD EPYC of 2026 the AVX-512 direct sum took
// 0.24 ns a pair against 0.44 ns for AVX2). All paths perform the same
// IEEE operations in the same order (true divisions; fused multiply-adds
// only in the direct sums, where math.FMA gives the Go code the same
// single rounding), so their results are bit-identical and a layout does
// not depend on which one ran; TestKernelsMatchGeneric and its neighbours
// check this. Build with the purego tag to leave the assembly out.
//
// Four-lane sums are combined as (l0 + l2) + (l1 + l3), the order of the
// assembly's horizontal reduction; the eight-lane kernels state theirs.

// sumDirect returns the exact sums
//
//	z = Σ_j w_j,   rx = Σ_j w_j² (xi − x_j),   ry = Σ_j w_j² (yi − y_j),   w_j = 1/(1 + (xi − x_j)² + (yi − y_j)²)
//
// over the points (flat x, y pairs) in ys: whole blocks of eight points in
// eight lanes, then the remaining points in order.
func sumDirect(xi, yi float64, ys []float64) (z, rx, ry float64) {
	m := len(ys) &^ 15
	if m > 0 {
		switch {
		case useAVX512:
			z, rx, ry = direct8AVX512(xi, yi, ys[:m])
		case useAVX2:
			z, rx, ry = direct8AVX2(xi, yi, ys[:m])
		default:
			z, rx, ry = direct8Generic(xi, yi, ys[:m])
		}
	}
	for q := m; q+2 <= len(ys); q += 2 {
		dx, dy := xi-ys[q], yi-ys[q+1]
		w := 1 / (1 + dx*dx + dy*dy)
		z += w
		w *= w
		rx += w * dx
		ry += w * dy
	}
	return z, rx, ry
}

// farPoint is a coordinate so far from any layout that a point at
// (farPoint, farPoint) adds exactly nothing to sumDirect: (xi − farPoint)²
// overflows to +Inf, so w = 0, and 0·(xi − farPoint) is a zero. The
// Barnes-Hut walk pads its runs of points with it to whole blocks of eight.
const farPoint = 1e300

// direct8Generic is sumDirect over whole blocks of eight points (len(ys) a
// multiple of 16), with fused multiply-adds where marked in the assembly
// (u = fma(dy, dy, fma(dx, dx, 1)), r = fma(w², d, r); 22% faster there
// than separate operations). Lane l sums block position l, and the lanes
// are combined as ((s0 + s2) + (s1 + s3)) + ((s4 + s6) + (s5 + s7)), the
// order of the assembly's reductions (its registers hold the positions as
// 0, 4, 1, 5, 2, 6, 3, 7).
func direct8Generic(xi, yi float64, ys []float64) (z, rx, ry float64) {
	var zs, xs, ysum [8]float64
	for q := 0; q+16 <= len(ys); q += 16 {
		p := ys[q : q+16 : q+16]
		for l := 0; l < 8; l++ {
			dx, dy := xi-p[2*l], yi-p[2*l+1]
			w := 1 / math.FMA(dy, dy, math.FMA(dx, dx, 1))
			zs[l] += w
			w *= w
			xs[l] = math.FMA(w, dx, xs[l])
			ysum[l] = math.FMA(w, dy, ysum[l])
		}
	}
	return reduceDirect8(&zs), reduceDirect8(&xs), reduceDirect8(&ysum)
}

func reduceDirect8(s *[8]float64) float64 {
	return ((s[0] + s[2]) + (s[1] + s[3])) + ((s[4] + s[6]) + (s[5] + s[7]))
}

// attraction returns Σ_j p_ij w_ij (y_i − y_j) over the stored entries of
// row i of P, with (xi, yi) = y_i.
func attraction(y []float64, p *Sparse, i int, xi, yi float64) (ax, ay float64) {
	e, end := p.RowPtr[i], p.RowPtr[i+1]
	col, val := p.Col[e:end], p.Val[e:end]
	m := len(col) &^ 3
	if m > 0 {
		if useAVX2 {
			ax, ay = attract4AVX2(y, col[:m], val[:m], xi, yi)
		} else {
			ax, ay = attract4Generic(y, col[:m], val[:m], xi, yi)
		}
	}
	for k := m; k < len(col); k++ {
		j := int(col[k])
		dx, dy := xi-y[2*j], yi-y[2*j+1]
		pw := val[k] / (1 + dx*dx + dy*dy)
		ax += pw * dx
		ay += pw * dy
	}
	return ax, ay
}

// attract4Generic is attraction over whole blocks of four entries
// (len(col) = len(val), a multiple of 4); lane l holds entry l of a block.
// Every index in col must address a point of y.
func attract4Generic(y []float64, col []int32, val []float64, xi, yi float64) (ax, ay float64) {
	var ax0, ax1, ax2, ax3, ay0, ay1, ay2, ay3 float64
	for k := 0; k+4 <= len(col); k += 4 {
		c := col[k : k+4 : k+4]
		v := val[k : k+4 : k+4]
		j0, j1, j2, j3 := int(c[0]), int(c[1]), int(c[2]), int(c[3])
		dx0, dy0 := xi-y[2*j0], yi-y[2*j0+1]
		dx1, dy1 := xi-y[2*j1], yi-y[2*j1+1]
		dx2, dy2 := xi-y[2*j2], yi-y[2*j2+1]
		dx3, dy3 := xi-y[2*j3], yi-y[2*j3+1]
		pw0 := v[0] / (1 + dx0*dx0 + dy0*dy0)
		pw1 := v[1] / (1 + dx1*dx1 + dy1*dy1)
		pw2 := v[2] / (1 + dx2*dx2 + dy2*dy2)
		pw3 := v[3] / (1 + dx3*dx3 + dy3*dy3)
		ax0 += pw0 * dx0
		ax1 += pw1 * dx1
		ax2 += pw2 * dx2
		ax3 += pw3 * dx3
		ay0 += pw0 * dy0
		ay1 += pw1 * dy1
		ay2 += pw2 * dy2
		ay3 += pw3 * dy3
	}
	return (ax0 + ax2) + (ax1 + ax3), (ay0 + ay2) + (ay1 + ay3)
}

// cellBlockLen is the number of float64s in one block of eight cells.
const cellBlockLen = 56

// cellList holds summarised quadtree cells in blocks of eight lanes: block
// b is cells[56b : 56b+56] = cx[8], cy[8], mass[8], tr[8], mxx[8], mxy[8],
// myy[8], with tr = mxx + myy. An unused lane is all zeros and adds exactly
// nothing to any sum.
type cellList struct {
	buf []float64
	n   int // cells stored
}

func (c *cellList) reset() {
	c.buf = c.buf[:0]
	c.n = 0
}

// add appends one cell.
func (c *cellList) add(nd *bhNode) {
	l := c.n & 7
	if l == 0 {
		var zero [cellBlockLen]float64
		c.buf = append(c.buf, zero[:]...)
	}
	b := c.buf[len(c.buf)-cellBlockLen:]
	b[l] = nd.cx
	b[8+l] = nd.cy
	b[16+l] = nd.mass
	b[24+l] = nd.mxx + nd.myy
	b[32+l] = nd.mxx
	b[40+l] = nd.mxy
	b[48+l] = nd.myy
	c.n++
}

// sumCells returns the sums over the cells of the monopole-plus-quadrupole
// expansions described at BarnesHut: with Δ = y_i − c, u = 1 + ‖Δ‖² and
// q = 4ΔᵀMΔ/u³,
//
//	z  += m/u − tr(M)/u² + q
//	r  += (m/u² − 2 tr(M)/u³ + 3q/u) Δ − 4 MΔ/u³
func sumCells(xi, yi float64, c *cellList) (z, rx, ry float64) {
	switch {
	case c.n == 0:
		return 0, 0, 0
	case useAVX512:
		return cells8AVX512(xi, yi, c.buf)
	case useAVX2:
		return cells8AVX2(xi, yi, c.buf)
	}
	return cells8Generic(xi, yi, c.buf)
}

// cells8Generic is sumCells over whole blocks (len(blk) a multiple of 56).
// Lane l sums the cells in block position l; the lanes are combined as
// ((s0 + s4) + (s2 + s6)) + ((s1 + s5) + (s3 + s7)), the order of the
// assembly's reductions.
func cells8Generic(xi, yi float64, blk []float64) (z, rx, ry float64) {
	var zs, xs, ys [8]float64
	for b := 0; b+cellBlockLen <= len(blk); b += cellBlockLen {
		v := blk[b : b+cellBlockLen : b+cellBlockLen]
		for l := 0; l < 8; l++ {
			dx, dy := xi-v[l], yi-v[8+l]
			w := 1 / (1 + dx*dx + dy*dy)
			w2 := w * w
			w3 := w2 * w
			mass, tr := v[16+l], v[24+l]
			mdx := v[32+l]*dx + v[40+l]*dy
			mdy := v[40+l]*dx + v[48+l]*dy
			q := 4 * (dx*mdx + dy*mdy) * w3
			zs[l] += mass*w - tr*w2 + q
			s := w2*(mass-2*tr*w) + 3*q*w
			f := 4 * w3
			xs[l] += s*dx - f*mdx
			ys[l] += s*dy - f*mdy
		}
	}
	return reduceCells8(&zs), reduceCells8(&xs), reduceCells8(&ys)
}

func reduceCells8(s *[8]float64) float64 {
	return ((s[0] + s[4]) + (s[2] + s[6])) + ((s[1] + s[5]) + (s[3] + s[7]))
}

// sqDistRow writes into out[l] the squared Euclidean distance between q
// and point l of x (len(x) = len(out)·len(q)), bit-identical to the full
// sum of nbSqDist: lanes of four features over whole blocks of eight, the
// remaining features added to lane 0 in order, then (s0 + s1) + (s2 + s3).
func sqDistRow(q, x, out []float64) {
	if useAVX2 && len(q) >= 8 {
		sqDistRowAVX2(q, x, out)
		return
	}
	sqDistRowGeneric(q, x, out)
}

func sqDistRowGeneric(q, x, out []float64) {
	d := len(q)
	m := d &^ 7
	for l := range out {
		b := x[l*d : (l+1)*d : (l+1)*d]
		s0, s1, s2, s3, _ := sqDist8Generic(q[:m], b[:m], math.Inf(1))
		for j := m; j < d; j++ {
			t := q[j] - b[j]
			s0 += t * t
		}
		out[l] = (s0 + s1) + (s2 + s3)
	}
}

// Coefficients of the logarithm (the FreeBSD msun algorithm of Go's
// math.log: reduction to [√2/2, √2), then a minimax polynomial in
// s = f/(2 + f)).
const (
	logLn2Hi = 6.93147180369123816490e-01
	logLn2Lo = 1.90821492927058770002e-10
	logL1    = 6.666666666666735130e-01
	logL2    = 3.999999999940941908e-01
	logL3    = 2.857142874366239149e-01
	logL4    = 2.222219843214978396e-01
	logL5    = 1.818357216161805012e-01
	logL6    = 1.531383769920937332e-01
	logL7    = 1.479819860511658591e-01
)

// logAtLeastOne returns ln u for a finite u ≥ 1 by the operations of Go's
// pure-Go math.log (error below 1 ulp), with the reduction done on the
// bits: u = 2^k·f1, f1 ∈ [√2/2, √2). klRow4AVX2 does the same four at a
// time.
func logAtLeastOne(u float64) float64 {
	b := math.Float64bits(u)
	f1 := math.Float64frombits(b&(1<<52-1) | 0x3FE0000000000000) // [0.5, 1)
	k := math.Float64frombits(0x4330000000000000|b>>52) - 0x1p52 - 1022
	if f1 < math.Sqrt2/2 {
		f1 += f1
		k--
	}
	f := f1 - 1
	s := f / (2 + f)
	s2 := s * s
	s4 := s2 * s2
	t1 := s2 * (logL1 + s4*(logL3+s4*(logL5+s4*logL7)))
	t2 := s4 * (logL2 + s4*(logL4+s4*logL6))
	r := t1 + t2
	hfsq := 0.5 * f * f
	return k*logLn2Hi - ((hfsq - (s*(hfsq+r) + k*logLn2Lo)) - f)
}

// klRow returns Σ_j p_ij ln(1 + ‖y_i − y_j‖²) over the stored entries of
// row i of P, (xi, yi) = y_i: the layout-dependent part of the KL
// divergence. Distances must be finite.
func klRow(y []float64, p *Sparse, i int, xi, yi float64) float64 {
	e, end := p.RowPtr[i], p.RowPtr[i+1]
	col, val := p.Col[e:end], p.Val[e:end]
	m := len(col) &^ 3
	var s float64
	if m > 0 {
		if useAVX2 {
			s = klRow4AVX2(y, col[:m], val[:m], xi, yi)
		} else {
			s = klRow4Generic(y, col[:m], val[:m], xi, yi)
		}
	}
	for k := m; k < len(col); k++ {
		j := int(col[k])
		dx, dy := xi-y[2*j], yi-y[2*j+1]
		s += val[k] * logAtLeastOne(1+dx*dx+dy*dy)
	}
	return s
}

// klRow4Generic is klRow over whole blocks of four entries; lane l holds
// entry l of a block.
func klRow4Generic(y []float64, col []int32, val []float64, xi, yi float64) float64 {
	var a [4]float64
	for k := 0; k+4 <= len(col); k += 4 {
		for l := 0; l < 4; l++ {
			j := int(col[k+l])
			dx, dy := xi-y[2*j], yi-y[2*j+1]
			a[l] += val[k+l] * logAtLeastOne(1+dx*dx+dy*dy)
		}
	}
	return (a[0] + a[2]) + (a[1] + a[3])
}
