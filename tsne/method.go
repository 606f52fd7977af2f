package tsne

import (
	"fmt"

	"plumb/internal/par"
)

// Method names a gradient implementation.
type Method string

// The gradient methods. MethodAuto lets AutoMethod choose from the number
// of points.
const (
	MethodAuto      Method = "auto"
	MethodExact     Method = "exact"
	MethodBarnesHut Method = "barnes-hut"
	MethodFFT       Method = "fft"
)

// ExactMaxN is the largest number of points for which AutoMethod picks the
// exact O(N²) gradient. Measured with BenchmarkGradient on 2 cores, one
// exact evaluation costs about the same as Barnes-Hut at N = 500 (0.47 vs
// 0.44 ms) and 1.5 times as much at N = 1000 (1.7 vs 1.1 ms); up to 1000
// points we pay that for a gradient and Z without approximation error.
// Beyond it the gap grows about linearly with N (3.7× at 10,000). These
// timings predate the leaf-group Barnes-Hut walk (0.62 ms at N = 1000 since),
// so the threshold may deserve a new measurement.
const ExactMaxN = 1000

// FFTMinN is the smallest number of points for which AutoMethod picks the
// FFT-interpolation gradient. The FFT's cost follows its grid, whose size
// follows the layout's extent (about one interval per unit, capped at 576
// a side), not N, while Barnes-Hut grows as N log N. Measured on the
// 2-core development machine with the batched FFT and the renumbering of
// the points (plumb embed on a 100,000-point 50-d Gaussian mixture, NN-
// descent neighbours, one run each, 2026-12-02): Barnes-Hut 61.1 s, KL
// 4.479; FFT 61.1 s, KL 4.496 — the two cross near 100,000 points. At
// 1,000,000 points the FFT run took 931 s (KL 6.729) against 1,617 s for
// Barnes-Hut on an older build (KL 6.709), so the FFT's advantage grows
// with N. Between 50,000 and 100,000 Barnes-Hut may be a little faster;
// that range is not measured, and the threshold stays at 50,000.
const FFTMinN = 50000

// AutoMethod returns the gradient method used when Config.Method is "" or
// MethodAuto: MethodExact for n ≤ ExactMaxN, MethodFFT for n ≥ FFTMinN,
// and MethodBarnesHut in between.
func AutoMethod(n int) Method {
	switch {
	case n <= ExactMaxN:
		return MethodExact
	case n >= FFTMinN:
		return MethodFFT
	}
	return MethodBarnesHut
}

// ParseMethod checks a method name given by a user. The empty string means
// MethodAuto.
func ParseMethod(s string) (Method, error) {
	switch m := Method(s); m {
	case "", MethodAuto:
		return MethodAuto, nil
	case MethodExact, MethodBarnesHut, MethodFFT:
		return m, nil
	}
	return "", fmt.Errorf("tsne: unknown gradient method %q (want auto, exact, barnes-hut or fft)", s)
}

// resolveMethod maps MethodAuto (or "") to a concrete method for n points.
func resolveMethod(m Method, n int) (Method, error) {
	if m == "" || m == MethodAuto {
		return AutoMethod(n), nil
	}
	if _, err := ParseMethod(string(m)); err != nil {
		return "", err
	}
	return m, nil
}

// newGradient builds the Gradient implementation for a concrete method.
func newGradient(m Method, theta float64, threads int) (Gradient, error) {
	switch m {
	case MethodExact:
		return NewExact(threads), nil
	case MethodBarnesHut:
		return NewBarnesHut(theta, threads), nil
	case MethodFFT:
		return NewFFT(threads), nil
	}
	return nil, fmt.Errorf("tsne: unknown gradient method %q (want auto, exact, barnes-hut or fft)", m)
}

// resolveThreads maps 0 (or a negative count) to runtime.GOMAXPROCS(0)
// (par.Threads).
func resolveThreads(t int) int { return par.Threads(t) }

// Parallel loops in this package (par.Pool in the optimiser's loop,
// par.Chunks elsewhere) split their work into chunks whose boundaries
// depend only on the problem size, never on the number of threads, and
// every chunk writes its own slots of the output. Reductions then add the
// per-row or per-chunk partial results sequentially in index order, so
// results are bit-identical for any thread count.

// chunkRows is the number of rows per chunk in the row-parallel loops.
const chunkRows = 64

// numChunks returns the number of fixed-size chunks covering n rows.
func numChunks(n, size int) int { return (n + size - 1) / size }
