package align_test

import (
	"fmt"

	"plumb/align"
)

// The example of scipy.spatial.procrustes' documentation (SciPy 1.10): b is
// a mirrored and shifted copy of a.
func ExampleDisparity() {
	a := []float64{1, 3, 1, 2, 1, 1, 2, 1}
	b := []float64{4, -2, 4, -3, 4, -4, 3, -4}
	d, err := align.Disparity(a, b)
	if err != nil {
		panic(err)
	}
	fmt.Printf("disparity %.6f\n", d)
	// Output: disparity 0.000000
}

func ExampleProcrustes() {
	a := []float64{1, 3, 1, 2, 1, 1, 2, 1}
	b := []float64{4, -2, 4, -3, 4, -4, 3, -4}
	aligned, t, err := align.Procrustes(a, b, true)
	if err != nil {
		panic(err)
	}
	fmt.Printf("scale %.3f reflects %v\n", t.Scale, t.Reflects())
	fmt.Printf("R = [%.3f %.3f; %.3f %.3f] translation (%.3f, %.3f)\n",
		t.Rotation[0], t.Rotation[1], t.Rotation[2], t.Rotation[3], t.Translation[0], t.Translation[1])
	for i := 0; i < len(aligned); i += 2 {
		fmt.Printf("(%.3f, %.3f) ", aligned[i]+0, aligned[i+1]+0)
	}
	fmt.Println()
	// Output:
	// scale 1.000 reflects true
	// R = [-1.000 0.000; 0.000 1.000] translation (5.000, 5.000)
	// (1.000, 3.000) (1.000, 2.000) (1.000, 1.000) (2.000, 1.000)
}

func ExampleGeneralized() {
	square := []float64{0, 0, 1, 0, 1, 1, 0, 1}
	// The same square rotated by 90° and shifted, and mirrored at twice the size.
	turned := []float64{5, 5, 5, 6, 4, 6, 4, 5}
	mirrored := []float64{0, 0, -2, 0, -2, 2, 0, 2}
	g, err := align.Generalized([][]float64{square, turned, mirrored}, 0, 0)
	if err != nil {
		panic(err)
	}
	fmt.Printf("converged %v, RMS radius %.4f\n", g.Converged, g.RMSRadius)
	for k, r := range g.Residuals {
		fmt.Printf("layout %d: residual %.6f scale %.3f\n", k, r, g.Transforms[k].Scale)
	}
	// Output:
	// converged true, RMS radius 0.9428
	// layout 0: residual 0.000000 scale 1.333
	// layout 1: residual 0.000000 scale 1.333
	// layout 2: residual 0.000000 scale 0.667
}

func ExampleMatchByID() {
	ai, bi, onlyA, onlyB := align.MatchByID([]string{"p1", "p2", "p3"}, []string{"p3", "p1", "p9"})
	fmt.Println(ai, bi, onlyA, onlyB)
	// Output: [0 2] [1 0] [p2] [p9]
}

func ExampleTransform_Apply() {
	t := align.Transform{Scale: 2, Rotation: [4]float64{0, 1, -1, 0}, Translation: [2]float64{1, 0}}
	fmt.Println(t.Apply([]float64{1, 0, 0, 1}))
	// Output: [1 2 -1 0]
}
