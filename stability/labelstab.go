package stability

import (
	"cmp"
	"fmt"
	"slices"
)

// LabelShare is the share of something that goes to one label.
type LabelShare struct {
	Label string
	Share float64
}

// LabelReading is the stability of the points of one label.
type LabelReading struct {
	Label string
	// Points counts the label's rows with a co-assignment score; Stable
	// is the share of them that are not flagged (their group membership is
	// stable), MeanScore their mean score.
	Points    int
	Stable    float64
	MeanScore float64
	// Mixes lists, over every run and every point of the label, the mean
	// share of the point's group-mates that carry each label (its own
	// included), by decreasing share, ties by label; shares sum to 1.
	Mixes []LabelShare
}

// LabelStability reads, for each label, how stable its points' group
// membership is and which labels they share groups with across runs.
// runs are the setting's MapClustering Groups with their input rows (as
// for CoAssignment), labels holds the label of each of the n input rows,
// and ps is CoAssignment's result for the same runs. A point's group-mates
// in a run are the other points of its group there; points alone in their
// group, or with label −1, count for no mix. Labels are returned in
// ascending order. Cost O(R·n + R·Σ_g L_g²) for R runs and L_g labels in
// group g.
func LabelStability(runs []RunClusters, n int, labels []string, ps *PointStability) ([]LabelReading, error) {
	if len(labels) != n {
		return nil, fmt.Errorf("stability: %d labels for %d input rows", len(labels), n)
	}
	if ps == nil || len(ps.Score) != n {
		return nil, fmt.Errorf("stability: label stability needs the co-assignment scores of the %d input rows", n)
	}
	idx, err := indexRuns(runs, n)
	if err != nil {
		return nil, err
	}
	code, names := encode(labels)
	nl := len(names)
	out := make([]LabelReading, nl)
	for l := range out {
		out[l].Label = names[l]
	}
	for row, s := range ps.Score {
		if s != s {
			continue
		}
		l := code[row]
		out[l].Points++
		out[l].MeanScore += s
		if !ps.Flagged[row] {
			out[l].Stable++
		}
	}
	mix := make([]float64, nl*nl) // mix[a*nl+b]: Σ share of b among the mates of a's points
	weight := make([]float64, nl)
	for _, run := range idx {
		counts := make([]map[int]int, run.k) // group → label → count
		size := make([]int, run.k)
		for row, g := range run.lab {
			if g < 0 {
				continue
			}
			if counts[g] == nil {
				counts[g] = map[int]int{}
			}
			counts[g][int(code[row])]++
			size[g]++
		}
		for g, cg := range counts {
			if size[g] < 2 {
				continue
			}
			mates := float64(size[g] - 1)
			for a, na := range cg {
				weight[a] += float64(na)
				for b, nb := range cg {
					if a == b {
						nb--
					}
					mix[a*nl+b] += float64(na) * float64(nb) / mates
				}
			}
		}
	}
	for a := range out {
		r := &out[a]
		if r.Points > 0 {
			r.Stable /= float64(r.Points)
			r.MeanScore /= float64(r.Points)
		} else {
			r.Stable, r.MeanScore = nan(), nan()
		}
		if weight[a] == 0 {
			continue
		}
		for b := 0; b < nl; b++ {
			if v := mix[a*nl+b]; v > 0 {
				r.Mixes = append(r.Mixes, LabelShare{Label: names[b], Share: v / weight[a]})
			}
		}
		slices.SortFunc(r.Mixes, func(x, y LabelShare) int {
			if c := cmp.Compare(y.Share, x.Share); c != 0 {
				return c
			}
			return cmp.Compare(x.Label, y.Label)
		})
	}
	slices.SortFunc(out, func(x, y LabelReading) int { return cmp.Compare(x.Label, y.Label) })
	return out, nil
}
