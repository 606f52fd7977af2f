package align

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

func gaussLayout(rng *rand.Rand, n int) []float64 {
	y := make([]float64, 2*n)
	for i := range y {
		y[i] = rng.NormFloat64()
	}
	return y
}

// randomSimilarity returns a random rotation (reflected if reflect), scale
// and shift.
func randomSimilarity(rng *rand.Rand, reflect bool, scale float64) Transform {
	th := 2 * math.Pi * rng.Float64()
	c, s := math.Cos(th), math.Sin(th)
	r := [4]float64{c, s, -s, c}
	if reflect {
		r = [4]float64{c, s, s, -c}
	}
	return Transform{Scale: scale, Rotation: r, Translation: [2]float64{10 * rng.NormFloat64(), 10 * rng.NormFloat64()}}
}

// A similarity copy of a layout aligns back exactly: Schönemann (1966) —
// the least-squares fit of an exact similarity image has zero residual.
func TestProcrustesRecoversSimilarity(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range []struct {
		name    string
		n       int
		reflect bool
		scale   float64
	}{
		{"rotate n=3", 3, false, 1},
		{"reflect n=10", 10, true, 1},
		{"rotate+scale n=500", 500, false, 3.7},
		{"reflect+shrink n=500", 500, true, 0.02},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a := gaussLayout(rng, tc.n)
			tr := randomSimilarity(rng, tc.reflect, tc.scale)
			b := tr.Apply(a)
			al, got, err := Procrustes(a, b, true)
			if err != nil {
				t.Fatal(err)
			}
			for i := range a {
				if math.Abs(al[i]-a[i]) > 1e-12 {
					t.Fatalf("aligned[%d] got %.17g want %.17g", i, al[i], a[i])
				}
			}
			if math.Abs(got.Scale*tc.scale-1) > 1e-12 {
				t.Errorf("scale got %g want %g", got.Scale, 1/tc.scale)
			}
			if got.Reflects() != tc.reflect {
				t.Errorf("reflects got %v want %v", got.Reflects(), tc.reflect)
			}
			// The returned transform reproduces the aligned copy.
			for i, v := range got.Apply(b) {
				if math.Abs(v-al[i]) > 1e-12 {
					t.Fatalf("Apply(b)[%d] got %.17g want %.17g", i, v, al[i])
				}
			}
			d, err := Disparity(a, b)
			if err != nil {
				t.Fatal(err)
			}
			if d > 1e-24 { // residual of unit-norm matrices: rounding only (common practice)
				t.Errorf("disparity got %g want 0", d)
			}
		})
	}
}

// Without scaling, a scaled copy keeps its size: aligned = (b − b̄)R + ā.
func TestProcrustesNoScale(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	a := gaussLayout(rng, 50)
	b := randomSimilarity(rng, true, 2).Apply(a)
	al, tr, err := Procrustes(a, b, false)
	if err != nil {
		t.Fatal(err)
	}
	if tr.Scale != 1 {
		t.Errorf("scale got %g want 1", tr.Scale)
	}
	// al = 2(a − ā) + ā exactly in theory, since R undoes the rotation.
	ax, ay := centroid(a)
	for i := 0; i < len(a); i += 2 {
		if math.Abs(al[i]-(2*(a[i]-ax)+ax)) > 1e-12 || math.Abs(al[i+1]-(2*(a[i+1]-ay)+ay)) > 1e-12 {
			t.Fatalf("point %d got (%g, %g)", i/2, al[i], al[i+1])
		}
	}
}

// Disparity is symmetric (scipy.spatial.procrustes notes, SciPy 1.10:
// "The disparity should not depend on the order of the input matrices").
func TestDisparitySymmetric(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, n := range []int{3, 7, 100, 2000} {
		a, b := gaussLayout(rng, n), gaussLayout(rng, n)
		d1, err1 := Disparity(a, b)
		d2, err2 := Disparity(b, a)
		if err1 != nil || err2 != nil {
			t.Fatal(err1, err2)
		}
		if math.Abs(d1-d2) > 1e-13 || d1 < 0 || d1 > 1 {
			t.Errorf("n=%d: Disparity(a,b)=%.17g Disparity(b,a)=%.17g", n, d1, d2)
		}
	}
}

func TestDegenerate(t *testing.T) {
	good := []float64{0, 0, 1, 0, 0, 1}
	same := []float64{2, 2, 2, 2, 2, 2}
	for _, tc := range []struct {
		name       string
		a, b       []float64
		degenerate bool
	}{
		{"all points equal", good, same, true},
		{"all points equal (a)", same, good, true},
		{"two points", []float64{0, 0, 1, 1}, []float64{0, 0, 1, 2}, true},
		{"NaN", good, []float64{0, 0, math.NaN(), 0, 0, 1}, false},
		{"Inf", []float64{0, 0, 1, math.Inf(1), 0, 1}, good, false},
		{"length mismatch", good, []float64{0, 0, 1, 0, 0, 1, 1, 1}, false},
		{"odd length", good, []float64{0, 0, 1, 0, 0}, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, _, err := Procrustes(tc.a, tc.b, true)
			if err == nil {
				t.Fatal("Procrustes: want error")
			}
			if tc.degenerate != errors.Is(err, ErrDegenerate) {
				t.Errorf("Procrustes error %v: ErrDegenerate %v, want %v", err, errors.Is(err, ErrDegenerate), tc.degenerate)
			}
			if _, err := Disparity(tc.a, tc.b); err == nil {
				t.Error("Disparity: want error")
			}
			if _, err := Generalized([][]float64{tc.a, tc.b}, 0, 0); err == nil {
				t.Error("Generalized: want error")
			}
		})
	}
}

// GPA of S rigidly moved copies of one layout recovers it: every aligned
// copy coincides with the consensus, residuals 0 (Gower 1975: the GPA
// residual sum is zero iff the configurations are similarity images).
func TestGeneralizedRecoversCopies(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	base := gaussLayout(rng, 300)
	for _, rigid := range []bool{false, true} {
		var ls [][]float64
		for s := 0; s < 6; s++ {
			ls = append(ls, randomSimilarity(rng, s%2 == 1, 1).Apply(base))
		}
		res, err := GeneralizedWith(ls, GPAOptions{Rigid: rigid})
		if err != nil {
			t.Fatal(err)
		}
		if !res.Converged {
			t.Errorf("rigid=%v: not converged after %d rounds", rigid, res.Iters)
		}
		for k, r := range res.Residuals {
			if r > 1e-12 {
				t.Errorf("rigid=%v: residual[%d] got %g want 0", rigid, k, r)
			}
		}
		// The consensus is the base layout up to a rigid motion: its
		// disparity to base is 0 and its RMS radius is base's.
		d, err := Disparity(base, res.Consensus)
		if err != nil {
			t.Fatal(err)
		}
		if d > 1e-24 {
			t.Errorf("rigid=%v: disparity(base, consensus) got %g want 0", rigid, d)
		}
		bx, by := centroid(base)
		if rb := math.Sqrt(sumSquares(base, bx, by) / 300); math.Abs(res.RMSRadius-rb) > 1e-12*rb {
			t.Errorf("rigid=%v: RMS radius got %.17g want %.17g", rigid, res.RMSRadius, rb)
		}
		for k, tr := range res.Transforms {
			for i, v := range tr.Apply(ls[k]) {
				if math.Abs(v-res.Aligned[k][i]) > 1e-12 {
					t.Fatalf("rigid=%v: Transforms[%d].Apply != Aligned[%d] at %d", rigid, k, k, i)
				}
			}
		}
	}
}

// GPA with scaling makes noisy copies of different sizes agree better than
// without, and its residuals shrink as noise shrinks (common practice).
func TestGeneralizedNoisy(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	base := gaussLayout(rng, 400)
	var prev float64 = math.Inf(1)
	for _, noise := range []float64{0.3, 0.1, 0.01} {
		var ls [][]float64
		for s := 0; s < 5; s++ {
			y := randomSimilarity(rng, s%2 == 0, 0.5+rng.Float64()).Apply(base)
			for i := range y {
				y[i] += noise * rng.NormFloat64()
			}
			ls = append(ls, y)
		}
		res, err := Generalized(ls, 0, 0)
		if err != nil {
			t.Fatal(err)
		}
		if !res.Converged {
			t.Errorf("noise %g: not converged in %d rounds", noise, res.Iters)
		}
		var mean float64
		for _, r := range res.Residuals {
			mean += r / 5
		}
		if !(mean < prev) || mean <= 0 {
			t.Errorf("noise %g: mean residual %g, previous %g: want positive and decreasing", noise, mean, prev)
		}
		prev = mean
	}
}

func TestMatchByID(t *testing.T) {
	ai, bi, onlyA, onlyB := MatchByID([]string{"p", "q", "r", "q", "s"}, []string{"s", "x", "p", "q"})
	wantA, wantB := []int{0, 1, 4}, []int{2, 3, 0}
	if len(ai) != 3 || len(bi) != 3 {
		t.Fatalf("got ai=%v bi=%v want %v %v", ai, bi, wantA, wantB)
	}
	for m := range wantA {
		if ai[m] != wantA[m] || bi[m] != wantB[m] {
			t.Errorf("got ai=%v bi=%v want %v %v", ai, bi, wantA, wantB)
		}
	}
	if len(onlyA) != 2 || onlyA[0] != "r" || onlyA[1] != "q" {
		t.Errorf("onlyA got %v want [r q]", onlyA)
	}
	if len(onlyB) != 1 || onlyB[0] != "x" {
		t.Errorf("onlyB got %v want [x]", onlyB)
	}
	y := []float64{0, 1, 2, 3, 4, 5}
	if s := Select(y, []int{2, 0}); s[0] != 4 || s[1] != 5 || s[2] != 0 || s[3] != 1 {
		t.Errorf("Select got %v want [4 5 0 1]", s)
	}
}
