package stability

import "fmt"

// ROCAUC returns the area under the ROC curve of score for telling the
// rows with positive[i] from the others, higher scores meaning "more
// likely positive": the Mann–Whitney statistic
//
//	AUC = (Σ_{i positive} rank_i − P(P+1)/2) / (P·Q)
//
// for P positive and Q negative rows, ranks 1 … P+Q with ties sharing their
// mean rank — the probability that a random positive scores above a
// random negative, ties counting ½ (Hanley & McNeil 1982). It equals
// scikit-learn's roc_auc_score(positive, score). Errors when the lengths
// differ, a class is empty or a score is NaN or infinite. Cost O(N log N).
//
// References:
//
//   - J. A. Hanley and B. J. McNeil, "The meaning and use of the area
//     under a receiver operating characteristic (ROC) curve", Radiology
//     143(1):29–36, 1982.
//   - H. B. Mann and D. R. Whitney, "On a test of whether one of two random
//     variables is stochastically larger than the other", Annals of
//     Mathematical Statistics 18(1):50–60, 1947.
func ROCAUC(positive []bool, score []float64) (float64, error) {
	if len(positive) != len(score) {
		return 0, fmt.Errorf("stability: ROC AUC of %d classes and %d scores", len(positive), len(score))
	}
	if err := checkFinite("score", score, 1); err != nil {
		return 0, err
	}
	var p, q int
	for _, b := range positive {
		if b {
			p++
		} else {
			q++
		}
	}
	if p == 0 || q == 0 {
		return 0, fmt.Errorf("stability: ROC AUC needs both classes, got %d positive and %d negative", p, q)
	}
	r := ranks(score)
	var sum float64
	for i, b := range positive {
		if b {
			sum += r[i]
		}
	}
	fp, fq := float64(p), float64(q)
	return (sum - fp*(fp+1)/2) / (fp * fq), nil
}
