// Package gate compares a study with a baseline study, for nightly
// regression runs (`plumb check`): do tonight's runs of each setting still
// look like the baseline's runs, as if made by the same code from the same
// data with other seeds?
//
// Settings are matched by the values of their parameters (every field of a
// setting, minus any the caller ignores), points by id (align.MatchByID).
// For each matched setting:
//
//	reproduction   on the same data, a current run with the same start as a
//	               baseline run (same seed, or any seed with PCA
//	               initialisation) must reproduce it within a rounding
//	               tolerance: the engine is deterministic
//	layout tests   every pair of runs is scored by kNN Jaccard overlap and
//	               Procrustes disparity; the shift of the pairs across the
//	               studies against the pairs within one is tested by
//	               permutation over relabelings of the runs
//	               (stability.CompareSets), Bonferroni over the tests that
//	               can reach the level (Tarone 1990), and must also exceed a
//	               minimum size
//	scores         median trustworthiness may fall, and median final KL rise
//	               (relatively), by at most a limit
//
// The family-wise chance that a study made with other seeds fails a layout
// test is at most Options.Alpha. A setting with neither a run to reproduce
// nor enough runs to reach the level is untested. Studies that differ in
// their input fingerprint (DataChanged), in any plan field that changes
// what a run sees, or in the k they were scored with (Incomparable) are
// not compared.
//
// References:
//   - R. A. Fisher, The Design of Experiments, Oliver & Boyd, 1935.
//   - R. E. Tarone, "A modified Bonferroni method for discrete data",
//     Biometrics 46(2):515–522, 1990.
//   - P. H. Schönemann, "A generalized solution of the orthogonal
//     Procrustes problem", Psychometrika 31:1–10, 1966.
//   - The JUnit XML report format as read by common CI dashboards
//     (testsuite/testcase/failure/skipped elements; common practice, no
//     formal standard).
package gate
