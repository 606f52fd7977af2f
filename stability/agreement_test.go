package stability

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"plumb/align"
)

// TestQuantileSpearmanReference compares with numpy 1.24.2 quantile
// (default "linear" method) and scipy 1.10.1 stats.spearmanr, from
// testdata/sklearn_trustworthiness/make_agreement.py.
func TestQuantileSpearmanReference(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "testdata", "sklearn_trustworthiness", "agreement.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Quantiles []struct {
			Name string
			V, Q []float64
			Want []float64
		}
		Spearman []struct {
			Name       string
			X, Y, Want json.RawMessage
		}
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	for _, c := range ref.Quantiles {
		for m, q := range c.Q {
			got := Quantile(c.V, q)
			// 1e-15 relative: one multiply-add on both sides, rounding only.
			if math.Abs(got-c.Want[m]) > 1e-15*math.Max(1, math.Abs(c.Want[m])) {
				t.Errorf("%s q=%g: got %.17g want %.17g (numpy)", c.Name, q, got, c.Want[m])
			}
		}
	}
	if len(ref.Quantiles) == 0 || len(ref.Spearman) == 0 {
		t.Fatal("empty fixture")
	}
	for _, c := range ref.Spearman {
		var x, y []float64
		var want float64
		if json.Unmarshal(c.X, &x) != nil || json.Unmarshal(c.Y, &y) != nil || json.Unmarshal(c.Want, &want) != nil {
			t.Fatal("bad fixture")
		}
		got, err := Spearman(x, y)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got-want) > 1e-14 { // different summation orders (rounding only)
			t.Errorf("%s: got %.17g want %.17g (scipy)", c.Name, got, want)
		}
	}
}

// TestAgreementSklearn: Jaccard of map kNN sets and Spearman of all pair
// distances against make_reference.py (scikit-learn 1.2.1 NearestNeighbors,
// scipy 1.10.1 spearmanr of pdist).
func TestAgreementSklearn(t *testing.T) {
	ref, dd := loadReference(t)
	for pair, byK := range ref.Jaccard {
		names := strings.Split(pair, "|")
		for ks, want := range byK {
			k, _ := strconv.Atoi(ks)
			got, err := NeighborJaccard(ref.Layouts[names[0]], ref.Layouts[names[1]], k)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(got-want) > 1e-14 { // mean of 1797 exact ratios; summation order differs
				t.Errorf("Jaccard %s k=%d: got %.17g want %.17g", pair, k, got, want)
			}
		}
	}
	for name, want := range ref.SpearmanFirst300 {
		y := ref.Layouts[name][:600]
		got, err := DistanceCorrelation(dd.jit[:300*64], 64, y, 2, 1<<30, 1)
		if err != nil {
			t.Fatal(err)
		}
		if !got.All || got.Pairs != 300*299/2 {
			t.Errorf("%s: got %d pairs (all=%v), want all %d", name, got.Pairs, got.All, 300*299/2)
		}
		if math.Abs(got.Value-want) > 1e-12 { // 44850 ranks; rounding of the sums only
			t.Errorf("%s: distance Spearman got %.17g want %.17g", name, got.Value, want)
		}
	}
}

func gauss(rng *rand.Rand, n int) []float64 {
	y := make([]float64, n)
	for i := range y {
		y[i] = rng.NormFloat64()
	}
	return y
}

func moved(rng *rand.Rand, y []float64, reflect bool, scale float64) []float64 {
	th := 2 * math.Pi * rng.Float64()
	c, s := math.Cos(th), math.Sin(th)
	r := [4]float64{c, s, -s, c}
	if reflect {
		r = [4]float64{c, s, s, -c}
	}
	return align.Transform{Scale: scale, Rotation: r, Translation: [2]float64{5 * rng.NormFloat64(), 5 * rng.NormFloat64()}}.Apply(y)
}

// A rotated, reflected, shifted, scaled copy agrees perfectly: disparity 0,
// Jaccard 1, distance Spearman 1 (similarity transforms keep distance order;
// common practice). Reflection and rotation of a Gaussian cloud leave no
// near-ties that rounding could reorder at these sizes (checked by the test).
func TestAgreementOfCopies(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	base := gauss(rng, 2*2000)
	var ls [][]float64
	ls = append(ls, base)
	for s := 0; s < 4; s++ {
		ls = append(ls, moved(rng, base, s%2 == 0, 0.1+3*rng.Float64()))
	}
	ag, err := SettingAgreementWith(ls, AgreementOptions{K: 15, Distances: true, Pairs: 20000, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	if ag.DistancePairs != 20000 || ag.DistanceSpearman.Count != 10 || math.Abs(ag.DistanceSpearman.Min-1) > 1e-12 {
		t.Errorf("distance Spearman summary %+v over %d pairs, want all ≈ 1 over 20000", ag.DistanceSpearman, ag.DistancePairs)
	}
	if len(ag.Pairs) != 10 {
		t.Fatalf("got %d pairs want 10", len(ag.Pairs))
	}
	for _, p := range ag.Pairs {
		if p.Disparity > 1e-24 || p.Jaccard != 1 {
			t.Errorf("pair %d-%d: disparity %g (want 0), Jaccard %v (want 1)", p.A, p.B, p.Disparity, p.Jaccard)
		}
		dc, err := DistanceCorrelation(ls[p.A], 2, ls[p.B], 2, 20000, 3)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(dc.Value-1) > 1e-12 || dc.All || dc.Pairs != 20000 {
			t.Errorf("pair %d-%d: distance Spearman %+v want 1 over 20000 sampled pairs", p.A, p.B, dc)
		}
	}
	if ag.Jaccard.Median != 1 || ag.Jaccard.IQR != 0 || ag.Disparity.Max > 1e-24 {
		t.Errorf("summaries %+v %+v", ag.Jaccard, ag.Disparity)
	}
	// Spread of exact copies is zero everywhere; none flagged.
	ps, g, err := SpreadOf(ls, 0)
	if err != nil {
		t.Fatal(err)
	}
	if ps.Threshold != DefaultSpreadThreshold || ps.NumFlagged != 0 || g.Iters < 1 {
		t.Errorf("spread %+v", ps.Threshold)
	}
	for i, v := range ps.Spread {
		if v > 1e-12 {
			t.Fatalf("spread[%d] = %g want 0", i, v)
		}
	}
}

// Independent layouts disagree: disparity of two independent Gaussian
// clouds is near 1 (its expectation is 1 − O(1/N); common practice) and
// the Jaccard overlap near the chance level k/(N−1) (common practice:
// two random k-subsets of N−1 points share k²/(N−1) points on average).
func TestAgreementOfIndependent(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	n, k := 3000, 15
	a, b := gauss(rng, 2*n), gauss(rng, 2*n)
	d, err := align.Disparity(a, b)
	if err != nil {
		t.Fatal(err)
	}
	if d < 0.99 {
		t.Errorf("disparity got %g want ≈ 1", d)
	}
	j, err := NeighborJaccard(a, b, k)
	if err != nil {
		t.Fatal(err)
	}
	chance := float64(k) / float64(n-1) / (2 - float64(k)/float64(n-1))
	if j > 3*chance || j < chance/3 {
		t.Errorf("Jaccard got %g want near chance %g", j, chance)
	}
	dc, err := DistanceCorrelation(a, 2, b, 2, 0, 5)
	if err != nil {
		t.Fatal(err)
	}
	// Sampled pairs share points, so the sd is above 1/sqrt(P); 0.02 is
	// generous for P = 100000 (common practice).
	if math.Abs(dc.Value) > 0.02 || dc.Pairs != DefaultPairs {
		t.Errorf("distance Spearman %+v want ≈ 0 over %d pairs", dc, DefaultPairs)
	}
}

// Spread: a point moved in every seed but one is flagged; the others are
// not. By construction (common practice, no source): S = 4 copies, point 0
// displaced by δ in three of them gives spread ≈ (√3/4)·δ/ρ: the consensus
// moves by 3δ/4, so the deviations are 3δ/4 once and δ/4 three times, mean
// square 3δ²/16. "≈" because the fit spreads a little of the move over the
// other points (1% tolerance).
func TestSpreadFlagsMovedPoint(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	n := 1000
	base := gauss(rng, 2*n)
	var ls [][]float64
	for s := 0; s < 4; s++ {
		y := append([]float64(nil), base...)
		if s > 0 {
			y[0] += 1.0
		}
		ls = append(ls, moved(rng, y, s == 2, 1))
	}
	ps, g, err := SpreadOf(ls, 0.1)
	if err != nil {
		t.Fatal(err)
	}
	want := math.Sqrt(3.0/16) / g.RMSRadius
	if math.Abs(ps.Spread[0]-want) > 0.01*want {
		t.Errorf("spread[0] got %g want ≈ %g", ps.Spread[0], want)
	}
	if !ps.Flagged[0] || ps.NumFlagged != 1 {
		t.Errorf("flagged[0]=%v, %d flagged; want only point 0", ps.Flagged[0], ps.NumFlagged)
	}
}

func TestBadInput(t *testing.T) {
	y := []float64{0, 0, 1, 0, 0, 1, 1, 1, 2, 2, 3, 1}
	x := []float64{0, 1, 2, 3, 4, 5}
	wantPackageErrors(t, []errorCase{
		{"k too large for trustworthiness", func() error { _, err := Trustworthiness(x, 1, y, 3); return err }},
		{"k zero", func() error { _, err := Continuity(x, 1, y, 0); return err }},
		{"input length", func() error { _, err := KNNRecall(x[:5], 1, y, 2); return err }},
		{"NaN input", func() error {
			_, err := Trustworthiness([]float64{0, 1, math.NaN(), 3, 4, 5}, 1, y, 2)
			return err
		}},
		{"odd layout", func() error { _, err := Trustworthiness(x, 1, y[:11], 2); return err }},
		{"Inf layout", func() error {
			z := append([]float64(nil), y...)
			z[3] = math.Inf(-1)
			_, err := LabelAccuracy(z, []string{"a", "b", "a", "b", "a", "b"}, 2)
			return err
		}},
		{"label count", func() error { _, err := LabelAccuracy(y, []string{"a"}, 2); return err }},
		{"label k", func() error { _, err := LabelAgreement(y, []string{"a", "b", "a", "b", "a", "b"}, 6); return err }},
		{"jaccard mismatch", func() error { _, err := NeighborJaccard(y, y[:10], 2); return err }},
		{"jaccard k", func() error { _, err := NeighborJaccard(y, y, 6); return err }},
		{"spearman constant", func() error { _, err := Spearman([]float64{1, 1, 1}, []float64{1, 2, 3}); return err }},
		{"distance correlation mismatch", func() error { _, err := DistanceCorrelation(x[:5], 1, y, 2, 10, 1); return err }},
		{"agreement one layout", func() error { _, err := SettingAgreement([][]float64{y}, 2, 0); return err }},
		{"spread degenerate", func() error { _, _, err := SpreadOf([][]float64{y, make([]float64, 12)}, 0); return err }},
		{"neighbour list size", func() error {
			_, err := ContinuityWith(x, 1, y, 2, Options{InputNeighbors: make([]int32, 5), InputK: 2})
			return err
		}},
		{"summary empty", func() error { _, err := Summarize(nil); return err }},
	})
}

// errorCase is a call that must fail.
type errorCase struct {
	name string
	f    func() error
}

// wantPackageErrors runs each case and checks that it fails with an error
// carrying the package prefix (the house style for library errors).
func wantPackageErrors(t *testing.T, cases []errorCase) {
	t.Helper()
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			err := tc.f()
			if err == nil {
				t.Fatal("got nil error")
			}
			if !strings.HasPrefix(err.Error(), "stability: ") {
				t.Errorf("error %q lacks package prefix", err)
			}
		})
	}
}
