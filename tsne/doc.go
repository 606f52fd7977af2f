// Package tsne computes two-dimensional t-SNE embeddings.
//
// t-SNE (van der Maaten & Hinton 2008) turns distances between N points into
// joint affinities P — a Gaussian around each point whose width is set by
// bisection so that its entropy equals ln(perplexity), symmetrised and
// normalised over the k = ⌊3·perplexity⌋ nearest neighbours — and looks for
// a layout y whose Student-t similarities q_ij ∝ (1 + ‖y_i − y_j‖²)⁻¹ match
// P in the Kullback-Leibler sense, by gradient descent. The pieces are
// separate so that a sweep can reuse them: ExactNeighbors, Affinities,
// PCAInit / RandomInit and Optimize; Embed chains them for one run.
//
// # Conventions
//
// The constant 4 is part of the gradient (see Gradient):
//
//	∂C/∂y_i = 4 Σ_j (α p_ij − q_ij)(1 + ‖y_i − y_j‖²)⁻¹ (y_i − y_j)
//
// and every learning rate in this package is stated in that convention, as
// in scikit-learn. A learning rate η here equals 4η in the convention
// without the 4 (used by some other implementations). The automatic rate,
// LearningRateAuto, is max(N/(4α), 50) here, i.e. N/α with floor 200 in the
// other convention (Belkina et al. 2019; Kobak & Berens 2019).
//
// The optimiser follows scikit-learn 1.2.1's _gradient_descent exactly
// (checked in tests): per-coordinate gains +0.2 when the gradient's sign
// differs from the previous update's, ×0.8 otherwise, floor 0.01; momentum
// 0.5 with P exaggerated by α for the first ExaggerationIters iterations,
// then 0.8 with α = 1, with update and gains restarting at the phase change.
// Unlike scikit-learn, the layout is re-centred (mean subtracted) after
// every iteration; the objective is translation invariant, so this changes
// only rounding. There is no early stopping: Iters iterations always run
// unless the Progress callback stops them.
//
// # KL divergence
//
// KL(P‖Q) = Σ p log p + Σ p log(1 + d²) + log Z with Z = Σ_{i≠j}(1 + d²)⁻¹
// (see KL). During a run it is computed every KLEvery iterations from the Z
// that iteration's gradient returned — exact for the exact method, the
// tree approximation for Barnes-Hut — and always against the unexaggerated
// P, so values before and after the end of early exaggeration are
// comparable (scikit-learn reports the exaggerated objective in the first
// phase). The final Result.KL is computed for the final layout with the
// exact O(N²) Z when N ≤ ExactKLMaxN (5,000) and with one more evaluation
// of the run's gradient method beyond.
//
// # Gradient methods
//
// Exact sums over all pairs, O(N²). BarnesHut approximates the repulsion with
// a quadtree (θ = DefaultTheta = 0.8, chosen to match scikit-learn's accuracy at
// its θ = 0.5) including a quadrupole correction, and
// sums the attraction exactly over the stored entries of P. FFT (Linderman
// et al. 2019) interpolates the repulsion onto an equispaced grid and
// convolves by FFT. Choose, the one "auto" policy, picks exact for
// N ≤ ExactMaxN and Barnes-Hut beyond; FFT runs when asked for.
//
// # Approximate neighbours
//
// ApproxNeighbors runs NN-descent (Dong, Charikar & Li 2011) from a forest
// of random-projection trees (Dasgupta & Freund 2008) on a float32 copy of
// the data, and reports exact float64 distances; "auto" (Choose) uses it
// from ApproxNeighborsMinN points.
//
// # Determinism and threads
//
// Every parallel loop splits its work into chunks fixed by the problem size
// (64 rows), each chunk writes only its own outputs, and sums are reduced in
// index order, so the same inputs and seed give bit-identical layouts for any
// thread count or GOMAXPROCS. Randomness comes only from explicit seeds
// (RandomInit uses rand.NewPCG(seed, fixed stream)). Gradients keep their
// workspaces and an optimiser iteration allocates nothing; helper goroutines
// started by the first parallel call stay parked for later calls.
//
// References:
//
//   - L. van der Maaten & G. Hinton, "Visualizing Data using t-SNE", JMLR 9,
//     2579–2605, 2008.
//   - L. van der Maaten, "Accelerating t-SNE using Tree-Based Algorithms",
//     JMLR 15, 3221–3245, 2014.
//   - J. Barnes & P. Hut, "A hierarchical O(N log N) force-calculation
//     algorithm", Nature 324, 446–449, 1986.
//   - J. E. Barnes, "A modified tree code: don't laugh; it runs", J. Comput.
//     Phys. 87, 161–170, 1990 (the group walk of the Barnes-Hut gradient).
//   - D. Kobak & P. Berens, "The art of using t-SNE for single-cell
//     transcriptomics", Nature Communications 10, 5416, 2019.
//   - A. C. Belkina et al., "Automated optimized parameters for
//     T-distributed stochastic neighbor embedding improve visualization and
//     analysis of large datasets", Nature Communications 10, 5415, 2019.
//   - G. C. Linderman, M. Rachh, J. G. Hoskins, S. Steinerberger & Y. Kluger,
//     "Fast interpolation-based t-SNE for improved visualization of
//     single-cell RNA-seq data", Nature Methods 16, 243–245, 2019.
//   - W. Dong, M. Charikar & K. Li, "Efficient k-nearest neighbor graph
//     construction for generic similarity measures", WWW 2011.
//   - S. Dasgupta & Y. Freund, "Random projection trees and low dimensional
//     manifolds", STOC 2008.
//   - P. N. Yianilos, "Data structures and algorithms for nearest neighbor
//     search in general metric spaces", SODA 1993.
//   - F. Pedregosa et al., "Scikit-learn: Machine Learning in Python", JMLR
//     12, 2825–2830, 2011 (reference implementation, version 1.2.1).
package tsne
