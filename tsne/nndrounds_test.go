package tsne

import (
	"math/rand/v2"
	"os"
	"slices"
	"strconv"
	"syscall"
	"testing"
)

// TestNNDescentRounds (PLUMB_NND_ROUNDS=n) prints, round by round, the
// change rate of NN-descent and the recall of the lists against brute
// force on 1,000 sampled points, and the CPU time of each round: the
// measurements behind the stopping rate nndDelta.
func TestNNDescentRounds(t *testing.T) {
	n, _ := strconv.Atoi(os.Getenv("PLUMB_NND_ROUNDS"))
	if n == 0 {
		t.Skip("set PLUMB_NND_ROUNDS=n to measure")
	}
	const d, k = 50, 90
	x := nndTestData(n, d, 20, 1)
	r := rand.New(rand.NewPCG(7, 7))
	queries := r.Perm(n)[:1000]
	exact := make([][]int32, len(queries))
	h := newNBHeap(k)
	for qi, i := range queries {
		xi := x[i*d : (i+1)*d]
		for j := 0; j < n; j++ {
			if j != i {
				if s := nbSqDist(xi, x[j*d:(j+1)*d], h.bound()); s <= h.bound() {
					h.push(s, int32(j))
				}
			}
		}
		idx, dist := make([]int32, k), make([]float64, k)
		h.drain(idx, dist)
		exact[qi] = idx
	}
	cpu := func() float64 {
		var ru syscall.Rusage
		syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
		return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
	}
	c0 := cpu()
	saved := nndDelta
	defer func() { nndDelta, nndRoundHook = saved, nil }()
	nndDelta = 0
	recall := func(s *nndState) float64 {
		inv := make([]int32, n)
		for a, o := range s.order {
			inv[o] = int32(a)
		}
		hit := 0
		for qi, i := range queries {
			row := s.idx[int(inv[i])*k : int(inv[i]+1)*k]
			for _, j := range exact[qi] {
				if slices.Contains(row, inv[j]) {
					hit++
				}
			}
		}
		return float64(hit) / float64(len(queries)*k)
	}
	nndRoundHook = func(s *nndState, round int, changes int64) {
		c := cpu()
		t.Logf("n=%d round %d: change rate %.5f, recall %.4f, CPU %.1f s", n, round+1, float64(changes)/float64(n*k), recall(s), c-c0)
		c0 = cpu()
	}
	if _, err := ApproxNeighbors(x, n, d, k, 1, 0); err != nil {
		t.Fatal(err)
	}
}
