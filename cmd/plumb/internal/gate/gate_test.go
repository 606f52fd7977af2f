package gate

import (
	"encoding/json"
	"encoding/xml"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"plumb/cmd/plumb/internal/studyview"
	"plumb/stability"
)

// study builds a seeded synthetic study (two settings, 90 points in three
// blobs) for the gate's property tests.
func study(fp string) *studyview.View {
	r := rand.New(rand.NewPCG(5, 6))
	n := 90
	st := &studyview.View{Dir: "s", Input: studyview.Input{Fingerprint: fp, N: n, D: 4}, K: 10}
	for i := 0; i < n; i++ {
		st.IDs = append(st.IDs, fmt.Sprintf("p%02d", i))
	}
	for si, perp := range []string{"10", "30"} {
		s := studyview.Setting{ID: "set" + perp, RunsDone: 3, Runs: 3,
			Params: []studyview.Field{{Name: "perplexity", Value: perp}, {Name: "iters", Value: "1000"}}}
		s.Consensus = make([]float64, 2*n)
		for i := 0; i < n; i++ {
			g := float64(i % 3)
			s.Consensus[2*i] = 10*g + r.NormFloat64()
			s.Consensus[2*i+1] = 5*g*float64(si+1) + r.NormFloat64()
		}
		s.Trustworthiness = stability.MedianIQR{Median: 0.95, IQR: 0.01}
		s.Disparity = stability.MedianIQR{Median: 0.01, IQR: 0.005}
		s.Jaccard = stability.MedianIQR{Median: 0.8, IQR: 0.02}
		s.KL = stability.MedianIQR{Median: 1.0, IQR: 0.02}
		st.Settings = append(st.Settings, s)
	}
	return st
}

func clone(s *studyview.View) *studyview.View {
	c := *s
	c.Settings = nil
	for _, st := range s.Settings {
		st.Consensus = append([]float64(nil), st.Consensus...)
		st.Params = append([]studyview.Field(nil), st.Params...)
		c.Settings = append(c.Settings, st)
	}
	c.IDs = append([]string(nil), s.IDs...)
	return &c
}

func TestSelfPasses(t *testing.T) {
	base := study("fp1")
	res, err := Compare(base, clone(base), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Outcome != Pass {
		t.Fatalf("got %s (%s) want pass", res.Outcome, res.Reason)
	}
	for _, s := range res.Settings {
		// Identical layouts: disparity 0 and Jaccard 1 (property of the
		// definitions, up to rounding).
		if s.Disparity > 1e-12 || math.Abs(s.Jaccard-1) > 1e-12 {
			t.Errorf("%s: got disparity %g jaccard %g want 0 and 1", s.Label, s.Disparity, s.Jaccard)
		}
	}
}

// A rotated, reflected, scaled and shifted copy with the points in another
// order is the same map: it must pass with zero disparity.
func TestSimilarityCopyPasses(t *testing.T) {
	base := study("fp1")
	cur := clone(base)
	n := len(cur.IDs)
	perm := rand.New(rand.NewPCG(1, 2)).Perm(n)
	ids := make([]string, n)
	for i, p := range perm {
		ids[i] = base.IDs[p]
	}
	cur.IDs = ids
	th := 1.1
	for si := range cur.Settings {
		src := base.Settings[si].Consensus
		dst := make([]float64, 2*n)
		for i, p := range perm {
			x, y := src[2*p], -src[2*p+1] // reflect
			dst[2*i] = 3*(math.Cos(th)*x-math.Sin(th)*y) + 7
			dst[2*i+1] = 3*(math.Sin(th)*x+math.Cos(th)*y) - 2
		}
		cur.Settings[si].Consensus = dst
	}
	res, err := Compare(base, cur, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Outcome != Pass {
		t.Fatalf("got %s (%s) want pass:\n%s", res.Outcome, res.Reason, res.Text())
	}
	for _, s := range res.Settings {
		if s.Disparity > 1e-10 {
			t.Errorf("%s: disparity %g want 0", s.Label, s.Disparity)
		}
	}
}

func TestMovedClusterRegresses(t *testing.T) {
	base := study("fp1")
	cur := clone(base)
	c := cur.Settings[1].Consensus
	for i := 0; i < 18; i += 3 { // six points of blob 0, setting "30"
		c[2*i] += 40
		c[2*i+1] -= 30
	}
	res, err := Compare(base, cur, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Outcome != Regression {
		t.Fatalf("got %s want regression", res.Outcome)
	}
	if !res.Settings[0].Pass() || res.Settings[1].Pass() {
		t.Errorf("want only perplexity=30 to fail: %v / %v", res.Settings[0].Failures, res.Settings[1].Failures)
	}
	txt := res.Text()
	// Labels show only the parameters that vary (iters is 1000 everywhere).
	if !strings.Contains(txt, "FAIL perplexity=30:") {
		t.Errorf("text does not name the failing setting:\n%s", txt)
	}
	// The points that moved most are among the six we moved.
	for _, m := range res.Settings[1].Moved {
		var k int
		fmt.Sscanf(m.ID, "p%d", &k)
		if k%3 != 0 || k >= 18 {
			t.Errorf("moved-most lists %s, which did not move", m.ID)
		}
	}
}

func TestScoreChangesRegress(t *testing.T) {
	cases := []struct {
		name string
		edit func(*studyview.Setting)
		want string
	}{
		{"trust drop", func(s *studyview.Setting) { s.Trustworthiness.Median -= 0.02 }, "trustworthiness fell"},
		{"stability loss", func(s *studyview.Setting) { s.Disparity.Median += 0.06 }, "seed-to-seed disparity rose"},
		{"jaccard loss", func(s *studyview.Setting) { s.Jaccard.Median -= 0.06 }, "seed-to-seed Jaccard fell"},
		{"kl rise", func(s *studyview.Setting) { s.KL.Median *= 1.06 }, "final KL rose"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			base := study("fp1")
			cur := clone(base)
			tc.edit(&cur.Settings[0])
			res, err := Compare(base, cur, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if res.Outcome != Regression || !strings.Contains(strings.Join(res.Settings[0].Failures, ";"), tc.want) {
				t.Errorf("got %s %v want regression with %q", res.Outcome, res.Settings[0].Failures, tc.want)
			}
		})
	}
	// Just inside each threshold passes.
	base := study("fp1")
	cur := clone(base)
	s := &cur.Settings[0]
	s.Trustworthiness.Median -= 0.009
	s.Disparity.Median += 0.049
	s.KL.Median *= 1.049
	if res, _ := Compare(base, cur, Options{}); res.Outcome != Pass {
		t.Errorf("inside thresholds: got %s %v", res.Outcome, res.Settings[0].Failures)
	}
}

func TestIncomparable(t *testing.T) {
	base := study("fp1")
	other := clone(base)
	other.Input.Fingerprint = "fp2"
	res, _ := Compare(base, other, Options{})
	if res.Outcome != Incomparable || !strings.Contains(res.Reason, "fingerprint") {
		t.Errorf("other data: got %s %q", res.Outcome, res.Reason)
	}
	if res, _ := Compare(base, other, Options{AllowOtherData: true}); res.Outcome != Pass {
		t.Errorf("other data allowed: got %s %q", res.Outcome, res.Reason)
	}

	short := clone(base)
	for i := range short.Settings {
		short.Settings[i].Params[1].Value = "50"
	}
	res, _ = Compare(base, short, Options{})
	if res.Outcome != Incomparable || !strings.Contains(res.Reason, "no setting in common") {
		t.Errorf("no common settings: got %s %q", res.Outcome, res.Reason)
	}
	if res, _ := Compare(base, short, Options{Ignore: []string{"iters"}}); res.Outcome != Pass {
		t.Errorf("iters ignored: got %s %q", res.Outcome, res.Reason)
	}

	renamed := clone(base)
	for i := range renamed.IDs {
		renamed.IDs[i] = "q" + renamed.IDs[i]
	}
	res, _ = Compare(base, renamed, Options{})
	if res.Outcome != Incomparable || !strings.Contains(res.Reason, "no point id in common") {
		t.Errorf("no common ids: got %s %q", res.Outcome, res.Reason)
	}
	js, err := res.JSON()
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(js), `"outcome": "incomparable"`) {
		t.Errorf("json: %s", js)
	}
}

func TestMissingSettingRegresses(t *testing.T) {
	base := study("fp1")
	cur := clone(base)
	cur.Settings = cur.Settings[:1]
	res, _ := Compare(base, cur, Options{})
	if res.Outcome != Regression || len(res.OnlyBaseline) != 1 {
		t.Errorf("got %s only-baseline %v want regression with one missing", res.Outcome, res.OnlyBaseline)
	}
}

func TestJSONAndJUnit(t *testing.T) {
	base := study("fp1")
	cur := clone(base)
	cur.Settings[1].Consensus = nil // no finished runs: NaN disparity
	res, err := Compare(base, cur, Options{})
	if err != nil {
		t.Fatal(err)
	}
	js, err := res.JSON()
	if err != nil {
		t.Fatal(err)
	}
	var back map[string]any
	if err := json.Unmarshal(js, &back); err != nil {
		t.Fatalf("json does not parse: %v\n%s", err, js)
	}
	sets := back["settings"].([]any)
	if sets[1].(map[string]any)["disparity_to_baseline"] != nil {
		t.Errorf("NaN disparity should be null: %v", sets[1])
	}
	ju, err := res.JUnit()
	if err != nil {
		t.Fatal(err)
	}
	var suite struct {
		Tests    int `xml:"tests,attr"`
		Failures int `xml:"failures,attr"`
		Cases    []struct {
			Name    string    `xml:"name,attr"`
			Failure *struct{} `xml:"failure"`
		} `xml:"testcase"`
	}
	if err := xml.Unmarshal(ju, &suite); err != nil {
		t.Fatalf("junit does not parse: %v", err)
	}
	if suite.Tests != 2 || suite.Failures != 1 || suite.Cases[1].Failure == nil || suite.Cases[0].Failure != nil {
		t.Errorf("junit: got %+v want 2 tests, the second failed", suite)
	}
}
