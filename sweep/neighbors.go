package sweep

import (
	"errors"

	"plumb/tsne"
)

// errNoApprox is returned while the engine offers no approximate search.
var errNoApprox = errors.New("approximate neighbour search is not available in this build; use --neighbors exact")

// searchNeighbors builds the shared neighbour lists with the plan's search.
func searchNeighbors(mode string, x []float64, n, d, k, threads int) (*tsne.Neighbors, error) {
	if mode == "approx" {
		return nil, errNoApprox
	}
	return tsne.ExactNeighbors(x, n, d, k, threads)
}
