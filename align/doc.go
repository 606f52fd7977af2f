// Package align superimposes two-dimensional layouts of the same points.
//
// A t-SNE layout is only defined up to translation, rotation and reflection
// (the cost depends on pairwise distances alone), and, for comparisons
// across runs, up to an overall scale. Before two layouts can be compared
// point by point, one is moved onto the other by the similarity transform
// that minimises the sum of squared distances between matching points:
// ordinary Procrustes analysis, solved in closed form from the 2×2 cross
// product of the centred layouts (Schönemann 1966). Reflections are allowed,
// because a mirrored t-SNE layout is as good as the original. Disparity
// reports what is left after the best fit, in the convention of
// scipy.spatial.procrustes: both layouts centred and scaled to unit
// Frobenius norm, then the residual sum of squares.
//
// Generalised Procrustes analysis (Gower 1975) does the same for S layouts at
// once: every layout is aligned to a consensus, the consensus is recomputed as
// the mean of the aligned layouts, and the two steps repeat until the fit stops
// improving. The consensus and the aligned copies are what per-point spread
// across seeds is measured on (package stability).
//
// Layouts are flat row-major []float64 of length 2N: x0, y0, x1, y1, …, with
// point i of one layout matching point i of another; MatchByID builds that
// correspondence from point ids when two studies order their points
// differently.
//
// References:
//
//   - P. H. Schönemann, "A generalized solution of the orthogonal Procrustes
//     problem", Psychometrika 31(1):1–10, 1966.
//   - J. C. Gower, "Generalized Procrustes analysis", Psychometrika
//     40(1):33–51, 1975.
//   - J. M. F. ten Berge, "Orthogonal Procrustes rotation for two or more
//     matrices", Psychometrika 42(2):267–276, 1977.
//   - SciPy 1.10 documentation, scipy.spatial.procrustes and
//     scipy.linalg.orthogonal_procrustes.
package align
