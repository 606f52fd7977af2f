package tsne

// Kernel paths reported by KernelPath.
const (
	KernelsAVX512 = "avx512"
	KernelsAVX2   = "avx2"
	KernelsGo     = "go"
)

// KernelPath names the inner-loop kernels this process runs: KernelsAVX512
// (AVX-512 for the repulsion kernels, AVX2 and FMA for the rest),
// KernelsAVX2 (AVX2 and FMA assembly) or KernelsGo (the generic Go code:
// another architecture, the purego build tag, or a CPU without AVX2).
// The paths are meant to give the same bits (TestKernelsMatchGeneric,
// TestGradientsSameWithoutAsm); a study records the path so that a
// layout that fails to reproduce can be traced to it if they ever do not.
func KernelPath() string {
	switch {
	case useAVX512:
		return KernelsAVX512
	case useAVX2:
		return KernelsAVX2
	default:
		return KernelsGo
	}
}
