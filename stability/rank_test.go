package stability

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// rankLayouts returns 2-d layouts of n points that stress the tie rule:
// a Gaussian cloud, the same rounded to a coarse grid (many equal
// distances), a square grid (almost every distance tied), a cloud whose
// second half repeats its first (duplicate points, distance 0), a cloud
// with 40 points piled on one spot, one with half its points so far out
// that their squared distances overflow to +Inf, and a sweepLike map.
func rankLayouts(rng *rand.Rand, n int) map[string][]float64 {
	out := map[string][]float64{}
	out["gauss"] = gauss(rng, 2*n)
	r := gauss(rng, 2*n)
	for i := range r {
		r[i] = math.Round(3*r[i]) / 3
	}
	out["rounded"] = r
	side := int(math.Ceil(math.Sqrt(float64(n))))
	grid := make([]float64, 2*n)
	for i := 0; i < n; i++ {
		grid[2*i], grid[2*i+1] = float64(i%side), float64(i/side)
	}
	out["grid"] = grid
	dup := gauss(rng, 2*n)
	copy(dup[n:], dup[:n])
	out["duplicates"] = dup
	pile := gauss(rng, 2*n)
	for i := 0; i < 40; i++ {
		p := rng.IntN(n)
		pile[2*p], pile[2*p+1] = 0.25, -0.5
	}
	out["pile"] = pile
	huge := gauss(rng, 2*n)
	for i := n; i < 2*n; i++ {
		huge[i] *= 1e200 // squared distances overflow to +Inf and tie
	}
	out["huge"] = huge
	_, _, ys := sweepLike(5, n, 1)
	out["sweepLike"] = ys[0]
	return out
}

// The tree ranks of continuity (ranker.mapPenalty) equal the full scan
// (ranker.penalty over all map distances), penalty for penalty, on every
// point of layouts full of tied and repeated distances, for target sets
// near the query (its map neighbours shuffled with a few others), far
// from it and random. The scan is the definition r̂(i,j) = 1 + #{l ≠ i :
// (d_l, l) < (d_j, j)} computed directly (scikit-learn 1.2.1 ranks by a
// sort of all distances; ties by index as our stable order).
func TestMapPenaltyEqualsScan(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	const n = 700
	for name, y := range rankLayouts(rng, n) {
		tree := newKDTree(y)
		for _, k := range []int{1, 5, 15, 40} {
			t.Run(fmt.Sprintf("%s/k=%d", name, k), func(t *testing.T) {
				rk := newRanker(k)
				var h nbHeap
				mapRow := make([]int32, k)
				wide := make([]int32, 3*k)
				dist := make([]float64, n)
				targets := make([]int32, k)
				nonzero, skipped := 0, 0
				for i := 0; i < n; i++ {
					tree.query(i, k, &h, mapRow)
					tree.query(i, 3*k, &h, wide)
					mapDistances(dist, y, i)
					for kind := 0; kind < 3; kind++ {
						// Random distinct points other than i, then for
						// kind 0 all and for kind 1 half of them replaced
						// by a random choice among the 3k map-nearest.
						perm := rng.Perm(n - 1)
						for s := range targets {
							j := perm[s]
							if j >= i {
								j++
							}
							targets[s] = int32(j)
						}
						rng.Shuffle(len(wide), func(a, b int) { wide[a], wide[b] = wide[b], wide[a] })
						switch kind {
						case 0:
							copy(targets, wide[:k])
						case 1:
							for s := 0; s < k; s += 2 {
								if !slices.Contains(targets, wide[s]) {
									targets[s] = wide[s]
								}
							}
						}
						if !distinctWithout(targets, i) {
							t.Fatalf("point %d: test built targets %v with a repeat or i", i, targets)
						}
						want := rk.penalty(dist, i, targets)
						got, ok := rk.mapPenalty(tree, i, targets, mapRow)
						if !ok {
							t.Fatalf("point %d targets %v: tree ranking refused distinct targets", i, targets)
						}
						if got != want {
							t.Fatalf("point %d targets %v: tree penalty %d, scan %d", i, targets, got, want)
						}
						if want > 0 {
							nonzero++
						}
						if slices.Contains(mapRow, targets[0]) {
							skipped++
						}
					}
				}
				// The cases must include both kinds of target (check that
				// the test exercises what it claims; common practice).
				if nonzero == 0 || skipped == 0 {
					t.Fatalf("%d penalised target sets, %d with a target among the map neighbours; want both > 0", nonzero, skipped)
				}
			})
		}
	}
}

func distinctWithout(v []int32, i int) bool {
	for a, x := range v {
		if int(x) == i || slices.Contains(v[:a], x) {
			return false
		}
	}
	return true
}

// A caller's neighbour list may repeat a point or name the query itself;
// the tree ranking declines and contPenalty falls back to the scan, so the
// penalty is still the scan's (the former behaviour; hand-made cases).
func TestContPenaltyOddTargets(t *testing.T) {
	rng := rand.New(rand.NewPCG(43, 44))
	n, k := 200, 4
	y := gauss(rng, 2*n)
	tree := newKDTree(y)
	rk := newRanker(k)
	var h nbHeap
	mapRow := make([]int32, k)
	dist := make([]float64, n)
	var dy []float64
	for _, tc := range []struct {
		name    string
		i       int
		targets []int32
	}{
		{"repeat", 3, []int32{7, 150, 7, 9}},
		{"self", 3, []int32{3, 150, 8, 9}},
		{"all the same", 10, []int32{11, 11, 11, 11}},
	} {
		tree.query(tc.i, k, &h, mapRow)
		if _, ok := rk.mapPenalty(tree, tc.i, tc.targets, mapRow); ok {
			t.Errorf("%s: tree ranking accepted %v", tc.name, tc.targets)
		}
		mapDistances(dist, y, tc.i)
		want := rk.penalty(dist, tc.i, tc.targets)
		if got := contPenalty(rk, tree, y, tc.i, tc.targets, mapRow, &dy); got != want {
			t.Errorf("%s: got %d want %d", tc.name, got, want)
		}
	}
}

// sharedRanks, which ranks the map neighbours of several layouts in one
// pass over a row of input distances, gives each layout the scan's
// penalty (ranker.penalty, the definition as above), on rows with many
// tied distances and on rows without ties.
func TestSharedRanksEqualsScan(t *testing.T) {
	rng := rand.New(rand.NewPCG(45, 46))
	const n = 900
	for _, tc := range []struct {
		name   string
		levels int // distinct distance values; 0: continuous, -1: a third +Inf (overflow)
	}{{"continuous", 0}, {"ties", 40}, {"few values", 3}, {"overflow", -1}} {
		t.Run(tc.name, func(t *testing.T) {
			dist := make([]float64, n)
			var tr sharedRanks
			for trial := 0; trial < 200; trial++ {
				i := rng.IntN(n)
				for l := range dist {
					switch {
					case tc.levels == 0:
						dist[l] = rng.ExpFloat64()
					case tc.levels < 0 && rng.IntN(3) == 0:
						dist[l] = math.Inf(1)
					case tc.levels < 0:
						dist[l] = rng.ExpFloat64()
					default:
						dist[l] = float64(rng.IntN(tc.levels))
					}
				}
				dist[i] = 0
				k := 1 + rng.IntN(20)
				rk := newRanker(k)
				// Up to 8 rows of k distinct points other than i; rows
				// share points, as the map neighbours of several layouts do.
				pool := rng.Perm(n)
				pool = slices.DeleteFunc(pool, func(j int) bool { return j == i })[:3*k]
				rows := make([][]int32, 1+rng.IntN(8))
				tr.reset()
				for r := range rows {
					rows[r] = make([]int32, k)
					for s, p := range rng.Perm(len(pool))[:k] {
						rows[r][s] = int32(pool[p])
					}
					tr.add(dist, rows[r])
				}
				tr.rank(dist, i)
				for r, row := range rows {
					if got, want := tr.penalty(dist, row, k), rk.penalty(dist, i, row); got != want {
						t.Fatalf("trial %d row %d (k=%d, i=%d): shared %d, scan %d", trial, r, k, i, got, want)
					}
				}
			}
		})
	}
}

// bruteSums computes the integer sums behind trustworthiness, continuity
// and kNN recall straight from the definitions in the doc comments:
// every other point ranked by a full sort on (distance, index) in each
// space, ranks read off the sorts. It is the reference the fast paths are
// checked against, ties and duplicate points included.
//
// With a neighbour list nb (row i = nb[i*K:(i+1)*K], distinct points other
// than i, not necessarily the true neighbours) it follows Options'
// contract instead: continuity and recall take row i's first k entries as
// the input neighbours, and trustworthiness takes a map neighbour's input
// rank as its position in the row + 1 when every map neighbour of i is in
// the row, and from the distances otherwise.
func bruteSums(x []float64, d int, y []float64, k int, nb []int32, K int) (trust, cont, hits int64) {
	n := len(y) / 2
	dx, dy := make([]float64, n), make([]float64, n)
	byX, byY := make([]int, 0, n), make([]int, 0, n)
	rankX, rankY := make([]int, n), make([]int, n)
	for i := 0; i < n; i++ {
		for l := 0; l < n; l++ {
			var s float64
			for c := 0; c < d; c++ {
				a := x[i*d+c] - x[l*d+c]
				s += a * a
			}
			dx[l] = s
			dy[l] = sqDist(y[2*l], y[2*l+1], y[2*i], y[2*i+1])
		}
		byX, byY = byX[:0], byY[:0]
		for l := 0; l < n; l++ {
			if l != i {
				byX = append(byX, l)
				byY = append(byY, l)
			}
		}
		order := func(dist []float64) func(a, b int) int {
			return func(a, b int) int {
				if dist[a] != dist[b] {
					if dist[a] < dist[b] {
						return -1
					}
					return 1
				}
				return a - b
			}
		}
		slices.SortFunc(byX, order(dx))
		slices.SortFunc(byY, order(dy))
		for r, l := range byX {
			rankX[l] = r + 1
		}
		for r, l := range byY {
			rankY[l] = r + 1
		}
		inNb := byX[:k]
		if nb != nil {
			row := nb[i*K : (i+1)*K]
			inNb = inNb[:0:0]
			for _, j := range row[:k] {
				inNb = append(inNb, int(j))
			}
			all := true
			for _, j := range byY[:k] {
				all = all && slices.Contains(row, int32(j))
			}
			if all {
				for _, j := range byY[:k] {
					rankX[j] = slices.Index(row, int32(j)) + 1
				}
			}
		}
		for _, j := range byY[:k] {
			trust += int64(max(0, rankX[j]-k))
			if slices.Contains(inNb, j) {
				hits++
			}
		}
		for _, j := range inNb {
			cont += int64(max(0, rankY[j]-k))
		}
	}
	return trust, cont, hits
}

// FaithfulnessBatch equals the scores computed from bruteSums with the
// same normalisation, bit for bit, for every tie-laden layout, with and
// without an input neighbour list, on one and on three threads. The input
// is 3-d and rounded, so input distances tie as well.
func TestFaithfulnessBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(47, 48))
	const n, d = 300, 3
	x := gauss(rng, n*d)
	for c := range x {
		x[c] = math.Round(2*x[c]) / 2
	}
	lay := rankLayouts(rng, n)
	names := slices.Sorted(func(yield func(string) bool) {
		for name := range lay {
			if !yield(name) {
				return
			}
		}
	})
	ys := make([][]float64, len(names))
	for l, name := range names {
		ys[l] = lay[name]
	}
	K := 30
	nb := exactInputNeighbors(x, n, d, K)
	// An approximate list: a fifth of the entries replaced by other
	// points (still distinct, never the row's own point), then each row
	// shuffled.
	approx := slices.Clone(nb)
	for i := 0; i < n; i++ {
		row := approx[i*K : (i+1)*K]
		for s := range row {
			if rng.IntN(5) == 0 {
				for {
					j := int32(rng.IntN(n))
					if int(j) != i && !slices.Contains(row, j) {
						row[s] = j
						break
					}
				}
			}
		}
		rng.Shuffle(K, func(a, b int) { row[a], row[b] = row[b], row[a] })
	}
	for _, k := range []int{1, 7, 30} {
		var exactWant []Faithfulness
		for _, list := range []struct {
			name string
			nb   []int32
		}{{"none", nil}, {"exact", nb}, {"approximate", approx}} {
			want := make([]Faithfulness, len(ys))
			for l, y := range ys {
				tr, co, hi := bruteSums(x, d, y, k, list.nb, K)
				norm := 2.0 / (float64(n) * float64(k) * (2*float64(n) - 3*float64(k) - 1))
				mk := func(v float64) Score { return Score{Value: v, K: k, N: n, Queries: n} }
				want[l] = Faithfulness{mk(1 - float64(tr)*norm), mk(1 - float64(co)*norm), mk(float64(hi) / (float64(n) * float64(k)))}
			}
			switch list.name {
			case "exact":
				exactWant = want
			case "approximate":
				// The approximate list must change the scores, or the
				// case tests nothing (common practice).
				if slices.Equal(want, exactWant) {
					t.Fatalf("k=%d: the approximate list gives the exact scores", k)
				}
			}
			for _, th := range []int{1, 3} {
				opt := Options{Threads: th}
				if list.nb != nil {
					opt.InputNeighbors, opt.InputK = list.nb, K
				}
				got, err := FaithfulnessBatch(x, d, ys, k, opt)
				if err != nil {
					t.Fatal(err)
				}
				for l := range ys {
					if got[l] != want[l] {
						t.Errorf("%s k=%d list=%s threads=%d: got %+v want %+v", names[l], k, list.name, th, got[l], want[l])
					}
				}
			}
		}
	}
}

// A caller's list that repeats points and names the query itself goes
// through the fallback inside FaithfulnessBatch: continuity equals the sum
// of the full scan's penalties (ranker.penalty, the former code path,
// which defines the score for such lists) with the usual normalisation.
func TestFaithfulnessOddList(t *testing.T) {
	rng := rand.New(rand.NewPCG(49, 50))
	n, d, K, k := 300, 3, 12, 6
	x := gauss(rng, n*d)
	ys := [][]float64{gauss(rng, 2*n), rankLayouts(rng, n)["grid"]}
	nb := exactInputNeighbors(x, n, d, K)
	odd := 0
	for i := 0; i < n; i += 3 {
		row := nb[i*K : (i+1)*K]
		row[rng.IntN(k)] = int32(i)                 // the query itself
		row[rng.IntN(k)] = row[(rng.IntN(k-1)+1)%k] // maybe a repeat
		odd++
	}
	got, err := FaithfulnessBatch(x, d, ys, k, Options{Threads: 2, InputNeighbors: nb, InputK: K})
	if err != nil {
		t.Fatal(err)
	}
	rk := newRanker(k)
	dist := make([]float64, n)
	for l, y := range ys {
		var pen int64
		for i := 0; i < n; i++ {
			mapDistances(dist, y, i)
			pen += rk.penalty(dist, i, nb[i*K:i*K+k])
		}
		norm := 2.0 / (float64(n) * float64(k) * (2*float64(n) - 3*float64(k) - 1))
		if want := 1 - float64(pen)*norm; got[l].Continuity.Value != want {
			t.Errorf("layout %d (%d odd rows): continuity %.17g want %.17g", l, odd, got[l].Continuity.Value, want)
		}
	}
}
