package stability

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"strings"
	"testing"
)

// FaithfulnessBatch gives, for every layout, exactly FaithfulnessAt of that
// layout alone (bit for bit: the scores are ratios of the same integer
// penalty sums), exact and sampled, with and without an input neighbour
// list, whatever the thread count. The layouts are the three digits layouts
// of the scikit-learn fixture, a perturbed copy, an unrelated Gaussian
// cloud and a repeat of the first.
func TestFaithfulnessBatchEqualsSingle(t *testing.T) {
	ref, dd := loadReference(t)
	rng := rand.New(rand.NewPCG(31, 32))
	n := dd.n
	perturbed := append([]float64(nil), ref.Layouts["pca_noise"]...)
	for i := range perturbed {
		perturbed[i] += 0.5 * rng.NormFloat64()
	}
	names := []string{"pca_noise", "pca_noise2", "random", "perturbed", "gauss", "pca_noise again"}
	layouts := [][]float64{ref.Layouts["pca_noise"], ref.Layouts["pca_noise2"], ref.Layouts["random"],
		perturbed, gauss(rng, 2*n), ref.Layouts["pca_noise"]}
	nb := exactInputNeighbors(dd.jit, n, 64, 40)
	// Exact scoring of the digits costs about 0.1 s per layout and k, so
	// the exact cases use one k (10, a fixture k) and the thread-count
	// check runs on the sampled ones.
	for _, tc := range []struct {
		name    string
		opt     Options
		ks      []int
		threads []int
	}{
		{"exact", Options{Threads: 2}, []int{10}, nil},
		{"exact/list", Options{Threads: 2, InputNeighbors: nb, InputK: 40}, []int{10}, nil},
		{"sampled", Options{Threads: 2, ExactLimit: -1, Samples: 300, Seed: 7}, []int{5, 30}, []int{1, 3}},
		{"sampled/list", Options{Threads: 2, ExactLimit: 1000, Samples: 500, Seed: 8, InputNeighbors: nb, InputK: 40}, []int{5, 30}, []int{1, 3}},
	} {
		for _, k := range tc.ks {
			t.Run(fmt.Sprintf("%s/k=%d", tc.name, k), func(t *testing.T) {
				got, err := FaithfulnessBatch(dd.jit, 64, layouts, k, tc.opt)
				if err != nil {
					t.Fatal(err)
				}
				if len(got) != len(layouts) {
					t.Fatalf("got %d results for %d layouts", len(got), len(layouts))
				}
				if got[5] != got[0] {
					t.Errorf("the same layout twice: %+v and %+v", got[0], got[5])
				}
				for l, y := range layouts[:5] {
					want, err := FaithfulnessAt(dd.jit, 64, y, k, tc.opt)
					if err != nil {
						t.Fatal(err)
					}
					if got[l] != want {
						t.Errorf("%s: batch %+v, alone %+v", names[l], got[l], want)
					}
				}
				// Team rule: the bits do not depend on the thread count.
				for _, th := range tc.threads {
					opt := tc.opt
					opt.Threads = th
					again, err := FaithfulnessBatch(dd.jit, 64, layouts, k, opt)
					if err != nil {
						t.Fatal(err)
					}
					for l := range again {
						if again[l] != got[l] {
							t.Errorf("%s threads=%d: %+v, threads=2: %+v", names[l], th, again[l], got[l])
						}
					}
				}
				if tc.opt.ExactLimit != 0 {
					if q := got[0].Trustworthiness.Queries; q != tc.opt.Samples || got[0].Trustworthiness.N != n {
						t.Errorf("sampled: %d queries of %d, want %d of %d", q, got[0].Trustworthiness.N, tc.opt.Samples, n)
					}
					return
				}
				// The fixture's layouts against scikit-learn 1.2.1 (as in
				// TestTrustworthinessSklearn; tolerance 1e-12, rounding of the
				// final division only).
				ks := fmt.Sprint(k)
				for l, name := range names[:3] {
					for _, c := range []struct {
						what      string
						got, want float64
					}{
						{"trustworthiness", got[l].Trustworthiness.Value, ref.TrustJit[name][ks]}, // scikit-learn 1.2.1 trustworthiness(X_jit, Y, k)
						{"continuity", got[l].Continuity.Value, ref.ContJit[name][ks]},            // scikit-learn 1.2.1 trustworthiness(Y, X_jit, k)
						{"knn recall", got[l].KNNRecall.Value, ref.RecallJit[name][ks]},           // scikit-learn 1.2.1 NearestNeighbors sets
					} {
						if math.Abs(c.got-c.want) > 1e-12 {
							t.Errorf("%s %s: got %.17g want %.17g", name, c.what, c.got, c.want)
						}
					}
				}
			})
		}
	}
}

// A batch where some layouts answer every query from the input neighbour
// list and others need the input distances of most queries: each layout
// still scores exactly as alone, and as searching the input without a list.
func TestFaithfulnessBatchMixedList(t *testing.T) {
	rng := rand.New(rand.NewPCG(33, 34))
	n, d, K, k := 1500, 3, 30, 10
	x := gauss(rng, n*d)
	near := make([]float64, 2*n)
	noisy := make([]float64, 2*n)
	for i := 0; i < n; i++ {
		x[i*d+2] *= 0.05 // nearly planar input
		near[2*i] = x[i*d] + 0.02*rng.NormFloat64()
		near[2*i+1] = x[i*d+1] + 0.02*rng.NormFloat64()
		noisy[2*i] = x[i*d] + 0.3*rng.NormFloat64()
		noisy[2*i+1] = x[i*d+1] + 0.3*rng.NormFloat64()
	}
	layouts := [][]float64{gauss(rng, 2*n), near, noisy, near}
	nb := exactInputNeighbors(x, n, d, K)
	// The test must exercise both kinds: count the queries each layout
	// answers from the list (common practice: check the fixture does what
	// the test needs).
	resolved := make([]int, len(layouts))
	for l, y := range layouts {
		mnb := mapNeighbors(y, k, nil, 1)
		for i := 0; i < n; i++ {
			if _, ok := listPenalty(nb[i*K:(i+1)*K], mnb[i*k:(i+1)*k], k); ok {
				resolved[l]++
			}
		}
	}
	if resolved[1] < n/10 || resolved[0] > n/10 {
		t.Fatalf("queries answered from the list per layout: %v; want many for the near copy, few for the random layout", resolved)
	}
	for _, opt := range []Options{
		{Threads: 2, InputNeighbors: nb, InputK: K},
		{Threads: 1, InputNeighbors: nb, InputK: K, ExactLimit: 500, Samples: 400, Seed: 2},
	} {
		got, err := FaithfulnessBatch(x, d, layouts, k, opt)
		if err != nil {
			t.Fatal(err)
		}
		searched := opt
		searched.InputNeighbors, searched.InputK = nil, 0
		for l, y := range layouts {
			alone, err := FaithfulnessAt(x, d, y, k, opt)
			if err != nil {
				t.Fatal(err)
			}
			want, err := FaithfulnessAt(x, d, y, k, searched)
			if err != nil {
				t.Fatal(err)
			}
			if got[l] != alone || got[l] != want {
				t.Errorf("layout %d (exact limit %d): batch %+v, alone %+v, searched %+v", l, opt.ExactLimit, got[l], alone, want)
			}
		}
		if got[1].Trustworthiness.Value >= 1 || got[1].Trustworthiness.Value <= got[0].Trustworthiness.Value {
			t.Errorf("near copy T = %v, random T = %v; want random < near < 1", got[1].Trustworthiness.Value, got[0].Trustworthiness.Value)
		}
	}
}

func TestFaithfulnessBatchErrors(t *testing.T) {
	y := []float64{0, 0, 1, 0, 0, 1, 1, 1, 2, 2, 3, 1}
	x := []float64{0, 1, 2, 3, 4, 5}
	got, err := FaithfulnessBatch(x, 1, nil, 2, Options{})
	if err != nil || len(got) != 0 {
		t.Errorf("no layouts: got %v, %v; want an empty result", got, err)
	}
	for _, tc := range []struct {
		name, want string
		ys         [][]float64
	}{
		{"odd layout", "layout 1 has odd length", [][]float64{y, y[:11]}},
		{"NaN layout", "layout 2 row 1 column 0 is NaN", [][]float64{y, y, {0, 0, math.NaN(), 0, 0, 1, 1, 1, 2, 2, 3, 1}}},
		{"sizes", "layout 1 has 5 points, layout 0 has 6", [][]float64{y, y[:10]}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := FaithfulnessBatch(x, 1, tc.ys, 2, Options{})
			if err == nil || !strings.HasPrefix(err.Error(), "stability: ") || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("got error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

// ranksStable is the former ranks: a stable sort of the indices by value.
// Tied values share their mean rank, so the order among them cannot
// matter; the new ranks must agree to the bit.
func ranksStable(v []float64) []float64 {
	idx := make([]int, len(v))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return v[idx[a]] < v[idx[b]] })
	r := make([]float64, len(v))
	for lo := 0; lo < len(idx); {
		hi := lo + 1
		for hi < len(idx) && v[idx[hi]] == v[idx[lo]] {
			hi++
		}
		for m := lo; m < hi; m++ {
			r[idx[m]] = float64(lo+hi+1) / 2
		}
		lo = hi
	}
	return r
}

func TestRanksTies(t *testing.T) {
	rng := rand.New(rand.NewPCG(35, 36))
	// By hand, with the tie rule of scipy.stats.rankdata(method="average")
	// that spearmanr uses: tied values get the mean of their ranks.
	got := ranks([]float64{3, 1, 4, 1, 5, 9, 2, 6, 5, 3, 5})
	want := []float64{4.5, 1.5, 6, 1.5, 8, 11, 3, 10, 8, 4.5, 8}
	for i := range want {
		if got[i] != want[i] {
			t.Fatalf("ranks got %v want %v", got, want)
		}
	}
	for _, tc := range []struct {
		name string
		v    []float64
	}{
		{"distinct", gauss(rng, 5000)},
		{"few values", func() []float64 {
			v := make([]float64, 5000)
			for i := range v {
				v[i] = float64(rng.IntN(7))
			}
			v[3], v[9] = math.Copysign(0, -1), 0 // -0 and +0 tie
			return v
		}()},
		{"constant", make([]float64, 100)},
	} {
		got, want := ranks(tc.v), ranksStable(tc.v)
		for i := range want {
			if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
				t.Fatalf("%s: rank %d got %v want %v", tc.name, i, got[i], want[i])
			}
		}
	}
}

// The prepared path (NewDistanceRanks, Of, Correlation, Spearman) equals
// DistanceCorrelation and the Spearman correlation of the explicit
// distance lists bit for bit, for sampled and for all pairs; against the
// scipy 1.10.1 fixture within 1e-12 (as TestAgreementSklearn).
func TestDistanceRanksEqualsOneShot(t *testing.T) {
	ref, dd := loadReference(t)
	rng := rand.New(rand.NewPCG(37, 38))
	n := dd.n
	// Sampled pairs: the digits input against every fixture layout and a
	// Gaussian cloud with many tied coordinates (rounded to 0.5).
	rounded := gauss(rng, 2*n)
	for i := range rounded {
		rounded[i] = math.Round(2*rounded[i]) / 2
	}
	layouts := [][]float64{ref.Layouts["pca_noise"], ref.Layouts["pca_noise2"], ref.Layouts["random"], rounded}
	const pairs, seed = 20000, 41
	in, err := NewDistanceRanks(dd.raw, 64, pairs, seed)
	if err != nil {
		t.Fatal(err)
	}
	// The pairs as documented: drawn with replacement from PCG(seed, 2).
	pr := rand.New(rand.NewPCG(seed, 2))
	pi, pj := make([]int, pairs), make([]int, pairs)
	for m := range pi {
		pi[m] = pr.IntN(n)
		pj[m] = pr.IntN(n - 1)
		if pj[m] >= pi[m] {
			pj[m]++
		}
	}
	dist := func(v []float64, d int) []float64 {
		out := make([]float64, pairs)
		for m := range out {
			var s float64
			for c := 0; c < d; c++ {
				t := v[pi[m]*d+c] - v[pj[m]*d+c]
				s += t * t
			}
			out[m] = math.Sqrt(s)
		}
		return out
	}
	dIn := dist(dd.raw, 64)
	var prepared []*DistanceRanks
	for l, y := range layouts {
		one, err := DistanceCorrelation(dd.raw, 64, y, 2, pairs, seed)
		if err != nil {
			t.Fatal(err)
		}
		c, err := in.Correlation(y, 2)
		if err != nil {
			t.Fatal(err)
		}
		r, err := in.Of(y, 2)
		if err != nil {
			t.Fatal(err)
		}
		prepared = append(prepared, r)
		s, err := in.Spearman(r)
		if err != nil {
			t.Fatal(err)
		}
		direct, err := Spearman(dIn, dist(y, 2))
		if err != nil {
			t.Fatal(err)
		}
		if c != one || s != one || one.Value != direct || one.Pairs != pairs || one.All || one.N != n {
			t.Errorf("layout %d: DistanceCorrelation %+v, Correlation %+v, Spearman %+v, direct %v", l, one, c, s, direct)
		}
	}
	// Layout against layout, ranks prepared once each.
	for a := range layouts {
		for b := a + 1; b < len(layouts); b++ {
			one, err := DistanceCorrelation(layouts[a], 2, layouts[b], 2, pairs, seed)
			if err != nil {
				t.Fatal(err)
			}
			s, err := prepared[a].Spearman(prepared[b])
			if err != nil {
				t.Fatal(err)
			}
			if s != one {
				t.Errorf("layouts %d-%d: prepared %+v, one-shot %+v", a, b, s, one)
			}
		}
	}
	// All pairs of the first 300 points against scipy 1.10.1 spearmanr of
	// pdist (make_reference.py), and equal to the one-shot call.
	all, err := NewDistanceRanks(dd.jit[:300*64], 64, 1<<30, 1)
	if err != nil {
		t.Fatal(err)
	}
	for name, want := range ref.SpearmanFirst300 {
		y := ref.Layouts[name][:600]
		got, err := all.Correlation(y, 2)
		if err != nil {
			t.Fatal(err)
		}
		one, err := DistanceCorrelation(dd.jit[:300*64], 64, y, 2, 1<<30, 1)
		if err != nil {
			t.Fatal(err)
		}
		if got != one || !got.All || got.Pairs != 300*299/2 {
			t.Errorf("%s: prepared %+v, one-shot %+v", name, got, one)
		}
		if math.Abs(got.Value-want) > 1e-12 { // 44850 ranks; rounding of the sums only
			t.Errorf("%s: got %.17g want %.17g (scipy 1.10.1)", name, got.Value, want)
		}
	}
}

func TestDistanceRanksErrors(t *testing.T) {
	y := []float64{0, 0, 1, 0, 0, 1, 1, 1, 2, 2, 3, 1}
	r, err := NewDistanceRanks(y, 2, 50, 1)
	if err != nil {
		t.Fatal(err)
	}
	other, err := NewDistanceRanks(y, 2, 10, 1)
	if err != nil {
		t.Fatal(err)
	}
	wantPackageErrors(t, []errorCase{
		{"too few points", func() error { _, err := NewDistanceRanks(y[:4], 2, 0, 1); return err }},
		{"ragged", func() error { _, err := NewDistanceRanks(y[:5], 2, 0, 1); return err }},
		{"one pair", func() error { _, err := NewDistanceRanks(y, 2, 1, 1); return err }},
		{"NaN", func() error { _, err := NewDistanceRanks([]float64{0, 1, math.NaN()}, 1, 0, 1); return err }},
		{"overflow", func() error { _, err := NewDistanceRanks([]float64{-1e300, 0, 1e300}, 1, 0, 1); return err }},
		{"other points", func() error { _, err := r.Of(y[:10], 2); return err }},
		{"other pairs", func() error { _, err := r.Spearman(other); return err }},
		{"constant", func() error {
			_, err := r.Correlation([]float64{0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0}, 2)
			return err
		}},
	})
	// DistanceCorrelation keeps its errors and their order: the shape of b
	// is checked before the values of a.
	_, err = DistanceCorrelation([]float64{0, 1, math.NaN()}, 1, y[:5], 1, 0, 1)
	if err == nil || !strings.Contains(err.Error(), "are not the same points") {
		t.Errorf("got %v, want the shape error first", err)
	}
	_, err = DistanceCorrelation([]float64{0, 1, 2}, 1, []float64{0, 1e300, -1e300}, 1, 0, 1)
	if err == nil || err.Error() != "stability: distance correlation: stability: y row 0 column 0 is +Inf" {
		t.Errorf("got %v, want the overflow of b's distances as Spearman reports it", err)
	}
}
