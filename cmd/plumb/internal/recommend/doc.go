// Package recommend picks one setting of a study with a rule stated in
// words, and says which step of the rule separated it from the runner-up
// and by how much.
//
// The rule compares like with like. Faithfulness is judged by the area
// under the rank-based quality curve R_NX(K) on a logarithmic K axis, which
// weighs every neighbourhood scale alike, so that neither the smallest nor
// the largest perplexity wins by construction (one k of trustworthiness
// favours the scale it looks at, and scores near 0.99 at k = 15 hardly
// separate settings). Stability is compared only where it was measured —
// something varied between the runs — and only between settings measured
// under the same perturbation (seed, subsample, or both); a setting whose
// runs could only be identical never wins on stability. KL divergence is
// compared only between settings of the same perplexity: KL against
// different affinities P is not comparable, and it falls as perplexity
// rises.
//
// The package holds pure functions over a score table (Setting); it does
// no I/O. The scores come from package stability: stability.RNX for the
// AUC, stability.SettingAgreement for disparity and Jaccard,
// stability.Arrange for the number of distinct arrangements.
//
// References:
//
//   - J. A. Lee and M. Verleysen, "Quality assessment of dimensionality
//     reduction: rank-based criteria", Neurocomputing 72(7–9):1431–1443,
//     2009.
//   - J. A. Lee, D. H. Peluffo-Ordóñez and M. Verleysen, "Multi-scale
//     similarities in stochastic neighbour embedding: reducing
//     dimensionality while preserving both local and global structure",
//     Neurocomputing 169:246–261, 2015.
//   - P. H. Schönemann, "A generalized solution of the orthogonal
//     Procrustes problem", Psychometrika 31(1):1–10, 1966.
//   - P. J. Rousseeuw, "Silhouettes: a graphical aid to the interpretation
//     and validation of cluster analysis", Journal of Computational and
//     Applied Mathematics 20:53–65, 1987.
//   - L. van der Maaten and G. Hinton, "Visualizing Data using t-SNE",
//     JMLR 9:2579–2605, 2008.
package recommend
