package stability

import (
	"cmp"
	"fmt"
	"slices"
)

// RunClusters is the map clustering of one run, on the input rows the run
// embedded.
type RunClusters struct {
	// Rows holds the input row number of each of the run's points, in the
	// run's order, without repeats; nil means rows 0 … len(Labels)−1.
	Rows []int32
	// Labels holds each point's cluster (≥ 0) or −1 for noise: a
	// MapClustering's Labels for ClusterStability, its Groups for
	// CoAssignment and LabelStability.
	Labels []int32
}

// runIndex is a run's labels indexed by input row: lab[row] is the row's
// label, or absent when the run did not embed the row.
type runIndex struct {
	lab []int32
	k   int // labels are < k
}

const absent = -2

func indexRuns(runs []RunClusters, n int) ([]runIndex, error) {
	out := make([]runIndex, len(runs))
	for r, run := range runs {
		lab := make([]int32, n)
		for i := range lab {
			lab[i] = absent
		}
		if run.Rows != nil && len(run.Rows) != len(run.Labels) {
			return nil, fmt.Errorf("stability: run %d has %d rows and %d labels", r, len(run.Rows), len(run.Labels))
		}
		if run.Rows == nil && len(run.Labels) > n {
			return nil, fmt.Errorf("stability: run %d has %d labels for %d input rows", r, len(run.Labels), n)
		}
		k := 0
		for m, l := range run.Labels {
			row := m
			if run.Rows != nil {
				row = int(run.Rows[m])
			}
			if row < 0 || row >= n {
				return nil, fmt.Errorf("stability: run %d: row %d outside 0 … %d", r, row, n-1)
			}
			if lab[row] != absent {
				return nil, fmt.Errorf("stability: run %d: row %d appears twice", r, row)
			}
			if l < -1 {
				return nil, fmt.Errorf("stability: run %d: row %d has label %d (want ≥ 0, or −1 for noise)", r, row, l)
			}
			lab[row] = l
			k = max(k, int(l)+1)
		}
		out[r] = runIndex{lab: lab, k: k}
	}
	return out, nil
}

// pairTable counts the rows two runs share, by cluster: n[a*kb+b] rows in
// cluster a of the first and b of the second, sizeA[a] and sizeB[b] the
// shared rows in each cluster (noise rows are counted in neither).
type pairTable struct {
	ka, kb       int
	n            []int
	sizeA, sizeB []int
}

func makePairTable(a, b runIndex) *pairTable {
	t := &pairTable{ka: a.k, kb: b.k, n: make([]int, a.k*b.k), sizeA: make([]int, a.k), sizeB: make([]int, b.k)}
	for row, la := range a.lab {
		lb := b.lab[row]
		if la == absent || lb == absent {
			continue
		}
		if la >= 0 {
			t.sizeA[la]++
		}
		if lb >= 0 {
			t.sizeB[lb]++
		}
		if la >= 0 && lb >= 0 {
			t.n[int(la)*t.kb+int(lb)]++
		}
	}
	return t
}

// jaccard is the Jaccard similarity of cluster a of the first run and b
// of the second on their shared rows.
func (t *pairTable) jaccard(a, b int) float64 {
	c := t.n[a*t.kb+b]
	u := t.sizeA[a] + t.sizeB[b] - c
	if u == 0 {
		return 0
	}
	return float64(c) / float64(u)
}

// Reading is a stability value put in words by Hennig's (2007) scale of
// the mean Jaccard similarity of a cluster to its best matches.
type Reading string

// The readings of ReadingOf.
const (
	Dissolved    Reading = "dissolved"     // ≤ 0.5
	Doubtful     Reading = "doubtful"      // (0.5, 0.6)
	Pattern      Reading = "pattern"       // [0.6, 0.75)
	Stable       Reading = "stable"        // [0.75, 0.85)
	HighlyStable Reading = "highly stable" // ≥ 0.85
	NotMeasured  Reading = "not measured"  // no other run to compare with
)

// ReadingOf puts a mean best-match Jaccard similarity j in words
// (Hennig 2007; the wording and cut-offs below are quoted from memory):
// a cluster whose Jaccard similarity to its best match falls to 0.5 or
// below is "dissolved" (then no other cluster can match it better); "a
// valid, stable cluster should yield a mean Jaccard similarity value of
// 0.75 or more"; "between 0.6 and 0.75, clusters may be considered as
// indicating patterns in the data, but which points exactly should belong
// to these clusters is highly doubtful"; values of 0.85 and above mark
// "highly stable" clusters. Values between 0.5 and 0.6 we call "doubtful".
// A NaN j is NotMeasured.
func ReadingOf(j float64) Reading {
	switch {
	case j != j:
		return NotMeasured
	case j <= 0.5:
		return Dissolved
	case j < 0.6:
		return Doubtful
	case j < 0.75:
		return Pattern
	case j < 0.85:
		return Stable
	}
	return HighlyStable
}

// LabelCount is the number of a cluster's points that carry one label.
type LabelCount struct {
	Label string
	Count int
}

// ClusterReading is the stability of one cluster of the reference run.
type ClusterReading struct {
	// Cluster is the cluster's number in the reference run, Size its
	// number of points there.
	Cluster int32
	Size    int
	// Jaccard is the mean over the other runs of the cluster's best-match
	// Jaccard similarity (on the rows both runs embedded); Min the
	// smallest of them; Runs how many runs it was compared with (runs
	// sharing none of its rows are skipped). NaN when Runs is 0.
	Jaccard, Min float64
	Runs         int
	// Dissolved counts the runs in which the best match was ≤ 0.5.
	Dissolved int
	Reading   Reading
	// Labels is the cluster's label composition in the reference run, by
	// decreasing count (ties by label); nil when no labels were given.
	Labels []LabelCount
}

// ClusterStability reads how stable each cluster of the reference run is
// across the other runs of a setting (Hennig 2007): for cluster C of the
// reference and every other run s, C is matched to the cluster D of s
// with the highest Jaccard similarity on the rows both runs embedded,
//
//	γ_s(C) = max_D |C ∩ D| / |C ∪ D|   (C, D restricted to shared rows)
//
// and the reading is the mean of γ_s over the runs s ≠ reference (Jaccard),
// put in words by ReadingOf. Noise points (label −1) belong to no cluster:
// they count in neither C nor D, so a cluster that dissolves into noise
// scores low. Runs are given as MapClustering Labels with their input rows
// (RunClusters); the reference is typically the setting's medoid run.
// labels, if not nil, holds a label for each of the n input rows and
// yields each cluster's label composition.
//
// Cost O(R·n + R·K_ref·K) for R runs, n input rows and K clusters per
// run. Errors on a bad reference, malformed runs or a labels slice of the
// wrong length. With one run the readings are NotMeasured.
//
// References:
//
//   - C. Hennig, "Cluster-wise assessment of cluster stability",
//     Computational Statistics & Data Analysis 52(1):258–271, 2007.
//   - P. Jaccard, "The distribution of the flora in the alpine zone", New
//     Phytologist 11(2):37–50, 1912.
func ClusterStability(runs []RunClusters, n int, reference int, labels []string) ([]ClusterReading, error) {
	if reference < 0 || reference >= len(runs) {
		return nil, fmt.Errorf("stability: reference run %d of %d", reference, len(runs))
	}
	if labels != nil && len(labels) != n {
		return nil, fmt.Errorf("stability: %d labels for %d input rows", len(labels), n)
	}
	idx, err := indexRuns(runs, n)
	if err != nil {
		return nil, err
	}
	ref := idx[reference]
	out := make([]ClusterReading, ref.k)
	for c := range out {
		out[c] = ClusterReading{Cluster: int32(c), Min: nan()}
	}
	sum := make([]float64, ref.k)
	for _, l := range ref.lab {
		if l >= 0 {
			out[l].Size++
		}
	}
	for s := range runs {
		if s == reference {
			continue
		}
		t := makePairTable(ref, idx[s])
		for c := 0; c < ref.k; c++ {
			if t.sizeA[c] == 0 {
				continue // no shared rows
			}
			best := 0.0
			for d := 0; d < t.kb; d++ {
				best = max(best, t.jaccard(c, d))
			}
			sum[c] += best
			out[c].Runs++
			if out[c].Min != out[c].Min || best < out[c].Min {
				out[c].Min = best
			}
			if best <= 0.5 {
				out[c].Dissolved++
			}
		}
	}
	for c := range out {
		out[c].Jaccard = nan()
		if out[c].Runs > 0 {
			out[c].Jaccard = sum[c] / float64(out[c].Runs)
		}
		out[c].Reading = ReadingOf(out[c].Jaccard)
	}
	if labels != nil {
		counts := make([]map[string]int, ref.k)
		for row, l := range ref.lab {
			if l < 0 {
				continue
			}
			if counts[l] == nil {
				counts[l] = map[string]int{}
			}
			counts[l][labels[row]]++
		}
		for c := range out {
			for lab, k := range counts[c] {
				out[c].Labels = append(out[c].Labels, LabelCount{Label: lab, Count: k})
			}
			slices.SortFunc(out[c].Labels, func(a, b LabelCount) int {
				if x := cmp.Compare(b.Count, a.Count); x != 0 {
					return x
				}
				return cmp.Compare(a.Label, b.Label)
			})
		}
	}
	return out, nil
}
