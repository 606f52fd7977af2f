package tsne

import "fmt"

// The thresholds of the "auto" policy (Choose). They were measured on the
// project's 2-core development machine; the measurements, with machine and
// date, are in internal/scripts/bench/README.md ("The auto policy").
const (
	// ExactMaxN is the largest n for which "auto" uses the exact O(n²)
	// gradient; above it Barnes-Hut is used.
	ExactMaxN = 1000
	// ApproxNeighborsMinN is the smallest n for which "auto" searches
	// neighbours with NN-descent (ApproxNeighbors); below it the exact
	// search (ExactNeighbors) is used.
	ApproxNeighborsMinN = 50000
)

// Choice is what the "auto" policy picks for an input.
type Choice struct {
	// Neighbors is the neighbour search: "exact" (ExactNeighbors) or
	// "approx" (ApproxNeighbors).
	Neighbors string
	// Method is the gradient: MethodExact, MethodBarnesHut or MethodFFT.
	Method Method
}

// Choose is the engine's one "auto" policy: the neighbour search and the
// gradient method for n points of d features. Embed, Optimize (for the
// gradient) and every command resolve "auto" through it:
//
//	neighbours  exact for n < ApproxNeighborsMinN, approximate beyond
//	gradient    exact for n ≤ ExactMaxN, Barnes-Hut beyond
//
// The FFT gradient is not chosen: at its default grid, which makes it at
// least as accurate as Barnes-Hut at DefaultTheta, it cost more CPU per
// evaluation than Barnes-Hut at every size measured, up to 1,000,000
// points. d is part of the signature because the exact search's cost
// depends on it; the thresholds measured so far do not.
func Choose(n, d int) Choice {
	c := Choice{Neighbors: "exact", Method: MethodBarnesHut}
	if n >= ApproxNeighborsMinN {
		c.Neighbors = "approx"
	}
	if n <= ExactMaxN {
		c.Method = MethodExact
	}
	return c
}

// ResolveMethod maps MethodAuto (or "") to Choose's method for n points and
// checks any other name.
func ResolveMethod(m Method, n int) (Method, error) {
	if m == "" || m == MethodAuto {
		return Choose(n, 0).Method, nil
	}
	if _, err := ParseMethod(string(m)); err != nil {
		return "", err
	}
	return m, nil
}

// ResolveNeighbors maps "auto" (or "") to Choose's neighbour search for n
// points of d features and checks any other name.
func ResolveNeighbors(search string, n, d int) (string, error) {
	switch search {
	case "", "auto":
		return Choose(n, d).Neighbors, nil
	case "exact", "approx":
		return search, nil
	}
	return "", fmt.Errorf("tsne: unknown neighbour search %q (want auto, exact or approx)", search)
}

// FindNeighbors returns the k nearest neighbours of the n points of x (d
// features, row-major) with the given search ("auto", "exact" or "approx";
// see ResolveNeighbors). seed drives the approximate search only.
func FindNeighbors(x []float64, n, d, k int, search string, seed uint64, threads int) (*Neighbors, error) {
	s, err := ResolveNeighbors(search, n, d)
	if err != nil {
		return nil, err
	}
	if s == "approx" {
		return ApproxNeighbors(x, n, d, k, seed, threads)
	}
	return ExactNeighbors(x, n, d, k, threads)
}

// Localize renumbers nb in place for memory locality (LocalityOrder, then
// Renumber) when it has at least minN points, and returns the order
// (order[r] is the input index of point r), or nil when it left nb as it
// was. Embed and sweeps pass LocalityMinN; P and the runs then work on the
// renumbered points and layouts are put back with UnpermuteLayout.
func Localize(nb *Neighbors, minN int) []int32 {
	if nb.N < minN {
		return nil
	}
	order := LocalityOrder(nb)
	nb.Renumber(order)
	return order
}
