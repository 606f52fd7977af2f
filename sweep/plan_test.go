package sweep

import (
	"errors"
	"reflect"
	"strings"
	"testing"

	"plumb/tsne"
)

func TestParseSeeds(t *testing.T) {
	cases := []struct {
		in   string
		want []uint64
		err  string
	}{
		{"3", []uint64{1, 2, 3}, ""},
		{"1-5,9", []uint64{1, 2, 3, 4, 5, 9}, ""},
		{"9,1-2", []uint64{1, 2, 9}, ""},
		{"7-7", []uint64{7}, ""},
		{"0-1", []uint64{0, 1}, ""},
		{"0", nil, "at least 1"},
		{"5-3", nil, "ends before"},
		{"1,1", nil, "twice"},
		{"1-3,2", nil, "twice"},
		{"a", nil, "whole number"},
		{"1,,2", nil, "empty"},
		{"-3", nil, "whole number"},
		{"1-200000", nil, "more than"},
		{"", nil, "empty"},
	}
	for _, c := range cases {
		t.Run(c.in, func(t *testing.T) {
			got, err := ParseSeeds(c.in)
			if c.err != "" {
				if err == nil || !strings.Contains(err.Error(), c.err) {
					t.Fatalf("got %v, %v want error containing %q", got, err, c.err)
				}
				return
			}
			if err != nil || !reflect.DeepEqual(got, c.want) {
				t.Fatalf("got %v, %v want %v", got, err, c.want)
			}
		})
	}
}

func TestPlanDefaultsAndExpansion(t *testing.T) {
	p, err := Spec{}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	// Defaults follow tsne.Config (common practice in reference code:
	// perplexity 30, exaggeration 12 for 250 of 1000 iterations) and
	// tsne.DefaultTheta.
	want := &Plan{Perplexity: []float64{30}, LearningRate: []float64{0}, Exaggeration: []float64{12},
		ExaggerationIters: []int{250}, Iters: []int{1000}, Init: []string{"pca"}, Gradient: []string{"auto"},
		Theta: tsne.DefaultTheta, Seeds: []uint64{1}, Neighbors: "auto", KLEvery: 50}
	if !reflect.DeepEqual(p, want) {
		t.Errorf("defaults: got %+v want %+v", p, want)
	}

	p, err = Spec{Perplexity: "50, 5,15,30", LearningRate: "auto,200", Exaggeration: "4,12", Init: "random,pca", Seeds: "10"}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	if p.NumSettings() != 4*2*2*2 || p.NumRuns() != 320 {
		t.Errorf("counts: got %d settings %d runs want 32, 320", p.NumSettings(), p.NumRuns())
	}
	runs, err := p.Runs()
	if err != nil {
		t.Fatal(err)
	}
	if len(runs) != 320 {
		t.Fatalf("got %d runs", len(runs))
	}
	seen := map[string]bool{}
	for i, r := range runs {
		if seen[r.ID] {
			t.Fatalf("duplicate run id %s", r.ID)
		}
		seen[r.ID] = true
		if r.Index != i {
			t.Errorf("run %d has index %d", i, r.Index)
		}
	}
	// Canonical order: perplexity outermost, seeds innermost.
	if runs[0].Setting.Perplexity != 5 || runs[len(runs)-1].Setting.Perplexity != 50 || runs[0].Seed != 1 || runs[9].Seed != 10 {
		t.Errorf("order: first %+v last %+v", runs[0].Setting, runs[len(runs)-1].Setting)
	}
	// The plan hash does not depend on the order lists were written in.
	q, _ := Spec{Perplexity: "5,15,30,50", LearningRate: "200,auto", Exaggeration: "12,4", Init: "pca,random", Seeds: "1-10"}.Plan()
	if q.Hash() != p.Hash() {
		t.Errorf("hash depends on list order: %s vs %s", q.Hash(), p.Hash())
	}
	r, _ := Spec{Perplexity: "5,15,30,50", LearningRate: "200,auto", Exaggeration: "12,4", Init: "pca,random", Seeds: "1-11"}.Plan()
	if r.Hash() == p.Hash() {
		t.Error("hash ignores the seeds")
	}
}

func TestPlanValidation(t *testing.T) {
	cases := []struct {
		name  string
		spec  Spec
		field string
	}{
		{"perplexity zero", Spec{Perplexity: "0"}, "perplexity"},
		{"perplexity negative", Spec{Perplexity: "5,-1"}, "perplexity"},
		{"perplexity NaN", Spec{Perplexity: "NaN"}, "perplexity"},
		{"perplexity text", Spec{Perplexity: "thirty"}, "perplexity"},
		{"perplexity duplicate", Spec{Perplexity: "5,5.0"}, "perplexity"},
		{"perplexity below 1", Spec{Perplexity: "5,0.5"}, "perplexity"}, // perplexity = exp(entropy) ≥ 1 (van der Maaten & Hinton 2008)
		{"learning rate zero", Spec{LearningRate: "0"}, "learning_rate"},
		{"learning rate negative", Spec{LearningRate: "auto,-5"}, "learning_rate"},
		{"exaggeration below 1", Spec{Exaggeration: "0.5"}, "exaggeration"},
		{"iters below exaggeration iters", Spec{Iters: "100", ExaggerationIters: "250"}, "iters"},
		{"iters zero", Spec{Iters: "0"}, "iters"},
		{"iters fraction", Spec{Iters: "1.5"}, "iters"},
		{"seeds zero", Spec{Seeds: "0"}, "seeds"},
		{"seed above 2^63-1", Spec{Seeds: "1,9223372036854775808"}, "seeds"}, // the int64 seed column's limit
		{"init unknown", Spec{Init: "spectral"}, "init"},
		{"gradient unknown", Spec{Gradient: "magic"}, "gradient"},
		{"theta zero", Spec{Theta: "0"}, "theta"},
		{"theta list", Spec{Theta: "0.3,0.5"}, "theta"},
		{"neighbors unknown", Spec{Neighbors: "fast"}, "neighbors"},
		{"kl every zero", Spec{KLEvery: "0"}, "kl_every"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := c.spec.Plan()
			var pe *PlanError
			if !errors.As(err, &pe) || pe.Field != c.field {
				t.Fatalf("got %v want a PlanError for %s", err, c.field)
			}
			if !strings.HasPrefix(err.Error(), "--"+strings.ReplaceAll(c.field, "_", "-")) {
				t.Errorf("message %q does not name the flag", err)
			}
		})
	}
}

func TestParseSpecFile(t *testing.T) {
	s, err := ParseSpec("plan.json", []byte(`{"perplexity": [5, 30], "learning_rate": ["auto", 200], "seeds": "1-3", "iters": 500, "init": "pca,random"}`))
	if err != nil {
		t.Fatal(err)
	}
	want := Spec{Perplexity: "5,30", LearningRate: "auto,200", Seeds: "1-3", Iters: "500", Init: "pca,random"}
	got := s
	got.from = nil
	if !reflect.DeepEqual(got, want) {
		t.Errorf("got %+v want %+v", s, want)
	}
	// Flags override the file.
	m := s.Merge(Spec{Seeds: "5", Perplexity: "10"})
	if m.Seeds != "5" || m.Perplexity != "10" || m.LearningRate != "auto,200" {
		t.Errorf("merge: got %+v", m)
	}
	// A one-element seed array is an explicit seed, not a count.
	s, err = ParseSpec("plan.json", []byte(`{"seeds": [7]}`))
	if err != nil {
		t.Fatal(err)
	}
	if seeds, _ := ParseSeeds(s.Seeds); !reflect.DeepEqual(seeds, []uint64{7}) {
		t.Errorf("seeds [7]: got %v", seeds)
	}
	for _, bad := range []string{`[1,2]`, `{"perplexty": 5}`, `{"perplexity": {}}`, `{"perplexity": []}`, `{"perplexity": 5} {}`, `{"seeds": [true]}`, ``} {
		if _, err := ParseSpec("plan.json", []byte(bad)); err == nil || !strings.HasPrefix(err.Error(), "plan.json") {
			t.Errorf("%q: got %v, want an error naming the file", bad, err)
		}
	}
}

// Golden ids: these must never change between versions (a changed id
// orphans the runs of every existing study). Each id is the first 10 hex
// digits of the SHA-256 of the canonical text shown, which can be checked
// outside Go, e.g.
//
//	echo -n 'plumb-setting-v1|perplexity=5|…|theta=0.5' | sha256sum
//
// (GNU coreutils sha256sum gave 66deb36dc0a1f817… for the first line).
// θ is given explicitly: the ids of a plan never change, but a plan that
// leaves θ to its default (tsne.DefaultTheta, 0.5 before version 0.2) is
// another plan when the default changes.
func TestGoldenIDs(t *testing.T) {
	p, err := Spec{Perplexity: "30,5", LearningRate: "auto,200", Seeds: "1-2", Theta: "0.5"}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	want := []struct{ canonical, id string }{
		{"plumb-setting-v1|perplexity=5|learning_rate=auto|exaggeration=12|exaggeration_iters=250|iters=1000|init=pca|gradient=auto|theta=0.5", "66deb36dc0"},
		{"plumb-setting-v1|perplexity=5|learning_rate=200|exaggeration=12|exaggeration_iters=250|iters=1000|init=pca|gradient=auto|theta=0.5", "204f2422c5"},
		{"plumb-setting-v1|perplexity=30|learning_rate=auto|exaggeration=12|exaggeration_iters=250|iters=1000|init=pca|gradient=auto|theta=0.5", "cdd3602460"},
		{"plumb-setting-v1|perplexity=30|learning_rate=200|exaggeration=12|exaggeration_iters=250|iters=1000|init=pca|gradient=auto|theta=0.5", "fcebe25bde"},
	}
	settings := p.Settings()
	if len(settings) != len(want) {
		t.Fatalf("got %d settings", len(settings))
	}
	for i, s := range settings {
		if s.Canonical() != want[i].canonical || s.ID != want[i].id {
			t.Errorf("setting %d: got %s %s want %s %s", i, s.Canonical(), s.ID, want[i].canonical, want[i].id)
		}
	}
	runs, _ := p.Runs()
	if runs[1].ID != "66deb36dc0-2" {
		t.Errorf("run id: got %s want 66deb36dc0-2", runs[1].ID)
	}
	if got, want := p.Hash(), "7456a6318e07dc44"; got != want {
		t.Errorf("plan hash: got %s want %s (canonical %s)", got, want, p.Canonical())
	}
}

func TestShardAssignment(t *testing.T) {
	p, _ := Spec{Perplexity: "5,10,20", Exaggeration: "4,12", Seeds: "7"}.Plan()
	runs, _ := p.Runs()
	for n := 1; n <= 7; n++ {
		count := map[string]int{}
		sizes := make([]int, n)
		for i := 0; i < n; i++ {
			sel := Shard{Index: i, Count: n}.Select(runs)
			sizes[i] = len(sel)
			for _, r := range sel {
				count[r.ID]++
			}
			// Deterministic: selecting again gives the same runs.
			again := Shard{Index: i, Count: n}.Select(runs)
			if !reflect.DeepEqual(sel, again) {
				t.Errorf("N=%d shard %d: not deterministic", n, i)
			}
		}
		for _, r := range runs {
			if count[r.ID] != 1 {
				t.Errorf("N=%d: run %s in %d shards", n, r.ID, count[r.ID])
			}
		}
		mn, mx := sizes[0], sizes[0]
		for _, s := range sizes {
			mn, mx = min(mn, s), max(mx, s)
		}
		if mx-mn > 1 {
			t.Errorf("N=%d: shard sizes %v not balanced", n, sizes)
		}
	}
}

func TestResolveShard(t *testing.T) {
	env := func(m map[string]string) func(string) string { return func(k string) string { return m[k] } }
	cases := []struct {
		name   string
		flag   string
		shards int
		env    map[string]string
		want   Shard
		err    bool
	}{
		{"none", "", 0, nil, Shard{0, 1, ""}, false},
		{"flag", "2/5", 0, nil, Shard{2, 5, "--shard"}, false},
		{"flag beats env", "0/2", 0, map[string]string{"SLURM_ARRAY_TASK_ID": "3"}, Shard{0, 2, "--shard"}, false},
		{"flag index too big", "5/5", 0, nil, Shard{}, true},
		{"flag garbage", "1-5", 0, nil, Shard{}, true},
		{"flag zero shards", "0/0", 0, nil, Shard{}, true},
		// sbatch --array=1-4: Slurm sets ID, MIN=1, MAX=4, COUNT=4 (Slurm job array docs).
		{"slurm min max", "", 0, map[string]string{"SLURM_ARRAY_TASK_ID": "3", "SLURM_ARRAY_TASK_MIN": "1", "SLURM_ARRAY_TASK_MAX": "4"}, Shard{2, 4, "Slurm array"}, false},
		{"slurm step", "", 0, map[string]string{"SLURM_ARRAY_TASK_ID": "4", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "6", "SLURM_ARRAY_TASK_STEP": "2"}, Shard{2, 4, "Slurm array"}, false},
		{"slurm count", "", 0, map[string]string{"SLURM_ARRAY_TASK_ID": "2", "SLURM_ARRAY_TASK_COUNT": "3"}, Shard{2, 3, "Slurm array"}, false},
		{"slurm only id", "", 0, map[string]string{"SLURM_ARRAY_TASK_ID": "2"}, Shard{}, true},
		{"slurm bad", "", 0, map[string]string{"SLURM_ARRAY_TASK_ID": "x"}, Shard{}, true},
		{"slurm vs shards", "", 3, map[string]string{"SLURM_ARRAY_TASK_ID": "1", "SLURM_ARRAY_TASK_MIN": "0", "SLURM_ARRAY_TASK_MAX": "3"}, Shard{}, true},
		{"k8s", "", 4, map[string]string{"JOB_COMPLETION_INDEX": "3"}, Shard{3, 4, "Kubernetes indexed job"}, false},
		{"k8s no shards", "", 0, map[string]string{"JOB_COMPLETION_INDEX": "0"}, Shard{}, true},
		{"k8s out of range", "", 2, map[string]string{"JOB_COMPLETION_INDEX": "2"}, Shard{}, true},
		{"shards without env", "", 3, nil, Shard{}, true},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got, err := ResolveShard(c.flag, c.shards, env(c.env))
			if c.err {
				if err == nil {
					t.Fatalf("got %+v, want an error", got)
				}
				return
			}
			if err != nil || got != c.want {
				t.Fatalf("got %+v, %v want %+v", got, err, c.want)
			}
		})
	}
}
