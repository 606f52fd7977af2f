//go:build amd64 && !purego

package tsne

// asmOK reports whether the CPU can run the assembly kernels; useAVX2
// selects them (kernels_amd64.s). Tests switch useAVX2 off to compare them
// with the generic Go code.
var (
	asmOK   = hasAVX2()
	useAVX2 = asmOK
)

// hasAVX2 reports whether the CPU and the operating system support AVX2
// (CPUID leaf 7 EBX bit 5, AVX and OSXSAVE in leaf 1 ECX, and the YMM
// state enabled in XCR0).
func hasAVX2() bool {
	maxLeaf, _, _, _ := cpuid(0, 0)
	if maxLeaf < 7 {
		return false
	}
	_, _, ecx1, _ := cpuid(1, 0)
	const osxsave, avx = 1 << 27, 1 << 28
	if ecx1&osxsave == 0 || ecx1&avx == 0 {
		return false
	}
	if xcr0, _ := xgetbv(); xcr0&6 != 6 {
		return false
	}
	_, ebx7, _, _ := cpuid(7, 0)
	return ebx7&(1<<5) != 0
}

func cpuid(leaf, sub uint32) (eax, ebx, ecx, edx uint32)
func xgetbv() (eax, edx uint32)

//go:noescape
func direct4AVX2(xi, yi float64, ys []float64) (z, rx, ry float64)

//go:noescape
func attract4AVX2(y []float64, col []int32, val []float64, xi, yi float64) (ax, ay float64)

//go:noescape
func sqDist8AVX2(a, b []float64, bound float64) (s0, s1, s2, s3 float64, over bool)

//go:noescape
func sqDistRowAVX2(q, x, out []float64)

//go:noescape
func klRow4AVX2(y []float64, col []int32, val []float64, xi, yi float64) float64

//go:noescape
func cells4AVX2(xi, yi float64, blk []float64) (z, rx, ry float64)

func sqDist32AVX2(a, b []float32) float32

// hasAsmKernels reports whether the assembly kernels can run here.
func hasAsmKernels() bool { return asmOK }
