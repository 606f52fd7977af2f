//go:build !amd64 || purego

package tsne

// useAVX2 is false where the assembly kernels are not built; the generic
// Go kernels in kernels.go run instead.
var useAVX2, useAVX512 = false, false

func direct8AVX2(xi, yi float64, ys []float64) (z, rx, ry float64) {
	return direct8Generic(xi, yi, ys)
}

func direct8AVX512(xi, yi float64, ys []float64) (z, rx, ry float64) {
	return direct8Generic(xi, yi, ys)
}

func attract4AVX2(y []float64, col []int32, val []float64, xi, yi float64) (ax, ay float64) {
	return attract4Generic(y, col, val, xi, yi)
}

func sqDist8AVX2(a, b []float64, bound float64) (s0, s1, s2, s3 float64, over bool) {
	return sqDist8Generic(a, b, bound)
}

func sqDistRowAVX2(q, x, out []float64) { sqDistRowGeneric(q, x, out) }

func klRow4AVX2(y []float64, col []int32, val []float64, xi, yi float64) float64 {
	return klRow4Generic(y, col, val, xi, yi)
}

func cells8AVX2(xi, yi float64, blk []float64) (z, rx, ry float64) {
	return cells8Generic(xi, yi, blk)
}

func cells8AVX512(xi, yi float64, blk []float64) (z, rx, ry float64) {
	return cells8Generic(xi, yi, blk)
}

func sqDist32AVX2(a, b []float32) float32 { return sqDist32Generic(a, b) }

// hasAsmKernels reports whether the assembly kernels can run here;
// hasAVX512Kernels whether the AVX-512 ones can too.
func hasAsmKernels() bool    { return false }
func hasAVX512Kernels() bool { return false }
