package tsne

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"plumb/internal/fixture"
)

// nbtDigits reads testdata/digits.csv (UCI optical recognition of
// handwritten digits, the copy shipped in python3-sklearn): 1797 rows, the
// 64 pixel counts as float64, no scaling.
func nbtDigits(t testing.TB) (x []float64, n, d int) {
	t.Helper()
	rows := nbtReadCSV(t, filepath.Join("..", "testdata", "digits.csv"))
	d = 64
	for _, r := range rows {
		if len(r) != 2+d {
			t.Fatalf("digits.csv: row has %d fields, want %d", len(r), 2+d)
		}
		for _, s := range r[2:] {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatalf("digits.csv: %v", err)
			}
			x = append(x, v)
		}
	}
	return x, len(rows), d
}

// nbtReadCSV reads a headed CSV file and returns the data rows.
func nbtReadCSV(t testing.TB, path string) [][]string {
	t.Helper()
	return fixture.MustReadCSV(t, path).Rows
}

// nbtAtoi and nbtAtof parse fixture fields, failing the test on error.
func nbtAtoi(t testing.TB, s string) int {
	t.Helper()
	v, err := strconv.Atoi(s)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func nbtAtof(t testing.TB, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// nbtUniform returns n seeded uniform points in [0, 1)^d.
func nbtUniform(n, d int, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 1))
	x := make([]float64, n*d)
	for i := range x {
		x[i] = rng.Float64()
	}
	return x
}

// nbtClusters returns n seeded points from a mixture of c isotropic
// Gaussians in d dimensions (centres uniform in [−10, 10)^d, sd 1).
func nbtClusters(n, d, c int, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 2))
	centres := make([]float64, c*d)
	for i := range centres {
		centres[i] = 20*rng.Float64() - 10
	}
	x := make([]float64, n*d)
	for i := 0; i < n; i++ {
		m := rng.IntN(c)
		for j := 0; j < d; j++ {
			x[i*d+j] = centres[m*d+j] + rng.NormFloat64()
		}
	}
	return x
}

// nbtWithDuplicates returns clustered data in which every third point
// copies an earlier one and a block of 150 points are all identical, so
// that ties at distance 0 exceed k.
func nbtWithDuplicates(n, d int, seed uint64) []float64 {
	x := nbtClusters(n, d, 5, seed)
	rng := rand.New(rand.NewPCG(seed, 3))
	for i := 3; i < n; i += 3 {
		src := rng.IntN(i)
		copy(x[i*d:(i+1)*d], x[src*d:(src+1)*d])
	}
	for i := n / 2; i < n/2+150 && i < n; i++ {
		copy(x[i*d:(i+1)*d], x[0:d])
	}
	return x
}

// nbtGrid returns points on a small integer grid in d dimensions: many
// exact distance ties between distinct points.
func nbtGrid(n, d int, seed uint64) []float64 {
	rng := rand.New(rand.NewPCG(seed, 4))
	x := make([]float64, n*d)
	for i := range x {
		x[i] = float64(rng.IntN(6))
	}
	return x
}

func TestExactNeighborsErrors(t *testing.T) {
	// Argument checks documented on ExactNeighbors (common practice).
	good := nbtUniform(10, 3, 1)
	nan := slices.Clone(good)
	nan[2*3+1] = math.NaN()
	inf := slices.Clone(good)
	inf[7*3+2] = math.Inf(-1)
	tests := []struct {
		name    string
		x       []float64
		n, d, k int
		want    string
	}{
		{"short", good[:29], 10, 3, 2, "length 29"},
		{"one point", good[:3], 1, 3, 0, "at least 2 points"},
		{"no features", nil, 10, 0, 2, "at least 1 feature"},
		{"k zero", good, 10, 3, 0, "k = 0"},
		{"k negative", good, 10, 3, -1, "k = -1"},
		{"k equals n", good, 10, 3, 10, "less than n = 10"},
		{"NaN", nan, 10, 3, 2, "row 2, column 1 is NaN"},
		{"Inf", inf, 10, 3, 2, "row 7, column 2 is -Inf"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			nb, err := ExactNeighbors(tc.x, tc.n, tc.d, tc.k, 1)
			if err == nil {
				t.Fatalf("got neighbours %v, want error containing %q", nb, tc.want)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("got error %q, want it to contain %q", err, tc.want)
			}
		})
	}
}

func TestNeighborCount(t *testing.T) {
	// k = min(n − 1, ⌊3·perplexity⌋): van der Maaten, JMLR 15, 2014, which
	// keeps ⌊3u⌋ neighbours for perplexity u (§4.1, section from memory).
	tests := []struct {
		n    int
		perp float64
		want int
	}{
		{1797, 30, 90},
		{1797, 10, 30},
		{1797, 33.4, 100},
		{50, 30, 49},
		{91, 30, 90},
		{2, 5, 1},
		{1, 5, 0},
		{100, 0, 0},
		{100, math.NaN(), 0},
	}
	for _, tc := range tests {
		if got := NeighborCount(tc.n, tc.perp); got != tc.want {
			t.Errorf("NeighborCount(%d, %g): got %d, want %d", tc.n, tc.perp, got, tc.want)
		}
	}
}

func TestExactNeighborsSmallExample(t *testing.T) {
	// Points on a line at 0, 1, 2, 5, 5: plain arithmetic of |a − b| (common
	// practice); ties go to the smaller index, duplicates sit at distance 0.
	x := []float64{0, 1, 2, 5, 5}
	nb, err := ExactNeighbors(x, 5, 1, 2, 1)
	if err != nil {
		t.Fatal(err)
	}
	wantIdx := []int32{1, 2, 0, 2, 1, 0, 4, 2, 3, 2}
	wantDist := []float64{1, 2, 1, 1, 1, 2, 0, 3, 0, 3}
	if !slices.Equal(nb.Index, wantIdx) || !slices.Equal(nb.Dist, wantDist) {
		t.Errorf("got %v %v, want %v %v", nb.Index, nb.Dist, wantIdx, wantDist)
	}
	// Same with the tree.
	vp := nbVPTree(x, 5, 1, 2, 1)
	if !slices.Equal(vp.Index, wantIdx) || !slices.Equal(vp.Dist, wantDist) {
		t.Errorf("vp-tree: got %v %v, want %v %v", vp.Index, vp.Dist, wantIdx, wantDist)
	}
}

func TestNeighborsDigitsFixture(t *testing.T) {
	// Reference: testdata/sklearn_calibration/neighbors_p30.csv, neighbour
	// lists computed by make_fixtures.py with numpy from exact integer
	// squared distances, ordered by (distance, index).
	x, n, d := nbtDigits(t)
	rows := nbtReadCSV(t, filepath.Join("..", "testdata", "sklearn_calibration", "neighbors_p30.csv"))
	const k = 90
	for name, nb := range map[string]*Neighbors{
		"brute":  nbBruteForce(x, n, d, k, 2),
		"vptree": nbVPTree(x, n, d, k, 2),
	} {
		t.Run(name, func(t *testing.T) {
			for _, r := range rows {
				i, rank, j := nbtAtoi(t, r[0]), nbtAtoi(t, r[1]), nbtAtoi(t, r[2])
				sq := nbtAtof(t, r[3])
				got := nb.Index[i*k+rank]
				if int(got) != j {
					t.Fatalf("point %d rank %d: got neighbour %d, want %d", i, rank, got, j)
				}
				if gd := nb.Dist[i*k+rank]; math.Abs(gd*gd-sq) > 1e-9*sq {
					t.Fatalf("point %d rank %d: got squared distance %v, want %v", i, rank, gd*gd, sq)
				}
			}
		})
	}
}

func TestTruncate(t *testing.T) {
	// The k nearest are a prefix of the k' > k nearest under a total order
	// (distance, index) — a fact of sorting (common practice).
	x := nbtGrid(300, 3, 7)
	full, err := ExactNeighbors(x, 300, 3, 20, 1)
	if err != nil {
		t.Fatal(err)
	}
	want, err := ExactNeighbors(x, 300, 3, 6, 1)
	if err != nil {
		t.Fatal(err)
	}
	got := full.Truncate(6)
	if got.N != 300 || got.K != 6 || !slices.Equal(got.Index, want.Index) || !slices.Equal(got.Dist, want.Dist) {
		t.Fatalf("Truncate(6) differs from a direct k = 6 search")
	}
	got.Index[0], got.Dist[0] = 299, 99
	if full.Index[0] == 299 || full.Dist[0] == 99 {
		t.Errorf("Truncate shares memory with its receiver")
	}
	for _, k := range []int{0, 21} {
		func() {
			defer func() {
				if r := recover(); r != "tsne: Truncate k out of range" {
					t.Errorf("Truncate(%d): got panic %v, want \"tsne: Truncate k out of range\"", k, r)
				}
			}()
			full.Truncate(k)
		}()
	}
}

// nbtNeighborsEqual reports the first difference between two results.
func nbtNeighborsEqual(a, b *Neighbors) error {
	if a.N != b.N || a.K != b.K {
		return fmt.Errorf("shape %d×%d vs %d×%d", a.N, a.K, b.N, b.K)
	}
	for t := range a.Index {
		if a.Index[t] != b.Index[t] || math.Float64bits(a.Dist[t]) != math.Float64bits(b.Dist[t]) {
			return fmt.Errorf("point %d rank %d: (%d, %v) vs (%d, %v)", t/a.K, t%a.K, a.Index[t], a.Dist[t], b.Index[t], b.Dist[t])
		}
	}
	return nil
}

// nbtCheckSorted checks the Neighbors invariants: no self, no repeats,
// ascending (distance, index), distances equal to a direct computation.
func nbtCheckSorted(t *testing.T, nb *Neighbors, x []float64, d int) {
	t.Helper()
	for i := 0; i < nb.N; i++ {
		row := nb.Index[i*nb.K : (i+1)*nb.K]
		seen := map[int32]bool{}
		for c, j := range row {
			if int(j) == i || seen[j] {
				t.Fatalf("point %d: neighbour %d repeated or self", i, j)
			}
			seen[j] = true
			s := 0.0
			for f := 0; f < d; f++ {
				diff := x[i*d+f] - x[int(j)*d+f]
				s += diff * diff
			}
			if got := nb.Dist[i*nb.K+c]; math.Abs(got-math.Sqrt(s)) > 1e-12*(1+math.Sqrt(s)) {
				t.Fatalf("point %d rank %d: got distance %v, want %v", i, c, got, math.Sqrt(s))
			}
			if c > 0 {
				pd, pj := nb.Dist[i*nb.K+c-1], row[c-1]
				if pd > nb.Dist[i*nb.K+c] || (pd == nb.Dist[i*nb.K+c] && pj > j) {
					t.Fatalf("point %d: rank %d (%d, %v) out of order after (%d, %v)", i, c, j, nb.Dist[i*nb.K+c], pj, pd)
				}
			}
		}
	}
}

func TestExactNeighborsDeterministic(t *testing.T) {
	// Rule: identical bits for any thread count (team rules; common practice).
	for _, tc := range []struct {
		name string
		n    int
	}{{"brute", 1500}, {"vptree", BruteForceMaxN + 500}} {
		t.Run(tc.name, func(t *testing.T) {
			x := nbtWithDuplicates(tc.n, 8, 21)
			ref, err := ExactNeighbors(x, tc.n, 8, 12, 1)
			if err != nil {
				t.Fatal(err)
			}
			for _, threads := range []int{2, 8, 0} {
				got, err := ExactNeighbors(x, tc.n, 8, 12, threads)
				if err != nil {
					t.Fatal(err)
				}
				if err := nbtNeighborsEqual(got, ref); err != nil {
					t.Fatalf("threads=%d vs threads=1: %v", threads, err)
				}
			}
			if tc.n > BruteForceMaxN {
				// The dispatch really took the tree path, and it agrees.
				if err := nbtNeighborsEqual(ref, nbBruteForce(x, tc.n, 8, 12, 2)); err != nil {
					t.Fatalf("vp-tree vs brute force: %v", err)
				}
			}
		})
	}
}

func ExampleExactNeighbors() {
	// Five points on a line; the last two coincide.
	x := []float64{0, 1, 2, 5, 5}
	nb, err := ExactNeighbors(x, 5, 1, 2, 1)
	if err != nil {
		panic(err)
	}
	for i := 0; i < nb.N; i++ {
		fmt.Println(i, nb.Index[i*2:i*2+2], nb.Dist[i*2:i*2+2])
	}
	// Output:
	// 0 [1 2] [1 2]
	// 1 [0 2] [1 1]
	// 2 [1 0] [1 2]
	// 3 [4 2] [0 3]
	// 4 [3 2] [0 3]
}

func ExampleNeighborCount() {
	fmt.Println(NeighborCount(1797, 30), NeighborCount(50, 30))
	// Output: 90 49
}

// nbtLong reports whether the long benchmarks (100k points) are enabled:
// PLUMB_LONG=1 go test -run '^$' -bench . ./tsne/
func nbtLong() bool { return os.Getenv("PLUMB_LONG") == "1" }

// BenchmarkExactNeighbors measures k = 90 (perplexity 30) neighbour search
// on a seeded 50-dimensional mixture of 10 Gaussians. Run with
//
//	go test -run '^$' -bench ExactNeighbors -benchtime 1x ./tsne/
//
// (one iteration is seconds at 10k); PLUMB_LONG=1 adds the tree at 100k.
func BenchmarkExactNeighbors(b *testing.B) {
	const d, k = 50, 90
	type run struct {
		name string
		n    int
		fn   func(x []float64, n, d, k, threads int) *Neighbors
	}
	runs := []run{
		{"brute/n=2000", 2000, nbBruteForce},
		{"vptree/n=2000", 2000, nbVPTree},
		{"brute/n=10000", 10000, nbBruteForce},
		{"vptree/n=10000", 10000, nbVPTree},
	}
	if nbtLong() {
		runs = append(runs, run{"vptree/n=100000", 100000, nbVPTree})
	}
	var sink *Neighbors
	for _, r := range runs {
		x := nbtClusters(r.n, d, 10, 42)
		b.Run(r.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				sink = r.fn(x, r.n, d, k, 0)
			}
		})
	}
	_ = sink
}
