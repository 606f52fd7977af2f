package tsne

// Neighbors holds the K nearest neighbours of each of N points, the point itself
// excluded, sorted by ascending distance with ties broken by the smaller index
// (after Renumber, the smaller index before the renumbering).
type Neighbors struct {
	N, K int
	// Index holds N*K neighbour indices; row i is Index[i*K : (i+1)*K].
	Index []int32
	// Dist holds the matching Euclidean distances (not squared).
	Dist []float64
}

// Sparse is an N×N matrix in compressed sparse row form. The joint
// affinities P are stored as a symmetric Sparse whose values sum to one.
type Sparse struct {
	N int
	// RowPtr has length N+1; row i's entries are Col[RowPtr[i]:RowPtr[i+1]]
	// and Val[RowPtr[i]:RowPtr[i+1]], with columns in ascending order.
	RowPtr []int
	Col    []int32
	Val    []float64
}

// Gradient computes the gradient of the KL divergence of a two-dimensional
// layout. y is flat row-major (x0, y0, x1, y1, …), length 2N.
//
// The constant 4 of van der Maaten & Hinton (2008) is part of the gradient:
//
//	∂C/∂y_i = 4 Σ_j (α p_ij − q_ij) (1 + ‖y_i − y_j‖²)⁻¹ (y_i − y_j)
//
// where α is the exaggeration. Implementations are not safe for concurrent
// use; each keeps its workspace between calls.
type Gradient interface {
	// Gradient writes ∂C/∂y into dst and returns the normalisation
	// Z = Σ_{i≠j} (1 + ‖y_i − y_j‖²)⁻¹, exact or approximated as the method
	// does. If dst is nil a new slice is allocated; a dst of the wrong length
	// panics with "tsne: destination length mismatch".
	Gradient(dst, y []float64, p *Sparse, exaggeration float64) (grad []float64, z float64)
}
