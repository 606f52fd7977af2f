package sweep

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzParseSeeds: any text either parses to sorted unique seeds or gives a
// PlanError; never a panic.
func FuzzParseSeeds(f *testing.F) {
	for _, s := range []string{"10", "1-5,9", "7-7", "0", "3-1", "1,,2", "18446744073709551615", "18446744073709551614-18446744073709551615"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		seeds, err := ParseSeeds(s)
		if err != nil {
			return
		}
		if len(seeds) == 0 || len(seeds) > maxSeeds {
			t.Fatalf("%q: %d seeds", s, len(seeds))
		}
		for i := 1; i < len(seeds); i++ {
			if seeds[i] <= seeds[i-1] {
				t.Fatalf("%q: seeds not strictly ascending: %v", s, seeds)
			}
		}
	})
}

// FuzzPlanFile: plan files either parse and validate into a plan whose
// runs all have distinct ids, or give an error; never a panic.
func FuzzPlanFile(f *testing.F) {
	for _, s := range []string{
		`{"perplexity": [5, 30], "learning_rate": ["auto", 200], "seeds": "1-3", "iters": 500}`,
		`{"seeds": [7], "init": "pca,random", "gradient": "exact,fft"}`,
		`{"exaggeration": 0.5}`, `{}`, `[]`, `{"perplexity": "5,5"}`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := ParseSpec("plan.json", data)
		if err != nil {
			return
		}
		p, err := s.Plan()
		if err != nil {
			return
		}
		if p.NumRuns() > 5000 {
			return // large grids are valid; expanding them is not the point here
		}
		runs, err := p.Runs()
		if err != nil {
			t.Fatal(err)
		}
		seen := map[string]bool{}
		for _, r := range runs {
			if seen[r.ID] {
				t.Fatalf("duplicate run id %s", r.ID)
			}
			seen[r.ID] = true
		}
	})
}

// FuzzOpenStudy: damaged study files (study.json, a record, a layout) give
// errors or unfinished runs, never a panic.
func FuzzOpenStudy(f *testing.F) {
	ds := iris(f)
	p := smallPlan(f)
	dir := f.TempDir()
	runSweep(f, ds, p, dir, nil)
	runs, _ := p.Runs()
	layout, _ := os.ReadFile(filepath.Join(dir, LayoutsDir, runs[0].ID+".parquet"))
	info, _ := os.ReadFile(filepath.Join(dir, StudyFile))
	f.Add(layout, info)
	f.Add(layout[:len(layout)/2], info[:len(info)/2])
	f.Fuzz(func(t *testing.T, lay, js []byte) {
		d := t.TempDir()
		os.MkdirAll(filepath.Join(d, LayoutsDir), 0o755)
		os.MkdirAll(filepath.Join(d, RecordsDir), 0o755)
		os.MkdirAll(filepath.Join(d, TracesDir), 0o755)
		os.WriteFile(filepath.Join(d, StudyFile), js, 0o644)
		os.WriteFile(filepath.Join(d, LayoutsDir, runs[0].ID+".parquet"), lay, 0o644)
		st, err := Open(d)
		if err != nil {
			return
		}
		st.Layout(runs[0].ID)
	})
}
