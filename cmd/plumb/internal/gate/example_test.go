package gate

import "fmt"

func ExampleCompare() {
	base := study("fp1")
	cur := clone(base)
	// Push six points of the perplexity-30 map far from where they were.
	// (The printed disparity is this package's own output on seeded
	// synthetic data, shown for illustration, not a reference value.)
	for i := 0; i < 18; i += 3 {
		cur.Settings[1].Consensus[2*i] += 40
	}
	res, err := Compare(base, cur, Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(res.Outcome)
	for _, s := range res.Settings {
		fmt.Printf("%s pass=%v disparity=%.3f\n", s.Label, s.Pass(), s.Disparity)
	}
	// Output:
	// regression
	// perplexity=10 pass=true disparity=0.000
	// perplexity=30 pass=false disparity=0.502
}
