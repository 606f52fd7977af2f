package report

import (
	"errors"
	"fmt"
	"math"
	"reflect"
	"strings"
	"testing"
)

// The score tables below are hand-made; the expected picks follow from the
// rule as stated in Rule.Words (default tolerances 0.01 / 0.01 / 0.02).
func TestRecommendFollowsRule(t *testing.T) {
	c := func(id string, trust, disp, jac, kl float64) Candidate {
		return Candidate{ID: id, Runs: 5, Trustworthiness: trust, Disparity: disp, Jaccard: jac, KL: kl}
	}
	cases := []struct {
		name      string
		cands     []Candidate
		chosen    string
		runnerUp  string
		decidedBy string
		ranking   []string
	}{
		{
			name: "most faithful wins when it is also the most stable",
			cands: []Candidate{
				c("a", 0.95, 0.02, 0.80, 1.0),
				c("b", 0.90, 0.01, 0.90, 0.9),
			},
			chosen: "a", runnerUp: "b", decidedBy: "trustworthiness", ranking: []string{"a", "b"},
		},
		{
			name: "within trust tolerance the more stable wins",
			cands: []Candidate{
				c("a", 0.950, 0.080, 0.60, 0.8),
				c("b", 0.945, 0.020, 0.70, 1.2),
				c("c", 0.900, 0.001, 0.99, 0.5), // most stable, but unfaithful
			},
			chosen: "b", runnerUp: "a", decidedBy: "disparity", ranking: []string{"b", "a", "c"},
		},
		{
			name: "disparity tie broken by Jaccard",
			cands: []Candidate{
				c("a", 0.95, 0.020, 0.60, 0.8),
				c("b", 0.95, 0.025, 0.70, 1.2),
			},
			chosen: "b", runnerUp: "a", decidedBy: "jaccard", ranking: []string{"b", "a"},
		},
		{
			name: "disparity and Jaccard tie broken by KL",
			cands: []Candidate{
				c("a", 0.95, 0.020, 0.70, 1.3),
				c("b", 0.95, 0.025, 0.71, 1.2),
			},
			chosen: "b", runnerUp: "a", decidedBy: "kl", ranking: []string{"b", "a"},
		},
		{
			name: "exact tie goes to the first id",
			cands: []Candidate{
				c("z", 0.95, 0.02, 0.70, 1.2),
				c("m", 0.95, 0.02, 0.70, 1.2),
			},
			chosen: "m", runnerUp: "z", decidedBy: "order", ranking: []string{"m", "z"},
		},
		{
			name: "missing KL ranks last on the KL step",
			cands: []Candidate{
				c("a", 0.95, 0.02, 0.70, math.NaN()),
				c("b", 0.95, 0.02, 0.70, 2.0),
			},
			chosen: "b", runnerUp: "a", decidedBy: "kl", ranking: []string{"b", "a"},
		},
		{
			name: "single candidate has no runner-up",
			cands: []Candidate{
				c("a", 0.95, 0.02, 0.70, 1.0),
				{ID: "b", Runs: 1, Trustworthiness: 0.99, Disparity: math.NaN(), Jaccard: math.NaN(), KL: 0.1},
			},
			chosen: "a", ranking: []string{"a"},
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			in := append([]Candidate(nil), tc.cands...)
			rec, err := Recommend(in, Rule{})
			if err != nil {
				t.Fatal(err)
			}
			if fmt.Sprint(in) != fmt.Sprint(tc.cands) { // Sprint: NaN fields compare equal as text
				t.Error("Recommend modified its input")
			}
			if rec.Chosen.ID != tc.chosen {
				t.Errorf("chosen: got %s want %s", rec.Chosen.ID, tc.chosen)
			}
			gotRU := ""
			if rec.RunnerUp != nil {
				gotRU = rec.RunnerUp.ID
			}
			if gotRU != tc.runnerUp {
				t.Errorf("runner-up: got %q want %q", gotRU, tc.runnerUp)
			}
			if rec.DecidedBy != tc.decidedBy {
				t.Errorf("decided by: got %q want %q (why: %s)", rec.DecidedBy, tc.decidedBy, rec.Why)
			}
			if !reflect.DeepEqual(rec.Ranking, tc.ranking) {
				t.Errorf("ranking: got %v want %v", rec.Ranking, tc.ranking)
			}
		})
	}
}

func TestRecommendExclusionsAndIndistinguishable(t *testing.T) {
	cands := []Candidate{
		{ID: "a", Runs: 5, Trustworthiness: 0.950, TrustworthinessIQR: 0.004, Disparity: 0.030, DispIQR: 0.02, Jaccard: 0.7, KL: 1},
		// Medians 0.015 apart on trust (beyond 0.01) but ranges overlap:
		// 0.935±0.01 reaches 0.945, 0.950±0.002 reaches 0.948 — no overlap;
		// with IQR 0.03 it reaches 0.950: overlap.
		{ID: "b", Runs: 5, Trustworthiness: 0.935, TrustworthinessIQR: 0.030, Disparity: 0.035, DispIQR: 0.01, Jaccard: 0.7, KL: 1},
		{ID: "c", Runs: 5, Trustworthiness: 0.800, TrustworthinessIQR: 0.001, Disparity: 0.030, DispIQR: 0.01, Jaccard: 0.7, KL: 1},
		{ID: "d", Runs: 0},
		{ID: "e", Runs: 3, Trustworthiness: math.NaN(), Disparity: 0.1, Jaccard: 0.5},
	}
	rec, err := Recommend(cands, Rule{})
	if err != nil {
		t.Fatal(err)
	}
	if rec.Chosen.ID != "a" {
		t.Fatalf("chosen: got %s want a", rec.Chosen.ID)
	}
	if !reflect.DeepEqual(rec.Indistinguishable, []string{"b"}) {
		t.Errorf("indistinguishable: got %v want [b]", rec.Indistinguishable)
	}
	if len(rec.Excluded) != 2 || rec.Excluded[0].ID != "d" || rec.Excluded[1].ID != "e" {
		t.Errorf("excluded: got %+v want d and e", rec.Excluded)
	}
	if _, err := Recommend(cands[3:], Rule{}); !errors.Is(err, ErrNoCandidate) {
		t.Errorf("no candidates: got %v want ErrNoCandidate", err)
	}
}

func TestRuleWordsCarryTolerances(t *testing.T) {
	w := Rule{TrustTolerance: 0.02, DisparityTolerance: 0.005}.Words()
	for _, s := range []string{"0.02", "0.005", "0.02 of the highest", "lowest median final KL"} {
		if !strings.Contains(w, s) {
			t.Errorf("rule words lack %q: %s", s, w)
		}
	}
}
