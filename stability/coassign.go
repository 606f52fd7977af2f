package stability

import (
	"fmt"
	"math"
)

// DefaultCoAssignmentThreshold is the co-assignment score below which
// CoAssignment flags a point: Hennig's (2007) lower bound of a stable
// cluster, 0.75 (from memory), applied to the group each point sits in.
const DefaultCoAssignmentThreshold = 0.75

func nan() float64 { return math.NaN() }

// PointStability is the per-point co-assignment reading of the runs of
// one setting, indexed by input row.
type PointStability struct {
	// Score[row] is the row's co-assignment score in [0, 1]; NaN when
	// fewer than two runs embedded the row.
	Score []float64
	// Flagged[row] is Score[row] < Threshold (false for NaN).
	Flagged   []bool
	Threshold float64
	// Measured counts the rows with a score, NumFlagged the flagged ones.
	Measured, NumFlagged int
}

// CoAssignment scores, for each input row, how much the group of points it
// is clustered with stays the same from run to run: over every pair of runs
// (r, s) that embedded the row, the Jaccard similarity of its group in r
// and its group in s, on the rows both runs embedded, averaged:
//
//	score_i = mean_{r<s} |G_r(i) ∩ G_s(i)| / |G_r(i) ∪ G_s(i)|
//
// It is the consensus idea of Monti et al. (2003) — how often a point stays
// with the points it is usually clustered with — in pairwise form, and it
// is on the same scale as Hennig's (2007) cluster-wise Jaccard: a point in
// a cluster that every run reproduces scores near 1, a point that sits by
// one cluster in half of the runs and by another in the rest scores near
// 0.5 or below (cross pairs add about 0).
//
// Runs are given as MapClustering Groups with their input rows: each noise
// point of the density clustering counts as a member of the cluster of its
// nearest core point, because a point t-SNE leaves in a sparse region is
// unstable when, and only when, the group it sits by changes; counting
// noise as a group of its own would call a point that is noise in every
// run perfectly stable, and counting it as in no group would flag every
// outlier however steadily it sits by one cluster. A label −1 that is
// still present (a run without any core point) shares no group: the pair
// scores 0.
//
// Points with Score < threshold are flagged; if threshold ≤ 0,
// DefaultCoAssignmentThreshold (0.75) is used. Where nothing is unstable
// every group is reproduced and scores stay near 1, so few points are
// flagged. Cost O(R²·n) for R runs and n rows.
//
// References:
//
//   - S. Monti, P. Tamayo, J. Mesirov and T. Golub, "Consensus clustering:
//     a resampling-based method for class discovery and visualization of
//     gene expression microarray data", Machine Learning 52:91–118, 2003.
//   - C. Hennig, "Cluster-wise assessment of cluster stability",
//     Computational Statistics & Data Analysis 52(1):258–271, 2007.
func CoAssignment(runs []RunClusters, n int, threshold float64) (*PointStability, error) {
	if threshold <= 0 {
		threshold = DefaultCoAssignmentThreshold
	}
	if !(threshold <= 1) {
		return nil, fmt.Errorf("stability: co-assignment threshold %g, want ≤ 1", threshold)
	}
	idx, err := indexRuns(runs, n)
	if err != nil {
		return nil, err
	}
	sum := make([]float64, n)
	cnt := make([]int32, n)
	for r := range idx {
		for s := r + 1; s < len(idx); s++ {
			a, b := idx[r], idx[s]
			t := makePairTable(a, b)
			for row, la := range a.lab {
				lb := b.lab[row]
				if la == absent || lb == absent {
					continue
				}
				cnt[row]++
				if la >= 0 && lb >= 0 {
					sum[row] += t.jaccard(int(la), int(lb))
				}
			}
		}
	}
	ps := &PointStability{Score: make([]float64, n), Flagged: make([]bool, n), Threshold: threshold}
	for row := range sum {
		if cnt[row] == 0 {
			ps.Score[row] = nan()
			continue
		}
		v := sum[row] / float64(cnt[row])
		ps.Score[row] = v
		ps.Measured++
		if v < threshold {
			ps.Flagged[row] = true
			ps.NumFlagged++
		}
	}
	return ps, nil
}
