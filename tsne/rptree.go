package tsne

import (
	"math/rand/v2"
)

// A forest of random-projection trees (Dasgupta & Freund
// 2008) over float32 points. Each tree splits a cell by the hyperplane
// halfway between two of its points chosen at random, normal to their
// difference (the variant used to seed NN-descent in common practice),
// until cells hold at most leafSize points. Points in the same leaf are
// likely near each other, so leaves give NN-descent a good start.
//
// Tree t draws from rand.NewPCG(seed, t+1) alone, so the forest depends
// only on the data and the seed, not on the order trees are built in.
//
// References:
//
//	S. Dasgupta, Y. Freund, "Random projection trees and low dimensional
//	manifolds", STOC 2008.

// rptTree is one tree's partition: perm lists the points leaf by leaf,
// and leaf i is perm[start[i]:start[i+1]].
type rptTree struct {
	perm  []int32
	start []int32
}

// rptBuild builds tree t of the forest for the n×d float32 points x.
func rptBuild(x []float32, n, d, leafSize int, seed uint64, t int) rptTree {
	rng := rand.New(rand.NewPCG(seed, uint64(t)+1))
	perm := make([]int32, n)
	for i := range perm {
		perm[i] = int32(i)
	}
	side := make([]float32, n)
	normal := make([]float32, d)
	var starts []int32
	type span struct{ lo, hi int }
	stack := []span{{0, n}}
	for len(stack) > 0 {
		s := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		if s.hi-s.lo <= leafSize {
			starts = append(starts, int32(s.lo))
			continue
		}
		mid := rptSplit(x, d, perm[s.lo:s.hi], side[s.lo:s.hi], normal, rng)
		// Right half pushed first so that leaves come out left to right.
		stack = append(stack, span{s.lo + mid, s.hi}, span{s.lo, s.lo + mid})
	}
	starts = append(starts, int32(n))
	return rptTree{perm: perm, start: starts}
}

// rptSplit partitions idx in place by a random hyperplane and returns the
// size of the left part, always in [1, len(idx)−1].
func rptSplit(x []float32, d int, idx []int32, side, normal []float32, rng *rand.Rand) int {
	m := len(idx)
	for try := 0; try < 3; try++ {
		a := idx[rng.IntN(m)]
		b := idx[rng.IntN(m)]
		if a == b {
			continue
		}
		xa := x[int(a)*d : int(a+1)*d]
		xb := x[int(b)*d : int(b+1)*d]
		var off float32
		for c := 0; c < d; c++ {
			normal[c] = xa[c] - xb[c]
			off += normal[c] * (xa[c] + xb[c]) * 0.5
		}
		for k, i := range idx {
			xi := x[int(i)*d : int(i+1)*d]
			var s float32
			for c, v := range normal {
				s += v * xi[c]
			}
			side[k] = s - off
		}
		// Points on the hyperplane go to a random side.
		left := 0
		for k := range idx {
			if side[k] < 0 || (side[k] == 0 && rng.IntN(2) == 0) {
				idx[left], idx[k] = idx[k], idx[left]
				side[left], side[k] = side[k], side[left]
				left++
			}
		}
		if left > 0 && left < m {
			return left
		}
	}
	// Degenerate cell (e.g. duplicate points): a random half split.
	for k := m - 1; k > 0; k-- {
		j := rng.IntN(k + 1)
		idx[k], idx[j] = idx[j], idx[k]
	}
	return m / 2
}
