package align

// MatchByID pairs the points of two layouts by id. It returns index lists
// ai, bi of equal length with aIDs[ai[m]] == bIDs[bi[m]], in the order the
// ids appear in aIDs, and the ids found in only one of the lists (onlyA in
// aIDs order, onlyB in bIDs order).
//
// Ids are compared as exact strings. If an id repeats within one list, only
// its first occurrence is matched; every later occurrence is reported in
// onlyA or onlyB, so a caller can detect duplicates by checking that the
// ids it reports are unique. Cost O(len(aIDs) + len(bIDs)).
func MatchByID(aIDs, bIDs []string) (ai, bi []int, onlyA, onlyB []string) {
	inB := make(map[string]int, len(bIDs))
	for j, id := range bIDs {
		if _, dup := inB[id]; !dup {
			inB[id] = j
		}
	}
	usedB := make([]bool, len(bIDs))
	seenA := make(map[string]bool, len(aIDs))
	for i, id := range aIDs {
		if seenA[id] {
			onlyA = append(onlyA, id)
			continue
		}
		seenA[id] = true
		if j, ok := inB[id]; ok {
			ai = append(ai, i)
			bi = append(bi, j)
			usedB[j] = true
		} else {
			onlyA = append(onlyA, id)
		}
	}
	for j, id := range bIDs {
		if !usedB[j] {
			onlyB = append(onlyB, id)
		}
	}
	return ai, bi, onlyA, onlyB
}

// Select returns the layout made of the points idx of y, in that order
// (for example the ai or bi lists of MatchByID). It panics with
// "align: index out of range" for an index outside y.
func Select(y []float64, idx []int) []float64 {
	out := make([]float64, 2*len(idx))
	for m, i := range idx {
		if i < 0 || 2*i+1 >= len(y) {
			panic("align: index out of range")
		}
		out[2*m] = y[2*i]
		out[2*m+1] = y[2*i+1]
	}
	return out
}
