package gate

import "fmt"

// Six baseline runs and six current runs with other seeds of a synthetic
// setting (three blobs, each run rotated at random); then the same with
// one blob moved in every current run: the arrangement changes
// (disparity), the blobs' own neighbourhoods do not (Jaccard). The numbers
// are this package's own output on seeded synthetic runs, shown for
// illustration.
func ExampleCompare() {
	base := synth("base", seeds(1, 6), 0)
	for _, move := range []float64{0, 15} {
		res, err := Compare(base, synth("tonight", seeds(7, 12), move), Options{})
		if err != nil {
			fmt.Println(err)
			return
		}
		s := res.Settings[0]
		fmt.Printf("%s (exit %d): disparity shift %+.3f, p = %.4f (level %.4f); Jaccard shift %+.3f\n",
			res.Outcome, res.ExitCode(), s.Disparity.Shift, s.Disparity.P, s.Disparity.Level, s.Jaccard.Shift)
	}
	// Output:
	// pass (exit 0): disparity shift -0.001, p = 0.8247 (level 0.0050); Jaccard shift +0.000
	// regression (exit 1): disparity shift +0.108, p = 0.0022 (level 0.0050); Jaccard shift +0.001
}
