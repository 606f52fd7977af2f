package tsne

import (
	"math"

	"plumb/internal/par"
)

// KL returns the Kullback-Leibler divergence KL(P‖Q) of the layout y, where
// q_ij = w_ij / Z and w_ij = (1 + ‖y_i − y_j‖²)⁻¹, given the normalisation
// Z = Σ_{i≠j} w_ij:
//
//	KL = Σ p_ij log p_ij + Σ p_ij log(1 + ‖y_i − y_j‖²) + S log Z,   S = Σ p_ij
//
// The sums run over the stored entries of P (zero entries contribute
// nothing); S is 1 for a normalised P. The result is exact when z is exact
// (ExactZ, or the Z returned by the Exact gradient) and carries the
// approximation of the method that produced z otherwise (Barnes-Hut's tree
// sum). Cost O(nnz(P)).
func KL(y []float64, p *Sparse, z float64) float64 {
	var plogp, plogw, s float64
	for i := 0; i < p.N; i++ {
		xi, yi := y[2*i], y[2*i+1]
		for e := p.RowPtr[i]; e < p.RowPtr[i+1]; e++ {
			v := p.Val[e]
			if v <= 0 {
				continue
			}
			j := int(p.Col[e])
			dx, dy := xi-y[2*j], yi-y[2*j+1]
			plogp += v * math.Log(v)
			plogw += v * math.Log1p(dx*dx+dy*dy)
			s += v
		}
	}
	return plogp + plogw + s*math.Log(z)
}

// ExactZ returns the normalisation Z = Σ_{i≠j} (1 + ‖y_i − y_j‖²)⁻¹ of the
// layout y by summing over all pairs, O(N²), using up to threads goroutines
// (0 means GOMAXPROCS). The sum is reduced in a fixed order, so the bits do
// not depend on threads.
func ExactZ(y []float64, threads int) float64 {
	n := len(y) / 2
	zRow := make([]float64, n)
	r := par.NewPool(threads)
	r.Run(numChunks(n, chunkRows), func(_, chunk int) {
		lo, hi := chunk*chunkRows, min((chunk+1)*chunkRows, n)
		for i := lo; i < hi; i++ {
			// The row sums of the Exact gradient (sumDirect over the
			// points before i, then after), so both give the same Z.
			xi, yi := y[2*i], y[2*i+1]
			z0, _, _ := sumDirect(xi, yi, y[:2*i])
			z1, _, _ := sumDirect(xi, yi, y[2*i+2:])
			zRow[i] = z0 + z1
		}
	})
	z := 0.0
	for _, v := range zRow {
		z += v
	}
	return z
}

// ExactKL returns KL(P‖Q) of the layout y with the exact normalisation
// (ExactZ), O(N²).
func ExactKL(y []float64, p *Sparse, threads int) float64 {
	return KL(y, p, ExactZ(y, threads))
}

// klRows is the number of rows per chunk of klEval's parallel sum.
const klRows = 1024

// klEval computes KL(P‖Q) for a fixed P during a run. Σ p log p and Σ p
// are summed once, in the order KL uses; each call then sums
// Σ p log(1 + d²) over fixed chunks of rows in parallel and adds the chunk
// sums in index order, so the value does not depend on the thread count.
// It differs from KL only in rounding: the rows are summed four entries at a
// time with a vectorised logarithm of 1 + d² (klRow), where KL calls
// math.Log1p entry by entry.
type klEval struct {
	p        *Sparse
	plogp, s float64
	part     []float64
	pool     *par.Pool
	y        []float64 // layout of the current call
	fn       func(worker, chunk int)
}

func newKLEval(p *Sparse, threads int) *klEval {
	k := &klEval{p: p, pool: par.NewPool(threads), part: make([]float64, numChunks(p.N, klRows))}
	for _, v := range p.Val {
		if v > 0 {
			k.plogp += v * math.Log(v)
			k.s += v
		}
	}
	k.fn = k.chunk
	return k
}

func (k *klEval) chunk(_, c int) {
	p, y := k.p, k.y
	var plogw float64
	for i := c * klRows; i < min((c+1)*klRows, p.N); i++ {
		plogw += klRow(y, p, i, y[2*i], y[2*i+1])
	}
	k.part[c] = plogw
}

// kl returns KL(P‖Q) of the layout y given the normalisation z.
func (k *klEval) kl(y []float64, z float64) float64 {
	k.y = y
	k.pool.Run(len(k.part), k.fn)
	k.y = nil
	var plogw float64
	for _, v := range k.part {
		plogw += v
	}
	return k.plogp + plogw + k.s*math.Log(z)
}
