package gate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// synth builds a study of one setting whose runs are noisy copies of three
// blobs (90 points), one run per seed, each rotated at random as t-SNE runs
// are; move shifts blob 0 by that much in every run (a changed map).
func synth(dir string, seeds []uint64, move float64, params ...Param) *Study {
	n := 90
	st := &Study{Dir: dir, Fingerprint: "fp", K: 10, Plan: map[string]string{"neighbors": `"auto"`, "seeds": "[1]"}}
	for i := 0; i < n; i++ {
		st.IDs = append(st.IDs, fmt.Sprintf("p%02d", i))
	}
	if len(params) == 0 {
		params = []Param{{"perplexity", "30"}, {"init", "random"}}
	}
	set := Setting{ID: "s", Params: params}
	for _, seed := range seeds {
		r := rand.New(rand.NewPCG(seed, 99))
		th := r.Float64() * 2 * math.Pi
		y := make([]float64, 2*n)
		for i := 0; i < n; i++ {
			g := float64(i % 3)
			x0, y0 := 10*g+r.NormFloat64(), 4*g*g+r.NormFloat64()
			if i%3 == 0 {
				x0 += move
			}
			y[2*i], y[2*i+1] = math.Cos(th)*x0-math.Sin(th)*y0, math.Sin(th)*x0+math.Cos(th)*y0
		}
		set.Runs = append(set.Runs, Run{Seed: seed, KL: 1 + 0.01*r.Float64(), Trust: 0.95, Layout: func() ([]float64, error) { return y, nil }})
	}
	st.Settings = []Setting{set}
	return st
}

func seeds(a, b uint64) []uint64 {
	var s []uint64
	for i := a; i <= b; i++ {
		s = append(s, i)
	}
	return s
}

func TestCompareOutcomes(t *testing.T) {
	cases := []struct {
		name       string
		base, cur  *Study
		opt        Options
		want       Outcome
		wantReason string
	}{
		{"identical rerun", synth("b", seeds(1, 6), 0), synth("c", seeds(1, 6), 0), Options{}, Pass, "within run-to-run"},
		{"one seed rerun", synth("b", seeds(1, 1), 0), synth("c", seeds(1, 1), 0), Options{}, Pass, "within run-to-run"},
		{"other seeds", synth("b", seeds(1, 6), 0), synth("c", seeds(7, 12), 0), Options{}, Pass, "within run-to-run"},
		{"moved blob", synth("b", seeds(1, 6), 0), synth("c", seeds(7, 12), 15), Options{}, Regression, "1 of 1 setting(s) changed"},
		{"too few runs", synth("b", seeds(1, 3), 0), synth("c", seeds(4, 6), 15), Options{}, Untested, "cannot be tested"},
		{"too few runs allowed", synth("b", seeds(1, 3), 0), synth("c", seeds(4, 6), 0), Options{AllowUntested: true}, Pass, "not tested for map changes, allowed"},
		{"one seed each, other seeds", synth("b", seeds(1, 1), 0), synth("c", seeds(2, 2), 0), Options{AllowUntested: true}, Pass, "not tested"},
		// Same seed, other layout: the code changed.
		{"not reproduced", synth("b", seeds(1, 1), 0), synth("c", seeds(1, 1), 0.5), Options{}, Regression, "changed"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			res, err := Compare(tc.base, tc.cur, tc.opt)
			if err != nil {
				t.Fatal(err)
			}
			if res.Outcome != tc.want || !strings.Contains(res.Reason, tc.wantReason) {
				t.Errorf("got %s (%s) want %s with %q\n%s", res.Outcome, res.Reason, tc.want, tc.wantReason, res.Text())
			}
		})
	}
}

func TestNotReproducedNamesTheSeed(t *testing.T) {
	res, err := Compare(synth("b", seeds(1, 2), 0), synth("c", []uint64{2, 3}, 0), Options{AllowUntested: true})
	if err != nil {
		t.Fatal(err)
	}
	rp := res.Settings[0].Reproduction
	if rp == nil || rp.Pairs != 1 || rp.Matched != 1 {
		t.Errorf("seed 2 in both: reproduction %+v want 1 of 1", rp)
	}
	cur := synth("c", []uint64{2, 3}, 0)
	y, _ := cur.Settings[0].Runs[0].Layout()
	y[0] += 1e-3
	res, _ = Compare(synth("b", seeds(1, 2), 0), cur, Options{AllowUntested: true})
	if res.Outcome != Regression || !strings.Contains(strings.Join(res.Settings[0].Failures, ";"), "not reproduced: 1 of 1 run(s)") ||
		!strings.Contains(strings.Join(res.Settings[0].Failures, ";"), "seed 2") {
		t.Errorf("got %s %v", res.Outcome, res.Settings[0].Failures)
	}
	// With PCA starts every seed starts alike: any current run must equal
	// the baseline's.
	pca := []Param{{"perplexity", "30"}, {"init", "pca"}}
	b := synth("b", seeds(1, 1), 0, pca...)
	c := synth("c", seeds(5, 5), 0, pca...)
	c.Settings[0].Runs[0].Layout = b.Settings[0].Runs[0].Layout
	if res, _ := Compare(b, c, Options{}); res.Outcome != Pass || res.Settings[0].Reproduction.Pairs != 1 {
		t.Errorf("pca, other seed, same layout: got %s %+v", res.Outcome, res.Settings[0].Reproduction)
	}
}

// Every plan field that is not a grid list, the seeds or the trace
// interval must agree — including fields the gate has never heard of, such
// as a future subsample fraction.
func TestPlanFieldsCompared(t *testing.T) {
	b, c := synth("b", seeds(1, 6), 0), synth("c", seeds(1, 6), 0)
	c.Plan["seeds"] = "[7]"
	c.Plan["kl_every"] = "10"
	if res, _ := Compare(b, c, Options{}); res.Outcome != Pass {
		t.Errorf("seeds and kl_every differ: got %s %s", res.Outcome, res.Reason)
	}
	c.Plan["subsample_fraction"] = "0.8"
	b.Plan["subsample_fraction"] = "1"
	res, _ := Compare(b, c, Options{})
	if res.Outcome != Incomparable || !strings.Contains(res.Reason, "subsample_fraction: baseline 1, current 0.8") {
		t.Errorf("got %s %q", res.Outcome, res.Reason)
	}
	if res, _ := Compare(b, c, Options{Ignore: []string{"subsample_fraction"}}); res.Outcome != Pass {
		t.Errorf("ignored: got %s %q", res.Outcome, res.Reason)
	}
	// A setting parameter the gate does not know matches settings too.
	b2 := synth("b", seeds(1, 6), 0, Param{"perplexity", "30"}, Param{"subsample", "1"})
	c2 := synth("c", seeds(1, 6), 0, Param{"perplexity", "30"}, Param{"subsample", "0.8"})
	if res, _ := Compare(b2, c2, Options{}); res.Outcome != Incomparable || !strings.Contains(res.Reason, "no setting in common") {
		t.Errorf("other subsample: got %s %q", res.Outcome, res.Reason)
	}
}

func TestOtherKAndData(t *testing.T) {
	b, c := synth("b", seeds(1, 6), 0), synth("c", seeds(1, 6), 0)
	c.K = 20
	res, _ := Compare(b, c, Options{})
	if res.Outcome != Incomparable || !strings.Contains(res.Reason, "baseline k = 10, current k = 20") {
		t.Errorf("other k: got %s %q", res.Outcome, res.Reason)
	}
	c.K = 10
	c.Fingerprint = "other"
	res, _ = Compare(b, c, Options{})
	if res.Outcome != DataChanged || res.ExitCode() != 3 || strings.Contains(res.Reason, "Options") {
		t.Errorf("other data: got %s %d %q", res.Outcome, res.ExitCode(), res.Reason)
	}
	// Allowed, compared by id: other data means no run must reproduce.
	res, _ = Compare(b, c, Options{AllowOtherData: true})
	if res.Outcome != Pass || res.Settings[0].Reproduction != nil {
		t.Errorf("other data allowed: got %s %+v", res.Outcome, res.Settings[0].Reproduction)
	}
}

// Tarone's count: tests that cannot reach α/K do not count in K.
func TestTaroneCount(t *testing.T) {
	b := synth("b", seeds(1, 6), 0)
	c := synth("c", seeds(7, 12), 0)
	small := synth("b", seeds(21, 23), 0).Settings[0]
	small.ID, small.Params = "t", []Param{{"perplexity", "5"}, {"init", "random"}}
	smallC := synth("c", seeds(24, 26), 0).Settings[0]
	smallC.ID, smallC.Params = "t", small.Params
	b.Settings = append(b.Settings, small)
	c.Settings = append(c.Settings, smallC)
	res, err := Compare(b, c, Options{AllowUntested: true})
	if err != nil {
		t.Fatal(err)
	}
	// 6 and 6 runs: smallest p 2/924 ≈ 0.0022 ≤ 0.01/2; 3 and 3: 0.1.
	if res.Testable != 2 || math.Abs(res.Settings[0].Jaccard.Level-0.005) > 1e-15 || res.Settings[1].Tested {
		t.Errorf("testable %d level %g, small tested %v; want 2, 0.005, false", res.Testable, res.Settings[0].Jaccard.Level, res.Settings[1].Tested)
	}
}
