//go:build amd64 && !purego

package tsne

// asmOK reports whether the CPU can run the assembly kernels; useAVX2
// selects them (kernels_amd64.s). Tests switch useAVX2 off to compare them
// with the generic Go code.
var (
	asmOK     = hasAVX2()
	useAVX2   = asmOK
	avx512OK  = asmOK && hasAVX512()
	useAVX512 = avx512OK
)

// hasAVX2 reports whether the CPU and the operating system support AVX2
// and FMA (CPUID leaf 7 EBX bit 5, AVX, FMA and OSXSAVE in leaf 1 ECX, and
// the YMM state enabled in XCR0).
func hasAVX2() bool {
	maxLeaf, _, _, _ := cpuid(0, 0)
	if maxLeaf < 7 {
		return false
	}
	_, _, ecx1, _ := cpuid(1, 0)
	const fma, osxsave, avx = 1 << 12, 1 << 27, 1 << 28
	if ecx1&osxsave == 0 || ecx1&avx == 0 || ecx1&fma == 0 {
		return false
	}
	if xcr0, _ := xgetbv(); xcr0&6 != 6 {
		return false
	}
	_, ebx7, _, _ := cpuid(7, 0)
	return ebx7&(1<<5) != 0
}

// hasAVX512 reports whether the CPU and the operating system support
// AVX-512 Foundation (CPUID leaf 7 EBX bit 16, and the opmask and ZMM
// states enabled in XCR0 besides SSE and AVX). Call only when hasAVX2 is
// true.
func hasAVX512() bool {
	_, ebx7, _, _ := cpuid(7, 0)
	if ebx7&(1<<16) == 0 {
		return false
	}
	xcr0, _ := xgetbv()
	return xcr0&0xe6 == 0xe6
}

func cpuid(leaf, sub uint32) (eax, ebx, ecx, edx uint32)
func xgetbv() (eax, edx uint32)

//go:noescape
func direct8AVX2(xi, yi float64, ys []float64) (z, rx, ry float64)

//go:noescape
func direct8AVX512(xi, yi float64, ys []float64) (z, rx, ry float64)

//go:noescape
func attract4AVX2(y []float64, col []int32, val []float64, xi, yi float64) (ax, ay float64)

//go:noescape
func sqDist8AVX2(a, b []float64, bound float64) (s0, s1, s2, s3 float64, over bool)

//go:noescape
func sqDistRowAVX2(q, x, out []float64)

//go:noescape
func klRow4AVX2(y []float64, col []int32, val []float64, xi, yi float64) float64

//go:noescape
func cells8AVX2(xi, yi float64, blk []float64) (z, rx, ry float64)

//go:noescape
func cells8AVX512(xi, yi float64, blk []float64) (z, rx, ry float64)

func sqDist32AVX2(a, b []float32) float32

// hasAsmKernels reports whether the assembly kernels can run here;
// hasAVX512Kernels whether the AVX-512 ones can too.
func hasAsmKernels() bool    { return asmOK }
func hasAVX512Kernels() bool { return avx512OK }
