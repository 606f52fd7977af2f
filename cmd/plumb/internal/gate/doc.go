// Package gate compares a study with a baseline study, for nightly
// regression runs (`plumb check`).
//
// Settings are matched by their parameter values (every parameter, minus
// any the caller chooses to ignore), points by id (align.MatchByID). For
// each matched setting the current consensus layout is aligned onto the
// baseline's by ordinary Procrustes with scaling (Schönemann 1966), and the
// gate reports:
//
//	disparity to baseline   Procrustes disparity, scipy convention, in [0, 1]
//	Jaccard to baseline     mean kNN Jaccard overlap of the two consensus maps
//	score changes           trustworthiness, seed-to-seed disparity and
//	                        Jaccard, final KL: current − baseline
//	points that moved most  distance after alignment, in units of the
//	                        baseline consensus's RMS radius
//
// A setting regresses when any of these passes its threshold (see
// Thresholds for the documented defaults). The outcome is "pass",
// "regression", or "incomparable" when the two studies cannot be compared
// at all: different input fingerprints (unless allowed), no setting in
// common, or no point id in common — the Result says which.
//
// Limits on disparity and Jaccard to baseline widen with the baseline's own
// seed-to-seed variation, so that a setting which is unstable in itself is
// not reported as a regression merely for being unstable.
//
// References:
//   - Schönemann, P. H. A generalized solution of the orthogonal Procrustes
//     problem. Psychometrika 31, 1–10, 1966.
//   - Gower, J. C. Generalized Procrustes analysis. Psychometrika 40, 33–51,
//     1975.
//   - The JUnit XML report format as read by common CI dashboards
//     (testsuite/testcase/failure elements; common practice, no formal
//     standard).
package gate
