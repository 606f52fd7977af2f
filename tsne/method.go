package tsne

import (
	"fmt"

	"plumb/internal/par"
)

// Method names a gradient implementation.
type Method string

// The gradient methods. MethodAuto lets Choose pick from the number of
// points.
const (
	MethodAuto      Method = "auto"
	MethodExact     Method = "exact"
	MethodBarnesHut Method = "barnes-hut"
	MethodFFT       Method = "fft"
)

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
