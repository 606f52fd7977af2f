package studyview

import (
	"math"
	"testing"
)

// A rotated, reflected and shifted copy aligns back onto the original
// exactly (the Procrustes property, Schönemann 1966), points a run did not
// place stay NaN, and the fit uses only the points both layouts have.
func TestAlignOntoRecoversCopy(t *testing.T) {
	n := 50
	base := make([]float64, 2*n)
	for i := 0; i < n; i++ {
		base[2*i] = math.Cos(float64(i)) * float64(i%7+1)
		base[2*i+1] = math.Sin(float64(3*i)) * float64(i%5+1)
	}
	th := 0.9
	y := make([]float64, 2*n)
	for i := 0; i < n; i++ {
		x, v := base[2*i], -base[2*i+1] // reflected
		y[2*i] = math.Cos(th)*x - math.Sin(th)*v + 4
		y[2*i+1] = math.Sin(th)*x + math.Cos(th)*v - 2
	}
	y[6], y[7] = math.NaN(), math.NaN() // point 3 not placed
	got, err := AlignOnto(base, y)
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < n; i++ {
		if i == 3 {
			if !math.IsNaN(got[6]) || !math.IsNaN(got[7]) {
				t.Errorf("point 3: got (%g, %g) want NaN", got[6], got[7])
			}
			continue
		}
		if math.Abs(got[2*i]-base[2*i]) > 1e-9 || math.Abs(got[2*i+1]-base[2*i+1]) > 1e-9 {
			t.Fatalf("point %d: got (%g, %g) want (%g, %g)", i, got[2*i], got[2*i+1], base[2*i], base[2*i+1])
		}
	}
}
