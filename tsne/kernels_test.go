package tsne

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// kernelInputs returns layouts that exercise the kernels: clustered points,
// spread points, coincident points and distances near the float64 limits
// of the expressions (common practice: test the extremes of the range).
func kernelInputs() map[string][]float64 {
	r := rand.New(rand.NewPCG(7, 11))
	out := map[string][]float64{}
	mk := func(name string, n int, f func(i int) (float64, float64)) {
		y := make([]float64, 2*n)
		for i := 0; i < n; i++ {
			y[2*i], y[2*i+1] = f(i)
		}
		out[name] = y
	}
	mk("normal", 203, func(int) (float64, float64) { return r.NormFloat64(), r.NormFloat64() })
	mk("wide", 157, func(int) (float64, float64) { return 80 * (r.Float64() - 0.5), 80 * (r.Float64() - 0.5) })
	mk("tight", 64, func(int) (float64, float64) { return 1e-9 * r.NormFloat64(), 1e-9 * r.NormFloat64() })
	mk("coincident", 33, func(int) (float64, float64) { return 3, -2 })
	mk("huge", 41, func(int) (float64, float64) { return 1e150 * r.NormFloat64(), 1e150 * r.NormFloat64() })
	return out
}

// randomRow returns up to 39 random entries of a row of P over n points,
// values below 1e-3 as in a normalised P.
func randomRow(r *rand.Rand, n int) ([]int32, []float64) {
	k := r.IntN(40)
	col := make([]int32, k)
	val := make([]float64, k)
	for e := range col {
		col[e] = int32(r.IntN(n))
		val[e] = r.Float64() * 1e-3
	}
	return col, val
}

func sameBits(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }

func sameBits3(a, b [3]float64) bool {
	return sameBits(a[0], b[0]) && sameBits(a[1], b[1]) && sameBits(a[2], b[2])
}

// TestKernelsMatchGeneric: the assembly kernels give bit-identical results
// to the generic Go kernels (the package promises results that do not
// depend on the code path), and both agree with plain loops to rounding.
func TestKernelsMatchGeneric(t *testing.T) {
	asm := hasAsmKernels()
	if !asm {
		t.Log("assembly kernels cannot run on this machine; checking the generic kernels against plain loops only")
	}
	r := rand.New(rand.NewPCG(3, 5))
	for name, y := range kernelInputs() {
		n := len(y) / 2
		for trial := 0; trial < 20; trial++ {
			i := r.IntN(n)
			xi, yi := y[2*i], y[2*i+1]
			lo := 2 * r.IntN(n)
			hi := lo + 2*r.IntN(n-lo/2+1)
			seg := y[lo:hi]
			m := len(seg) &^ 15

			// Direct sums.
			gz, gx, gy := direct8Generic(xi, yi, seg[:m])
			for _, k := range asmKernels() {
				az, ax, ay := k.direct(xi, yi, seg[:m])
				if !sameBits(gz, az) || !sameBits(gx, ax) || !sameBits(gy, ay) {
					t.Fatalf("%s direct: %s (%v %v %v) != generic (%v %v %v)", name, k.name, az, ax, ay, gz, gx, gy)
				}
			}
			z, rx, ry := sumDirect(xi, yi, seg)
			var wz, wx, wy float64
			for q := 0; q+2 <= len(seg); q += 2 {
				dx, dy := xi-seg[q], yi-seg[q+1]
				w := 1 / (1 + dx*dx + dy*dy)
				wz += w
				wx += w * w * dx
				wy += w * w * dy
			}
			if !closeRel(z, wz, 1e-13) || !closeAbs(rx, wx, 1e-13*(math.Abs(wz)+1)) || !closeAbs(ry, wy, 1e-13*(math.Abs(wz)+1)) {
				t.Fatalf("%s direct: got (%v %v %v), plain loop (%v %v %v)", name, z, rx, ry, wz, wx, wy)
			}

			// Attraction over a random row of entries.
			col, val := randomRow(r, n)
			k := len(col)
			mk := k &^ 3
			g1, g2 := attract4Generic(y, col[:mk], val[:mk], xi, yi)
			a1, a2 := g1, g2
			if asm {
				a1, a2 = attract4AVX2(y, col[:mk], val[:mk], xi, yi)
			}
			if !sameBits(g1, a1) || !sameBits(g2, a2) {
				t.Fatalf("%s attraction: assembly (%v %v) != generic (%v %v)", name, a1, a2, g1, g2)
			}
			p := &Sparse{N: 1, RowPtr: []int{0, k}, Col: col, Val: val}
			fx, fy := attraction(y, p, 0, xi, yi)
			var px, py, ps float64
			for e := range col {
				j := int(col[e])
				dx, dy := xi-y[2*j], yi-y[2*j+1]
				q := val[e] / (1 + dx*dx + dy*dy)
				px += q * dx
				py += q * dy
				ps += q * (math.Abs(dx) + math.Abs(dy))
			}
			if !closeAbs(fx, px, 1e-13*ps) || !closeAbs(fy, py, 1e-13*ps) {
				t.Fatalf("%s attraction: got (%v %v), plain loop (%v %v)", name, fx, fy, px, py)
			}

			// Cell expansions: cells made of random moments.
			var cl cellList
			nc := r.IntN(23)
			var ref [3]float64
			for c := 0; c < nc; c++ {
				j := r.IntN(n)
				s := 0.1 * r.Float64()
				nd := bhNode{cx: y[2*j] + 5, cy: y[2*j+1] - 5, mass: float64(1 + r.IntN(30)),
					mxx: s, mxy: 0.3 * s * (r.Float64() - 0.5), myy: 0.5 * s}
				cl.add(&nd)
				dx, dy := xi-nd.cx, yi-nd.cy
				w := 1 / (1 + dx*dx + dy*dy)
				tr := nd.mxx + nd.myy
				mdx, mdy := nd.mxx*dx+nd.mxy*dy, nd.mxy*dx+nd.myy*dy
				q := 4 * (dx*mdx + dy*mdy) * w * w * w
				ref[0] += nd.mass*w - tr*w*w + q
				sc := w*w*(nd.mass-2*tr*w) + 3*q*w
				ref[1] += sc*dx - 4*w*w*w*mdx
				ref[2] += sc*dy - 4*w*w*w*mdy
			}
			c1, c2, c3 := cells8Generic(xi, yi, cl.buf)
			for _, k := range asmKernels() {
				d1, d2, d3 := k.cells(xi, yi, cl.buf)
				if !sameBits(c1, d1) || !sameBits(c2, d2) || !sameBits(c3, d3) {
					t.Fatalf("%s cells: %s (%v %v %v) != generic (%v %v %v)", name, k.name, d1, d2, d3, c1, c2, c3)
				}
			}
			cz, cx, cy := sumCells(xi, yi, &cl)
			if !closeRel(cz, ref[0], 1e-12) || !closeAbs(cx, ref[1], 1e-12*(math.Abs(ref[0])+1)) || !closeAbs(cy, ref[2], 1e-12*(math.Abs(ref[0])+1)) {
				t.Fatalf("%s cells: got (%v %v %v), plain loop (%v %v %v)", name, cz, cx, cy, ref[0], ref[1], ref[2])
			}
		}
	}
}

// kernelSet is one code path's eight-lane kernels.
type kernelSet struct {
	name   string
	direct func(xi, yi float64, ys []float64) (z, rx, ry float64)
	cells  func(xi, yi float64, blk []float64) (z, rx, ry float64)
}

// asmKernels lists the assembly versions of the eight-lane kernels this
// machine can run.
func asmKernels() []kernelSet {
	var out []kernelSet
	if hasAsmKernels() {
		out = append(out, kernelSet{"AVX2", direct8AVX2, cells8AVX2})
	}
	if hasAVX512Kernels() {
		out = append(out, kernelSet{"AVX-512", direct8AVX512, cells8AVX512})
	}
	return out
}

func closeRel(a, b, tol float64) bool {
	return a == b || math.Abs(a-b) <= tol*math.Max(math.Abs(a), math.Abs(b))
}

func closeAbs(a, b, tol float64) bool { return math.Abs(a-b) <= tol }

// TestCellListPadding: unused lanes of the last block add exactly nothing
// (common practice: padding must not change a sum).
func TestCellListPadding(t *testing.T) {
	var cl cellList
	nd := bhNode{cx: 1, cy: 2, mass: 3, mxx: 0.01, mxy: 0.002, myy: 0.03}
	cl.add(&nd)
	z1, x1, y1 := sumCells(0.5, -0.5, &cl)
	dx, dy := 0.5-1.0, -0.5-2.0
	w := 1 / (1 + dx*dx + dy*dy)
	w2 := w * w
	w3 := w2 * w
	tr := nd.mxx + nd.myy
	mdx, mdy := nd.mxx*dx+nd.mxy*dy, nd.mxy*dx+nd.myy*dy
	q := 4 * (dx*mdx + dy*mdy) * w3
	wantZ := nd.mass*w - tr*w2 + q
	s := w2*(nd.mass-2*tr*w) + 3*q*w
	wantX, wantY := s*dx-4*w3*mdx, s*dy-4*w3*mdy
	if !sameBits(z1, wantZ) || !sameBits(x1, wantX) || !sameBits(y1, wantY) {
		t.Errorf("one cell in a padded block: got (%v %v %v), want (%v %v %v)", z1, x1, y1, wantZ, wantX, wantY)
	}
	if len(cl.buf) != cellBlockLen {
		t.Errorf("buffer length %d, want %d", len(cl.buf), cellBlockLen)
	}
}

func BenchmarkKernels(b *testing.B) {
	r := rand.New(rand.NewPCG(1, 2))
	y := make([]float64, 2*4096)
	for i := range y {
		y[i] = 20 * r.NormFloat64()
	}
	col := make([]int32, 96)
	val := make([]float64, 96)
	for e := range col {
		col[e] = int32(r.IntN(4096))
		val[e] = r.Float64()
	}
	var cl cellList
	for c := 0; c < 64; c++ {
		nd := bhNode{cx: y[2*c], cy: y[2*c+1], mass: 10, mxx: 1, mxy: 0.1, myy: 1}
		cl.add(&nd)
	}
	for _, path := range []struct {
		name         string
		avx2, avx512 bool
	}{{"generic", false, false}, {"asm", true, false}, {"avx512", true, true}} {
		if path.avx2 && !hasAsmKernels() || path.avx512 && !hasAVX512Kernels() {
			continue
		}
		saved2, saved512 := useAVX2, useAVX512
		useAVX2, useAVX512 = path.avx2, path.avx512
		b.Run("direct64/"+path.name, func(b *testing.B) {
			for b.Loop() {
				kernelSink, _, _ = sumDirect(1, 2, y[:128])
			}
		})
		b.Run("attraction96/"+path.name, func(b *testing.B) {
			p := &Sparse{N: 1, RowPtr: []int{0, 96}, Col: col, Val: val}
			for b.Loop() {
				kernelSink, _ = attraction(y, p, 0, 1, 2)
			}
		})
		b.Run("klrow96/"+path.name, func(b *testing.B) {
			p := &Sparse{N: 1, RowPtr: []int{0, 96}, Col: col, Val: val}
			for b.Loop() {
				kernelSink = klRow(y, p, 0, 1, 2)
			}
		})
		b.Run("cells64/"+path.name, func(b *testing.B) {
			for b.Loop() {
				kernelSink, _, _ = sumCells(1, 2, &cl)
			}
		})
		useAVX2, useAVX512 = saved2, saved512
	}
}

var kernelSink float64

// TestSqDistMatchesGeneric: the assembly squared distance gives the same
// bits and the same early exit as the generic loop, and nbSqDist is the
// plain sum when no bound interferes (common practice).
func TestSqDistMatchesGeneric(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 4))
	for trial := 0; trial < 500; trial++ {
		d := r.IntN(80)
		a, b := make([]float64, d), make([]float64, d)
		for j := range a {
			a[j], b[j] = r.NormFloat64(), r.NormFloat64()
		}
		var plain float64
		for j := range a {
			plain += (a[j] - b[j]) * (a[j] - b[j])
		}
		bounds := []float64{math.Inf(1), plain * r.Float64(), plain, 0, math.NaN()}
		m := d &^ 7
		for _, bound := range bounds {
			g0, g1, g2, g3, gover := sqDist8Generic(a[:m], b[:m], bound)
			if hasAsmKernels() {
				a0, a1, a2, a3, aover := sqDist8AVX2(a[:m], b[:m], bound)
				if !sameBits(g0, a0) || !sameBits(g1, a1) || !sameBits(g2, a2) || !sameBits(g3, a3) || gover != aover {
					t.Fatalf("d=%d bound=%v: assembly (%v %v %v %v %v) != generic (%v %v %v %v %v)", d, bound, a0, a1, a2, a3, aover, g0, g1, g2, g3, gover)
				}
			}
			got := nbSqDist(a, b, bound)
			if math.Abs(plain-bound) <= 1e-12*plain {
				continue // rounding decides; only the bits above are fixed
			}
			if got > bound != (plain > bound) {
				t.Fatalf("d=%d bound=%v: nbSqDist %v, plain sum %v: disagree on the bound", d, bound, got, plain)
			}
			if !(plain > bound) && !closeRel(got, plain, 1e-13) {
				t.Fatalf("d=%d: nbSqDist %v, plain sum %v", d, got, plain)
			}
		}
	}
}

// TestSqDist32MatchesGeneric: the float32 distance of the neighbour search
// gives the same bits with the assembly and the Go twin, for every length
// (block and tail), and agrees with the plain float64 sum to float32
// rounding (common practice: check a kernel against the plain definition).
func TestSqDist32MatchesGeneric(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 5))
	for trial := 0; trial < 500; trial++ {
		d := r.IntN(80)
		a, b := make([]float32, d), make([]float32, d+r.IntN(3))
		for j := range b {
			b[j] = float32(r.NormFloat64())
			if j < d {
				a[j] = float32(r.NormFloat64())
			}
		}
		var plain float64
		for j := range a {
			plain += (float64(a[j]) - float64(b[j])) * (float64(a[j]) - float64(b[j]))
		}
		g := sqDist32Generic(a, b)
		if hasAsmKernels() {
			if v := sqDist32AVX2(a, b); math.Float32bits(v) != math.Float32bits(g) {
				t.Fatalf("d=%d: assembly %v != generic %v", d, v, g)
			}
		}
		if got := nndDist(a, b); math.Float32bits(got) != math.Float32bits(g) {
			t.Fatalf("d=%d: nndDist %v != generic %v", d, got, g)
		}
		if math.Abs(float64(g)-plain) > 1e-5*plain+1e-30 {
			t.Fatalf("d=%d: %v, plain float64 sum %v", d, g, plain)
		}
	}
}

// TestGradientsSameWithoutAsm: whole gradient evaluations give the same
// bits with the assembly kernels and with the generic Go kernels (the
// package's promise that results do not depend on the code path).
func TestGradientsSameWithoutAsm(t *testing.T) {
	if !hasAsmKernels() {
		t.Skip("assembly kernels cannot run on this machine")
	}
	const n = 900
	rng := rand.New(rand.NewPCG(77, 1))
	x := bhTestClustered(n, 5, 1, rng)
	p := gradTestKNNP(x, n, 5, 20)
	y := bhTestClustered(n, 2, 3, rng)
	defer func(a, b bool) { useAVX2, useAVX512 = a, b }(useAVX2, useAVX512)
	// The code paths: AVX-512 where the CPU has it, AVX2, plain Go.
	paths := [][2]bool{{true, false}, {false, false}}
	if hasAVX512Kernels() {
		paths = append([][2]bool{{true, true}}, paths...)
	}
	for _, g := range []struct {
		name string
		make func() Gradient
	}{
		{"exact", func() Gradient { return NewExact(2) }},
		{"barnes-hut", func() Gradient { return NewBarnesHut(DefaultTheta, 2) }},
		{"fft", func() Gradient { return NewFFT(2) }},
	} {
		useAVX2, useAVX512 = paths[0][0], paths[0][1]
		a, za := g.make().Gradient(nil, y, p, 12)
		for _, path := range paths[1:] {
			useAVX2, useAVX512 = path[0], path[1]
			b, zb := g.make().Gradient(nil, y, p, 12)
			if !sameBits(za, zb) {
				t.Errorf("%s: Z %v on the first path, %v with (AVX2, AVX-512) = %v", g.name, za, zb, path)
			}
			for k := range a {
				if !sameBits(a[k], b[k]) {
					t.Fatalf("%s: coordinate %d is %v on the first path, %v with (AVX2, AVX-512) = %v", g.name, k, a[k], b[k], path)
				}
			}
		}
	}
}

// TestSqDistRow: the full-row distances equal nbSqDist's full sums bit for
// bit, with and without the assembly (the brute-force and tree searches
// must see the same distances).
func TestSqDistRow(t *testing.T) {
	r := rand.New(rand.NewPCG(12, 3))
	for _, d := range []int{1, 3, 7, 8, 9, 15, 16, 50, 64, 67} {
		const n = 37
		x := make([]float64, n*d)
		for i := range x {
			x[i] = 10 * r.NormFloat64()
		}
		q := x[5*d : 6*d]
		gen := make([]float64, n)
		sqDistRowGeneric(q, x, gen)
		got := make([]float64, n)
		sqDistRow(q, x, got)
		for l := 0; l < n; l++ {
			want := nbSqDist(q, x[l*d:(l+1)*d], math.Inf(1))
			if !sameBits(gen[l], want) || !sameBits(got[l], want) {
				t.Fatalf("d=%d point %d: row %v, generic row %v, nbSqDist %v", d, l, got[l], gen[l], want)
			}
		}
	}
}

// TestExactZMatchesExactGradient: ExactZ (the final KL's normalisation)
// and the Exact gradient's Z are the same sums in the same order, so the
// same bits (common practice: one quantity, one value).
func TestExactZMatchesExactGradient(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 8))
	y := bhTestClustered(333, 2, 2, rng)
	p := &Sparse{N: 333, RowPtr: make([]int, 334)}
	_, z := NewExact(2).Gradient(nil, y, p, 1)
	if ez := ExactZ(y, 3); !sameBits(z, ez) {
		t.Errorf("ExactZ %v, Exact gradient's Z %v", ez, z)
	}
}

// TestLogAndKLRow: logAtLeastOne agrees with math.Log to within one ulp
// (both implement the same published algorithm; math.Log is the reference)
// and is exactly 0 at 1; the assembly KL row sums equal the generic ones bit
// for bit and the plain math.Log1p sums to rounding.
func TestLogAndKLRow(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 2))
	us := []float64{1, math.Nextafter(1, 2), math.Sqrt2, math.Sqrt2 / 2 * 2, 2, math.Nextafter(2, 1), 3, 1e10, 1e300}
	for i := 0; i < 20000; i++ {
		us = append(us, 1+math.Exp(r.NormFloat64()*8))
	}
	for _, u := range us {
		got, want := logAtLeastOne(u), math.Log(u)
		if got != want && math.Abs(got-want) > math.Abs(want)*2.3e-16 {
			t.Fatalf("ln %v: got %v, math.Log %v", u, got, want)
		}
	}
	if logAtLeastOne(1) != 0 {
		t.Errorf("ln 1 = %v, want 0", logAtLeastOne(1))
	}
	for name, y := range kernelInputs() {
		if name == "huge" {
			continue // distances beyond the float64 range of 1 + d²
		}
		n := len(y) / 2
		for trial := 0; trial < 20; trial++ {
			col, val := randomRow(r, n)
			k := len(col)
			i := r.IntN(n)
			xi, yi := y[2*i], y[2*i+1]
			m := k &^ 3
			g := klRow4Generic(y, col[:m], val[:m], xi, yi)
			if hasAsmKernels() {
				if a := klRow4AVX2(y, col[:m], val[:m], xi, yi); !sameBits(a, g) {
					t.Fatalf("%s: assembly %v, generic %v", name, a, g)
				}
			}
			p := &Sparse{N: 1, RowPtr: []int{0, k}, Col: col, Val: val}
			got := klRow(y, p, 0, xi, yi)
			var want, sp float64
			for e := range col {
				j := int(col[e])
				dx, dy := xi-y[2*j], yi-y[2*j+1]
				want += val[e] * math.Log1p(dx*dx+dy*dy)
				sp += val[e]
			}
			// Rounding 1 + d² to float64 costs up to one ulp of 1 per
			// entry (common practice: log(1 + x) for tiny x).
			if math.Abs(got-want) > 1e-13*math.Abs(want)+2.3e-16*sp {
				t.Fatalf("%s: klRow %v, plain sum %v", name, got, want)
			}
		}
	}
}

// TestFarPointAddsNothing: a padding point at (farPoint, farPoint) leaves
// every direct sum bit for bit unchanged, on every code path (common
// practice: padding must not change a sum).
func TestFarPointAddsNothing(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 4))
	for trial := 0; trial < 50; trial++ {
		pts := make([]float64, 0, 32)
		for q := 0; q < 11; q++ {
			pts = append(pts, 60*(r.Float64()-0.5), 60*(r.Float64()-0.5))
		}
		xi, yi := 50*r.NormFloat64(), 50*r.NormFloat64()
		z0, x0, y0 := sumDirect(xi, yi, pts)
		// Pad the first run to whole blocks: the tail then goes through
		// the vector lanes instead of the scalar loop, so compare with a
		// list whose real points fill the lanes in the same positions.
		padded := append(slices.Clone(pts), farPoint, farPoint)
		for len(padded)&15 != 0 {
			padded = append(padded, farPoint, farPoint)
		}
		var got [3]float64
		got[0], got[1], got[2] = direct8Generic(xi, yi, padded)
		for _, k := range asmKernels() {
			var g [3]float64
			g[0], g[1], g[2] = k.direct(xi, yi, padded)
			if !sameBits3(g, got) {
				t.Fatalf("%s: padded sums %v, generic %v", k.name, g, got)
			}
		}
		// The same points without padding, summed lane by lane.
		var zs, xs, ysum [8]float64
		for q := 0; q+2 <= len(pts); q += 2 {
			l := (q / 2) & 7
			dx, dy := xi-pts[q], yi-pts[q+1]
			w := 1 / math.FMA(dy, dy, math.FMA(dx, dx, 1))
			zs[l] += w
			w *= w
			xs[l] = math.FMA(w, dx, xs[l])
			ysum[l] = math.FMA(w, dy, ysum[l])
		}
		ref := [3]float64{reduceDirect8(&zs), reduceDirect8(&xs), reduceDirect8(&ysum)}
		if !sameBits3(got, ref) {
			t.Fatalf("padding changed the sums: %v, unpadded lanes %v", got, ref)
		}
		// The scalar tail sums in another order: agreement to rounding of
		// a dozen terms (common practice).
		if !closeRel(z0, got[0], 1e-13) || !closeAbs(x0, got[1], 1e-13*z0) || !closeAbs(y0, got[2], 1e-13*z0) {
			t.Fatalf("padded (%v) and scalar-tail (%v %v %v) sums disagree beyond rounding", got, z0, x0, y0)
		}
	}
}
