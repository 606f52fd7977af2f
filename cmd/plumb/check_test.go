package main

import (
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"plumb/internal/fixture"
)

// irisCheckStudy sweeps testdata/iris.csv (Fisher's iris via scikit-learn's
// copy, testdata/make_datasets.py) with perplexity 10 and 30 from random
// starts; extra flags override the defaults (later flags win).
func irisCheckStudy(t *testing.T, dir, input string, extra ...string) {
	t.Helper()
	args := []string{"sweep", "--input", input, "--id-column", "id", "--label-column", "species",
		"--out", dir, "--perplexity", "10,30", "--init", "random", "--seeds", "1-6", "--quiet"}
	_, stderr, code := plumb(t, append(args, extra...)...)
	if code != 0 {
		t.Fatalf("sweep exit %d: %s", code, stderr)
	}
}

// swappedIris writes iris with the features of the first n setosa and the
// first n virginica rows swapped (ids and species kept): those points
// belong elsewhere now. iris rows 0-49 are setosa and 100-149 virginica
// (Fisher 1936 order, kept by scikit-learn).
func swappedIris(t *testing.T, path string, n int) map[string]bool {
	t.Helper()
	iris := fixture.MustReadCSV(t, "../../testdata/iris.csv")
	rows := append([][]string{iris.Header}, iris.Rows...)
	swapped := map[string]bool{}
	for i := 0; i < n; i++ {
		a, b := rows[1+i], rows[1+100+i]
		for j := 2; j < len(a); j++ { // id, species, then the four features
			a[j], b[j] = b[j], a[j]
		}
		swapped[a[0]], swapped[b[0]] = true, true
	}
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w := csv.NewWriter(f)
	w.WriteAll(rows)
	f.Close()
	return swapped
}

var (
	checkOnce sync.Once
	checkDir  string
)

// checkStudies makes the studies of the check tests once (about 10 s of
// CPU): the baseline (seeds 1-6) and its variants.
func checkStudies(t *testing.T) string {
	checkOnce.Do(func() {
		dir, err := os.MkdirTemp("", "plumb-check-")
		if err != nil {
			t.Fatal(err)
		}
		iris := "../../testdata/iris.csv"
		irisCheckStudy(t, filepath.Join(dir, "base"), iris)
		irisCheckStudy(t, filepath.Join(dir, "rerun"), iris)
		irisCheckStudy(t, filepath.Join(dir, "base1"), iris, "--seeds", "1")
		irisCheckStudy(t, filepath.Join(dir, "rerun1"), iris, "--seeds", "1")
		irisCheckStudy(t, filepath.Join(dir, "base3"), iris, "--seeds", "1-3")
		irisCheckStudy(t, filepath.Join(dir, "rerun3"), iris, "--seeds", "1-3")
		irisCheckStudy(t, filepath.Join(dir, "other3"), iris, "--seeds", "4-6")
		irisCheckStudy(t, filepath.Join(dir, "other"), iris, "--seeds", "7-12")
		irisCheckStudy(t, filepath.Join(dir, "short"), iris, "--seeds", "7-12", "--iters", "300")
		irisCheckStudy(t, filepath.Join(dir, "noexag"), iris, "--seeds", "7-12", "--exaggeration", "1")
		swappedIris(t, filepath.Join(dir, "iris-swapped.csv"), 10)
		irisCheckStudy(t, filepath.Join(dir, "swapped"), filepath.Join(dir, "iris-swapped.csv"), "--seeds", "7-12")
		irisCheckStudy(t, filepath.Join(dir, "k20"), iris, "--k", "20")
		irisCheckStudy(t, filepath.Join(dir, "approx"), iris, "--neighbors", "approx")
		checkDir = dir
	})
	if checkDir == "" {
		t.Fatal("check studies were not made")
	}
	return checkDir
}

func TestMain(m *testing.M) {
	code := m.Run()
	if checkDir != "" {
		os.RemoveAll(checkDir)
	}
	os.Exit(code)
}

// TestCheckExitCodes runs plumb check on pairs of small iris studies, each
// a situation a nightly job meets, and checks the exit code and the line
// that names what happened. Which changes the test detects on iris was
// measured (internal/scripts/gatecal/README.md): early exaggeration 4
// instead of 12 leaves iris maps as they are, exaggeration off (1) does
// not.
func TestCheckExitCodes(t *testing.T) {
	d := checkStudies(t)
	p := func(name string) string { return filepath.Join(d, name) }
	cases := []struct {
		name     string
		args     []string
		code     int
		stdout   string // a line on stdout (the verdict)
		stderr   string // a line on stderr
		notInOut string
	}{
		{"identical rerun, 1 seed", []string{"-b", p("base1"), p("rerun1")}, 0,
			"outcome: PASS", "", "FAIL"},
		{"identical rerun, 3 seeds", []string{"-b", p("base3"), p("rerun3")}, 0,
			"outcome: PASS", "", "FAIL"},
		{"identical rerun, 6 seeds", []string{"-b", p("base"), p("rerun")}, 0,
			"outcome: PASS", "", "FAIL"},
		{"other seeds, same code", []string{"-b", p("base"), p("other")}, 0,
			"outcome: PASS: all 2 matched setting(s) within run-to-run variation", "", "FAIL"},
		{"other 3 seeds cannot be tested", []string{"-b", p("base3"), p("other3")}, 4,
			"UNTESTED", "cannot be tested", "FAIL"},
		{"other 3 seeds, untested allowed", []string{"-b", p("base3"), "--allow-untested", p("other3")}, 0,
			"not tested for map changes: 3 and 3 runs: the smallest possible p-value is 0.1", "", "FAIL"},
		{"fewer iterations", []string{"-b", p("base"), "--ignore", "iters", p("short")}, 1,
			"final KL rose by", "plumb: error: regression: 2 of 2 setting(s) changed", ""},
		{"fewer iterations, not ignored", []string{"-b", p("base"), p("short")}, 2,
			"", "no setting in common", ""},
		{"exaggeration off", []string{"-b", p("base"), "--ignore", "exaggeration", p("noexag")}, 1,
			"maps changed: kNN Jaccard across the studies is", "plumb: error: regression: 1 of 2 setting(s) changed", ""},
		{"data changed", []string{"-b", p("base"), p("swapped")}, 3,
			"outcome: DATA-CHANGED", "plumb: error: the input data changed: baseline fingerprint", ""},
		{"data changed, allowed", []string{"-b", p("base"), "--allow-other-data", p("swapped")}, 1,
			"maps changed: Procrustes disparity across the studies is", "plumb: error: regression: 2 of 2 setting(s) changed", ""},
		{"other k", []string{"-b", p("base"), p("k20")}, 2,
			"", "plumb: error: cannot compare: the studies were scored with different k (baseline k = 15, current k = 20)", ""},
		{"other neighbour search", []string{"-b", p("base"), p("approx")}, 2,
			"", `the runs were made differently (plan neighbors: baseline "auto", current "approx")`, ""},
		{"bad flag", []string{"-b", p("base"), "--bogus", p("other")}, 2, "", "bogus", ""},
		{"bad threshold", []string{"-b", p("base"), "--alpha", "0", p("other")}, 2, "", "--alpha 0: must be positive", ""},
		{"no baseline", []string{p("other")}, 2, "", "--baseline", ""},
		{"missing study", []string{"-b", p("base"), p("nope")}, 2, "", "current study: ", ""},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			stdout, stderr, code := plumb(t, append([]string{"check"}, tc.args...)...)
			if code != tc.code {
				t.Fatalf("exit %d want %d\n%s%s", code, tc.code, stdout, stderr)
			}
			if !strings.Contains(stdout, tc.stdout) {
				t.Errorf("stdout lacks %q:\n%s", tc.stdout, stdout)
			}
			if !strings.Contains(stderr, tc.stderr) {
				t.Errorf("stderr lacks %q:\n%s", tc.stderr, stderr)
			}
			if tc.notInOut != "" && strings.Contains(stdout, tc.notInOut) {
				t.Errorf("stdout has %q:\n%s", tc.notInOut, stdout)
			}
			if strings.Contains(stdout+stderr, "Options.") || strings.Contains(stdout+stderr, "AllowOtherData") {
				t.Errorf("Go API names in user-facing text:\n%s%s", stdout, stderr)
			}
		})
	}
}

// TestCheckJSONAndJUnit checks the machine outputs: the same numbers and
// units as the table, both k, the exit code, and a JUnit suite with a
// failure per changed setting and the points that changed named.
func TestCheckJSONAndJUnit(t *testing.T) {
	d := checkStudies(t)
	swapped := swappedIris(t, filepath.Join(t.TempDir(), "x.csv"), 10)
	junit := filepath.Join(t.TempDir(), "check.xml")
	stdout, stderr, code := plumb(t, "check", "--json", "--junit", junit, "--allow-other-data", "-b",
		filepath.Join(d, "base"), filepath.Join(d, "swapped"))
	if code != 1 {
		t.Fatalf("exit %d want 1\n%s%s", code, stdout, stderr)
	}
	var res struct {
		Outcome    string         `json:"outcome"`
		ExitCode   int            `json:"exit_code"`
		Test       string         `json:"test"`
		Thresholds map[string]any `json:"thresholds"`
		Settings   []struct {
			Label   string `json:"label"`
			Status  string `json:"status"`
			Jaccard struct {
				Shift, P, Level float64
				Tested, Failed  bool
			} `json:"jaccard"`
			KL struct {
				Change float64 `json:"change"`
			} `json:"kl_relative"`
			Moved []struct {
				ID string `json:"id"`
			} `json:"neighbourhood_changed_most"`
			Failures []string `json:"failures"`
		} `json:"settings"`
	}
	if err := json.Unmarshal([]byte(stdout), &res); err != nil {
		t.Fatalf("json: %v\n%s", err, stdout)
	}
	if res.Outcome != "regression" || res.ExitCode != 1 {
		t.Errorf("outcome %q exit_code %d, want regression 1", res.Outcome, res.ExitCode)
	}
	if res.Thresholds["k"] != 15.0 || res.Thresholds["k_baseline"] != 15.0 || res.Thresholds["k_current"] != 15.0 {
		t.Errorf("thresholds k: %v", res.Thresholds)
	}
	if !strings.Contains(res.Test, "permutation") {
		t.Errorf("test description: %q", res.Test)
	}
	for _, s := range res.Settings {
		if s.Status != "fail" || !s.Jaccard.Tested || !s.Jaccard.Failed || s.Jaccard.P > s.Jaccard.Level {
			t.Errorf("%s: %+v", s.Label, s)
		}
		hits := 0
		for _, m := range s.Moved {
			if swapped[m.ID] {
				hits++
			}
		}
		// The five points whose neighbourhoods changed most are swapped
		// ones (20 of 150 points were swapped).
		if len(s.Moved) != 5 || hits != 5 {
			t.Errorf("%s: changed most %+v, want 5 swapped points", s.Label, s.Moved)
		}
	}
	b, err := os.ReadFile(junit)
	if err != nil {
		t.Fatal(err)
	}
	var suite struct {
		Tests    int `xml:"tests,attr"`
		Failures int `xml:"failures,attr"`
	}
	if err := xml.Unmarshal(b, &suite); err != nil || suite.Tests != 2 || suite.Failures != 2 {
		t.Errorf("junit: %+v (%v), want 2 tests, 2 failures\n%s", suite, err, b)
	}
	// Untested settings are skipped test cases.
	plumb(t, "check", "--junit", junit, "--allow-untested", "-b", filepath.Join(d, "base3"), filepath.Join(d, "other3"))
	b, _ = os.ReadFile(junit)
	if !strings.Contains(string(b), `skipped="2"`) || !strings.Contains(string(b), "<skipped message=") {
		t.Errorf("junit of untested settings:\n%s", b)
	}
}

// irisStudy sweeps testdata/iris.csv with perplexity 10, 30 × seeds 1-2
// from random starts and short runs (the report tests use it); extra flags
// override the defaults (later flags win).
func irisStudy(t *testing.T, dir, input string, extra ...string) {
	t.Helper()
	args := []string{"sweep", "--input", input, "--id-column", "id", "--label-column", "species",
		"--out", dir, "--perplexity", "10,30", "--init", "random", "--seeds", "1-2",
		"--iters", "400", "--exaggeration-iters", "100", "--quiet"}
	_, stderr, code := plumb(t, append(args, extra...)...)
	if code != 0 {
		t.Fatalf("sweep exit %d: %s", code, stderr)
	}
}

// baseline makes a small study (irisStudy) in a fresh temporary directory.
func baseline(t *testing.T) string {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "base")
	irisStudy(t, dir, "../../testdata/iris.csv")
	return dir
}
