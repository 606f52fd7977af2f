package tsne

import "testing"

// TestKernelPath: the reported path follows the kernels selected, so a
// record names the code that computed its layout.
func TestKernelPath(t *testing.T) {
	want := KernelsGo
	switch {
	case hasAVX512Kernels():
		want = KernelsAVX512
	case hasAsmKernels():
		want = KernelsAVX2
	}
	if got := KernelPath(); got != want {
		t.Errorf("KernelPath() = %q want %q", got, want)
	}
	saved2, saved512 := useAVX2, useAVX512
	defer func() { useAVX2, useAVX512 = saved2, saved512 }()
	useAVX2, useAVX512 = false, false
	if got := KernelPath(); got != KernelsGo {
		t.Errorf("with the assembly kernels off: KernelPath() = %q want %q", got, KernelsGo)
	}
}
