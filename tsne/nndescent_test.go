package tsne

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"testing"
)

// nndTestData is a seeded Gaussian mixture in d dimensions: c centres with
// coordinates N(0, 2²), points N(centre, 1) — clustered 50-d data of the
// kind issue 3 asks recall on (synthetic data for a property test).
func nndTestData(n, d, c int, seed uint64) []float64 {
	r := rand.New(rand.NewPCG(seed, 3))
	cen := make([]float64, c*d)
	for i := range cen {
		cen[i] = 2 * r.NormFloat64()
	}
	x := make([]float64, n*d)
	for i := 0; i < n; i++ {
		g := r.IntN(c)
		for j := 0; j < d; j++ {
			x[i*d+j] = cen[g*d+j] + r.NormFloat64()
		}
	}
	return x
}

// nndRecall is the fraction of exact neighbours found (common practice for
// approximate search, e.g. Dong, Charikar & Li 2011, "recall").
func nndRecall(got, want *Neighbors) float64 {
	hit := 0
	k := want.K
	for i := 0; i < want.N; i++ {
		set := map[int32]bool{}
		for _, j := range want.Index[i*k : (i+1)*k] {
			set[j] = true
		}
		for _, j := range got.Index[i*k : (i+1)*k] {
			if set[j] {
				hit++
			}
		}
	}
	return float64(hit) / float64(want.N*k)
}

func TestApproxNeighborsRecall(t *testing.T) {
	n := 6000
	if os.Getenv("PLUMB_LONG") != "" {
		n = 20000
	}
	const d, k = 50, 90
	x := nndTestData(n, d, 20, 1)
	want, err := ExactNeighbors(x, n, d, k, 0)
	if err != nil {
		t.Fatal(err)
	}
	got, err := ApproxNeighbors(x, n, d, k, 1, 0)
	if err != nil {
		t.Fatal(err)
	}
	rec := nndRecall(got, want)
	t.Logf("n=%d d=%d k=%d: recall %.4f", n, d, k, rec)
	// Target from issue 3: recall ≥ 0.98 at k = 90 on clustered 50-d data.
	if rec < 0.98 {
		t.Errorf("recall = %.4f, want ≥ 0.98", rec)
	}
	// float32 search, float64 output: the P built on the approximate lists
	// must give the KL of the P built on exact lists for a fixed layout
	// (issue 3: show float32 does not move KL). KL as in van der Maaten &
	// Hinton (2008); tolerance 1e-4 relative is common practice (no source).
	pe, err := Affinities(want, 30, 0)
	if err != nil {
		t.Fatal(err)
	}
	pa, err := Affinities(got, 30, 0)
	if err != nil {
		t.Fatal(err)
	}
	y := fftTestLayout("clusters", n, 20, 4)
	z := ExactZ(y, 0)
	ke, ka := KL(y, pe, z), KL(y, pa, z)
	t.Logf("KL with exact neighbours %.8f, with approximate %.8f", ke, ka)
	if math.Abs(ka-ke) > 1e-4*math.Abs(ke) {
		t.Errorf("KL on approximate neighbours %.8f, want %.8f within 1e-4 relative", ka, ke)
	}
	// Every reported distance is exact and rows are sorted (the contract
	// of Neighbors in types.go).
	for i := 0; i < n; i++ {
		for e := 0; e < k; e++ {
			j := got.Index[i*k+e]
			if int(j) == i {
				t.Fatalf("row %d lists itself", i)
			}
			var sq float64
			for c := 0; c < d; c++ {
				v := x[i*d+c] - x[int(j)*d+c]
				sq += v * v
			}
			if dd := got.Dist[i*k+e]; dd*dd < sq*(1-1e-12) || dd*dd > sq*(1+1e-12) {
				t.Fatalf("row %d entry %d: dist %v, want sqrt(%v)", i, e, dd, sq)
			}
			if e > 0 && got.Dist[i*k+e] < got.Dist[i*k+e-1] {
				t.Fatalf("row %d not sorted at %d", i, e)
			}
		}
	}
}

// TestApproxNeighborsDeterministic: same seed ⇒ same bits for any thread
// count (team rule).
func TestApproxNeighborsDeterministic(t *testing.T) {
	const n, d, k = 5000, 20, 15
	x := nndTestData(n, d, 10, 2)
	ref, err := ApproxNeighbors(x, n, d, k, 7, 1)
	if err != nil {
		t.Fatal(err)
	}
	for _, th := range []int{2, 3} {
		got, err := ApproxNeighbors(x, n, d, k, 7, th)
		if err != nil {
			t.Fatal(err)
		}
		for i := range ref.Index {
			if got.Index[i] != ref.Index[i] || got.Dist[i] != ref.Dist[i] {
				t.Fatalf("threads=%d: entry %d = (%d, %v), want (%d, %v)", th, i, got.Index[i], got.Dist[i], ref.Index[i], ref.Dist[i])
			}
		}
	}
}

func TestApproxNeighborsErrors(t *testing.T) {
	x := nndTestData(10, 3, 2, 1)
	for _, tc := range []struct {
		name    string
		n, d, k int
	}{
		{"k too large", 10, 3, 10},
		{"k zero", 10, 3, 0},
		{"length mismatch", 11, 3, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := ApproxNeighbors(x, tc.n, tc.d, tc.k, 1, 1); err == nil {
				t.Errorf("got nil error, want one")
			}
		})
	}
}

func BenchmarkApproxNeighbors(b *testing.B) {
	for _, n := range []int{10000, 100000} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			x := nndTestData(n, 50, 20, 1)
			b.ReportAllocs()
			for b.Loop() {
				nb, err := ApproxNeighbors(x, n, 50, 90, 1, 0)
				if err != nil {
					b.Fatal(err)
				}
				nndSink = nb
			}
		})
	}
}

var nndSink *Neighbors
