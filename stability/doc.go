// Package stability scores t-SNE layouts: how much runs that differ only in
// their random seed agree with each other, and how faithfully one layout
// keeps the neighbourhoods of its input.
//
// Agreement between layouts of the same points is measured three ways:
// Procrustes disparity after the best similarity fit (package align), the
// Jaccard overlap of each point's k nearest map neighbours in the two
// layouts, and the Spearman rank correlation of map distances over a
// seeded sample of point pairs, which reflects the global arrangement. Over
// all the seeds of one setting, SettingAgreement summarises every pair by median
// and interquartile range, and Spread measures how far each point wanders
// around the generalised Procrustes consensus.
//
// Which points and which clusters are robust is read from map clusters:
// MapClusters clusters each run's layout by DBSCAN with a radius taken
// from the map; ClusterStability matches each cluster of a reference run
// to its most similar cluster in every other run by Jaccard similarity on
// shared input rows and reads the mean on Hennig's scale (ReadingOf);
// CoAssignment scores how much the group each point belongs to stays the
// same from run to run and flags points below 0.75; LabelStability
// summarises both per label. Spread, by contrast, measures global
// placement: how far a point lies from the consensus, which is large for
// points far from the map's centre and for clusters that move as a whole.
// The readings were validated on planted data (internal/planted,
// planted_test.go) with ROC AUC computed by ROCAUC.
//
// Faithfulness of a layout to its input is measured by trustworthiness
// (are map neighbours true input neighbours?), continuity (are input
// neighbours kept together in the map?), kNN recall, the Spearman
// correlation of input and map distances, and, when points carry labels,
// leave-one-out k-NN label accuracy in the map and the share of points whose
// map neighbours mostly share their label. Trustworthiness and continuity
// rank neighbours exactly as scikit-learn 1.2.1 does; above a documented
// size they are averaged over a seeded sample of query points and the
// sample size is reported with the score.
//
// Many layouts of one input (the runs of a sweep) are scored for a
// fraction of the cost of scoring each alone, with the same results to the
// bit: FaithfulnessBatch computes each query point's input distances once
// for all the layouts, and DistanceRanks ranks the input's (or one
// layout's) pair distances once for every correlation against it.
//
// Faithfulness at every scale at once is the rank-based quality curve
// R_NX(K) and its area on a log-K axis (RNX, RNXBatch). The runs of one
// setting are grouped into distinct arrangements by their disparities
// (Arrange); the medoid run (Medoid) is the map shown for a setting, and an
// average of the runs only where they agree (ConsensusAgrees). SeedsNeeded
// states how many seeds a stability reading needs.
//
// Whether two sets of runs of one setting differ — a baseline and tonight's
// runs, say — is a question about pair scores: CompareSets measures how
// much less alike runs of different sets are than runs of one set, and
// judges the shift against every relabelling of the runs into the two sets
// (a permutation test, exact under the hypothesis that the runs are
// exchangeable, whatever their distribution).
//
// Every score is deterministic: random choices are seeded by the caller,
// parallel loops use fixed chunks, and neighbour ties are broken by the
// smaller point index.
//
// References:
//
//   - J. Venna and S. Kaski, "Neighborhood preservation in nonlinear
//     projection methods: an experimental study", ICANN 2001, LNCS 2130,
//     pp. 485–491, 2001.
//   - S. Kaski, J. Nikkilä, M. Oja, J. Venna, P. Törönen and E. Castrén,
//     "Trustworthiness and metrics in visualizing similarity of gene
//     expression", BMC Bioinformatics 4:48, 2003.
//   - L. van der Maaten, "Learning a parametric embedding by preserving
//     local structure", AISTATS 2009, PMLR 5:384–391 (trustworthiness as
//     used in scikit-learn).
//   - scikit-learn 1.2.1, sklearn.manifold.trustworthiness.
//   - P. Jaccard, "The distribution of the flora in the alpine zone", New
//     Phytologist 11(2):37–50, 1912.
//   - C. Spearman, "The proof and measurement of association between two
//     things", American Journal of Psychology 15(1):72–101, 1904.
//   - J. C. Gower, "Generalized Procrustes analysis", Psychometrika
//     40(1):33–51, 1975.
//   - R. J. Hyndman and Y. Fan, "Sample quantiles in statistical packages",
//     The American Statistician 50(4):361–365, 1996 (definition 7, the
//     linear interpolation used by numpy.quantile's default).
//   - M. Ester, H.-P. Kriegel, J. Sander and X. Xu, "A density-based
//     algorithm for discovering clusters in large spatial databases with
//     noise", KDD 1996, pp. 226–231.
//   - C. Hennig, "Cluster-wise assessment of cluster stability",
//     Computational Statistics & Data Analysis 52(1):258–271, 2007.
//   - S. Monti, P. Tamayo, J. Mesirov and T. Golub, "Consensus clustering",
//     Machine Learning 52:91–118, 2003.
//   - J. A. Hanley and B. J. McNeil, "The meaning and use of the area
//     under a receiver operating characteristic (ROC) curve", Radiology
//     143(1):29–36, 1982.
//   - J. A. Lee and M. Verleysen, "Quality assessment of dimensionality
//     reduction: rank-based criteria", Neurocomputing 72(7–9):1431–1443,
//     2009.
//   - J. A. Lee, D. H. Peluffo-Ordóñez and M. Verleysen, "Multi-scale
//     similarities in stochastic neighbour embedding: reducing
//     dimensionality while preserving both local and global structure",
//     Neurocomputing 169:246–261, 2015.
//   - P. J. Rousseeuw, "Silhouettes: a graphical aid to the interpretation
//     and validation of cluster analysis", Journal of Computational and
//     Applied Mathematics 20:53–65, 1987.
//   - L. Kaufman and P. J. Rousseeuw, Finding Groups in Data: An
//     Introduction to Cluster Analysis, Wiley, 1990.
//   - R. A. Fisher, The Design of Experiments, Oliver & Boyd, 1935.
//   - G. J. Székely and M. L. Rizzo, "Testing for equal distributions in
//     high dimension", InterStat 5, 2004.
//   - B. Phipson and G. K. Smyth, "Permutation p-values should never be
//     zero", Statistical Applications in Genetics and Molecular Biology
//     9(1), 2010.
//   - J. L. Bentley, "Multidimensional binary search trees used for
//     associative searching", Communications of the ACM 18(9):509–517, 1975.
package stability
