package align

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"
)

type scipyCase struct {
	Name              string    `json:"name"`
	A                 []float64 `json:"a"`
	B                 []float64 `json:"b"`
	Disparity         float64   `json:"disparity"`
	DisparityReversed float64   `json:"disparity_reversed"`
}

func loadScipy(t *testing.T) []scipyCase {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join("..", "testdata", "scipy_procrustes", "reference.json"))
	if err != nil {
		t.Fatal(err)
	}
	var f struct {
		Versions map[string]string `json:"versions"`
		Cases    []json.RawMessage `json:"cases"`
	}
	if err := json.Unmarshal(raw, &f); err != nil {
		t.Fatal(err)
	}
	var cs []scipyCase
	for _, r := range f.Cases {
		var c scipyCase
		if err := json.Unmarshal(r, &c); err != nil {
			t.Fatal(err)
		}
		cs = append(cs, c)
	}
	return cs
}

// TestDisparityScipy compares with scipy.spatial.procrustes of SciPy 1.10.1
// (testdata/scipy_procrustes/make_reference.py, versions in reference.json).
func TestDisparityScipy(t *testing.T) {
	// Tolerance 1e-13 absolute: both sides sum N squared residuals of
	// unit-norm matrices in float64; the summation orders differ.
	const tol = 1e-13
	for _, c := range loadScipy(t) {
		t.Run(c.Name, func(t *testing.T) {
			got, err := Disparity(c.A, c.B)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(got-c.Disparity) > tol {
				t.Errorf("Disparity(a, b) got %.17g want %.17g (scipy)", got, c.Disparity)
			}
			rev, err := Disparity(c.B, c.A)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(rev-c.DisparityReversed) > tol {
				t.Errorf("Disparity(b, a) got %.17g want %.17g (scipy)", rev, c.DisparityReversed)
			}
			t.Logf("diff %.2g, reversed %.2g", got-c.Disparity, rev-c.DisparityReversed)
		})
	}
}

// TestDocstringExample: scipy.spatial.procrustes docstring (SciPy 1.10),
// a and b are the same shape, so the disparity is 0 and b maps exactly onto a.
func TestDocstringExample(t *testing.T) {
	a := []float64{1, 3, 1, 2, 1, 1, 2, 1}
	b := []float64{4, -2, 4, -3, 4, -4, 3, -4}
	d, err := Disparity(a, b)
	if err != nil {
		t.Fatal(err)
	}
	if d > 1e-15 { // documented round(disparity) == 0.0; scipy itself gives 1.6e-32
		t.Errorf("disparity got %g want 0", d)
	}
	al, tr, err := Procrustes(a, b, true)
	if err != nil {
		t.Fatal(err)
	}
	for i := range a {
		if math.Abs(al[i]-a[i]) > 1e-14 {
			t.Errorf("aligned[%d] got %.17g want %g", i, al[i], a[i])
		}
	}
	// By hand: b = a reflected in x and shifted, x_b = 5 − x_a, y_b = y_a − 5,
	// so the fit is R = diag(−1, 1), scale 1, translation (5, 5).
	want := Transform{Scale: 1, Rotation: [4]float64{-1, 0, 0, 1}, Translation: [2]float64{5, 5}}
	if !tr.Reflects() || math.Abs(tr.Scale-1) > 1e-15 {
		t.Errorf("transform got %+v want %+v", tr, want)
	}
	for i := range want.Rotation {
		if math.Abs(tr.Rotation[i]-want.Rotation[i]) > 1e-15 {
			t.Errorf("rotation got %v want %v", tr.Rotation, want.Rotation)
		}
	}
	for i := range want.Translation {
		if math.Abs(tr.Translation[i]-want.Translation[i]) > 1e-14 {
			t.Errorf("translation got %v want %v", tr.Translation, want.Translation)
		}
	}
	for i, v := range tr.Apply(b) {
		if math.Abs(v-a[i]) > 1e-14 {
			t.Errorf("Apply(b)[%d] got %.17g want %g", i, v, a[i])
		}
	}
}
