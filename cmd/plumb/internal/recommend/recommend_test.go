package recommend

import (
	"errors"
	"math"
	"reflect"
	"strings"
	"testing"

	"plumb/stability"
)

var nan = math.NaN()

// random is a setting with random starts (seed varied, 5 runs, one
// arrangement).
func random(id string, perp, auc, disp, jac, kl float64) Setting {
	return Setting{ID: id, Perplexity: perp, Runs: 5, Varied: "seed", RNXAUC: mi(auc, 0), Disparity: mi(disp, 0), Jaccard: mi(jac, 0), Arrangements: 1, KL: mi(kl, 0)}
}

func mi(median, iqr float64) stability.MedianIQR {
	return stability.MedianIQR{Median: median, IQR: iqr}
}

// The score tables are hand-made to reproduce the old rule's failure
// modes (issue #13); the expected picks follow from the rule as stated in
// Rule.Words with the default tolerances (AUC 0.01, disparity 0.01,
// Jaccard 0.02, KL 1%).
func TestRecommendComparesLikeWithLike(t *testing.T) {
	pca := func(id string, perp, auc, kl float64) Setting {
		// PCA starts: every seed gives the same map, disparity 0,
		// Jaccard 1 — unmeasured, not perfect.
		return Setting{ID: id, Perplexity: perp, Runs: 5, Varied: "", RNXAUC: mi(auc, 0), Disparity: mi(0, 0), Jaccard: mi(1, 0), Arrangements: 1, KL: mi(kl, 0)}
	}
	cases := []struct {
		name      string
		in        []Setting
		chosen    string
		runnerUp  string
		decidedBy string
		margin    float64
		measured  bool
	}{
		{
			// (a) The old rule took pca30 (disparity 0 is "most stable").
			// The random setting is more faithful: it wins on faithfulness.
			name: "a: only the pca setting has zero disparity, random more faithful",
			in: []Setting{
				pca("pca30", 30, 0.520, 1.10),
				random("rnd30", 30, 0.545, 0.040, 0.70, 1.12),
			},
			chosen: "rnd30", runnerUp: "pca30", decidedBy: StepFaithfulness, margin: 0.025, measured: true,
		},
		{
			// (a') Equally faithful: the pca setting's stability is not
			// measured, so it cannot win on stability.
			name: "a': equally faithful, pca stability unmeasured",
			in: []Setting{
				pca("pca30", 30, 0.545, 1.10),
				random("rnd30", 30, 0.540, 0.040, 0.70, 1.12),
			},
			chosen: "rnd30", runnerUp: "pca30", decidedBy: StepMeasured, margin: 0, measured: true,
		},
		{
			// (a'') Nothing measured at all: the pick rests on faithfulness
			// and says so.
			name: "a'': no setting measured",
			in: []Setting{
				pca("pca30", 30, 0.545, 1.10),
				pca("pca50", 50, 0.530, 0.95),
			},
			chosen: "pca30", runnerUp: "pca50", decidedBy: StepFaithfulness, margin: 0.015, measured: false,
		},
		{
			// (b) KL falls as perplexity rises (2.1 → 0.6); the old rule's
			// last step drifted to p300. Equally stable settings, AUC
			// within tolerance: KL is not compared across perplexities,
			// the highest AUC wins.
			name: "b: KL falls with perplexity, AUC within tolerance",
			in: []Setting{
				random("p005", 5, 0.541, 0.020, 0.70, 2.10),
				random("p030", 30, 0.548, 0.020, 0.70, 1.40),
				random("p100", 100, 0.546, 0.020, 0.70, 0.95),
				random("p300", 300, 0.540, 0.020, 0.70, 0.60),
			},
			chosen: "p030", runnerUp: "p100", decidedBy: StepAUC, margin: 0.002, measured: true,
		},
		{
			// (b') With the drop in quality at the largest
			// perplexity, p300 falls out on faithfulness.
			name: "b': largest perplexity less faithful",
			in: []Setting{
				random("p030", 30, 0.560, 0.020, 0.70, 1.40),
				random("p300", 300, 0.520, 0.015, 0.75, 0.60),
			},
			chosen: "p030", runnerUp: "p300", decidedBy: StepFaithfulness, margin: 0.040, measured: true,
		},
		{
			// (b'') KL still separates settings of one perplexity.
			name: "b'': KL compared within one perplexity",
			in: []Setting{
				random("lr200", 30, 0.548, 0.020, 0.70, 1.40),
				random("lrauto", 30, 0.546, 0.020, 0.70, 1.30),
			},
			chosen: "lrauto", runnerUp: "lr200", decidedBy: StepKL, margin: 1.40/1.30 - 1, measured: true,
		},
		{
			// (c) One-k trustworthiness ties: T(15) was 0.9906–0.9924
			// across these settings (the numbers), all within the
			// old 0.01 tolerance. The multi-scale AUC separates them.
			name: "c: trustworthiness ties at one k, AUC does not",
			in: []Setting{
				random("t9906", 50, 0.470, 0.020, 0.70, 1.2),
				random("t9924", 10, 0.505, 0.030, 0.65, 1.6),
				random("t9915", 30, 0.530, 0.025, 0.68, 1.4),
			},
			chosen: "t9915", runnerUp: "t9924", decidedBy: StepFaithfulness, margin: 0.025, measured: true,
		},
		{
			name: "distinct arrangements lose to one arrangement under the same perturbation",
			in: func() []Setting {
				a := random("two", 30, 0.550, 0.005, 0.80, 1.4)
				a.Arrangements = 2
				return []Setting{a, random("one", 50, 0.545, 0.030, 0.70, 1.2)}
			}(),
			chosen: "one", runnerUp: "two", decidedBy: StepArrangements, margin: 1, measured: true,
		},
		{
			name: "disparity separates within one perturbation",
			in: []Setting{
				random("stable", 30, 0.545, 0.010, 0.70, 1.4),
				random("shaky", 50, 0.550, 0.050, 0.70, 1.2),
			},
			chosen: "stable", runnerUp: "shaky", decidedBy: StepDisparity, margin: 0.04, measured: true,
		},
		{
			// Disparity under seed+subsample is not compared with
			// disparity under seed alone: both survive, AUC decides.
			name: "different perturbations are not compared on stability",
			in: func() []Setting {
				b := random("sub", 30, 0.545, 0.010, 0.80, 1.4)
				b.Varied = "seed+subsample"
				return []Setting{random("seed", 50, 0.550, 0.060, 0.60, 1.2), b}
			}(),
			chosen: "seed", runnerUp: "sub", decidedBy: StepAUC, margin: 0.005, measured: true,
		},
		{
			name: "exact tie goes to the first id",
			in: []Setting{
				random("z", 30, 0.55, 0.02, 0.70, 1.2),
				random("m", 30, 0.55, 0.02, 0.70, 1.2),
			},
			chosen: "m", runnerUp: "z", decidedBy: StepOrder, measured: true,
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			in := append([]Setting(nil), tc.in...)
			rec, err := Recommend(in, Rule{})
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(in, tc.in) {
				t.Error("Recommend modified its input")
			}
			if rec.Chosen.ID != tc.chosen {
				t.Errorf("chosen: got %s want %s (ranking %v)", rec.Chosen.ID, tc.chosen, rec.Ranking)
			}
			if rec.RunnerUp == nil || rec.RunnerUp.ID != tc.runnerUp {
				t.Fatalf("runner-up: got %+v want %s", rec.RunnerUp, tc.runnerUp)
			}
			if rec.DecidedBy != tc.decidedBy {
				t.Errorf("decided by: got %q want %q (why: %s)", rec.DecidedBy, tc.decidedBy, rec.Why)
			}
			if math.Abs(rec.Margin-tc.margin) > 1e-12 {
				t.Errorf("margin: got %.6g want %.6g", rec.Margin, tc.margin)
			}
			if rec.StabilityMeasured != tc.measured {
				t.Errorf("stability measured: got %v want %v", rec.StabilityMeasured, tc.measured)
			}
			if rec.Why == "" {
				t.Error("no reason given")
			}
		})
	}
}

func TestRecommendExclusions(t *testing.T) {
	in := []Setting{
		random("a", 30, 0.5, 0.02, 0.7, 1),
		{ID: "b", Runs: 0},
		{ID: "c", Runs: 3, RNXAUC: mi(nan, nan)},
	}
	rec, err := Recommend(in, Rule{})
	if err != nil {
		t.Fatal(err)
	}
	if rec.Chosen.ID != "a" || rec.RunnerUp != nil || len(rec.Ranking) != 1 {
		t.Errorf("got chosen %s runner-up %v ranking %v, want a alone", rec.Chosen.ID, rec.RunnerUp, rec.Ranking)
	}
	if len(rec.Excluded) != 2 || rec.Excluded[0].ID != "b" || rec.Excluded[1].ID != "c" {
		t.Errorf("excluded: got %+v want b and c", rec.Excluded)
	}
	if _, err := Recommend(in[1:], Rule{}); !errors.Is(err, ErrNoSetting) {
		t.Errorf("no settings: got %v want ErrNoSetting", err)
	}
}

func TestRecommendIndistinguishable(t *testing.T) {
	in := []Setting{
		{ID: "a", Perplexity: 30, Runs: 5, Varied: "seed", RNXAUC: mi(0.550, 0.004), Disparity: mi(0.030, 0.02), Jaccard: mi(0.7, 0), Arrangements: 1, KL: mi(1, 0)},
		// AUC 0.015 below (beyond 0.01) but 0.535 ± 0.015 reaches 0.550:
		// overlap; disparity within 0.01.
		{ID: "b", Perplexity: 50, Runs: 5, Varied: "seed", RNXAUC: mi(0.535, 0.030), Disparity: mi(0.035, 0.01), Jaccard: mi(0.7, 0), Arrangements: 1, KL: mi(1, 0)},
		// As faithful, but far less stable under the same perturbation.
		{ID: "c", Perplexity: 10, Runs: 5, Varied: "seed", RNXAUC: mi(0.548, 0), Disparity: mi(0.300, 0), Jaccard: mi(0.7, 0), Arrangements: 1, KL: mi(1, 0)},
		// As faithful, unmeasured: its stability cannot be compared.
		{ID: "d", Perplexity: 30, Runs: 5, Varied: "", RNXAUC: mi(0.549, 0), Disparity: mi(0, 0), Jaccard: mi(1, 0), Arrangements: 1, KL: mi(1, 0)},
		// Clearly less faithful.
		{ID: "e", Perplexity: 5, Runs: 5, Varied: "seed", RNXAUC: mi(0.400, 0.001), Disparity: mi(0.030, 0), Jaccard: mi(0.7, 0), Arrangements: 1, KL: mi(1, 0)},
	}
	rec, err := Recommend(in, Rule{})
	if err != nil {
		t.Fatal(err)
	}
	if rec.Chosen.ID != "a" || !reflect.DeepEqual(rec.Indistinguishable, []string{"b", "d"}) {
		t.Errorf("got chosen %s indistinguishable %v, want a and [b d]", rec.Chosen.ID, rec.Indistinguishable)
	}
}

func TestRuleWords(t *testing.T) {
	w := Rule{AUCTolerance: 0.02, DisparityTolerance: 0.005}.Words()
	for _, s := range []string{"within 0.02 of the best", "within 0.005 of the lowest", "Lee & Verleysen 2009",
		"same perplexity", "never wins", "same perturbation", "distinct arrangements"} {
		if !strings.Contains(w, s) {
			t.Errorf("rule words lack %q", s)
		}
	}
}
