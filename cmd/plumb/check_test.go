package main

import (
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"plumb/internal/fixture"
)

// irisStudy sweeps testdata/iris.csv (Fisher's iris via scikit-learn's
// copy, testdata/make_datasets.py) with perplexity 10, 30 × seeds 1-2 from
// random starts; extra flags override the defaults (later flags win).
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

// baseline makes the baseline study in a fresh temporary directory (it
// takes well under a second).
func baseline(t *testing.T) string {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "base")
	irisStudy(t, dir, "../../testdata/iris.csv")
	return dir
}

func TestCheckAgainstItself(t *testing.T) {
	base := baseline(t)
	junit := filepath.Join(t.TempDir(), "check.xml")
	stdout, stderr, code := plumb(t, "check", "--baseline", base, "--junit", junit, base)
	if code != 0 {
		t.Fatalf("exit %d want 0\n%s%s", code, stdout, stderr)
	}
	if !strings.Contains(stdout, "outcome: PASS") {
		t.Errorf("stdout lacks the verdict:\n%s", stdout)
	}
	var suite struct {
		Tests    int `xml:"tests,attr"`
		Failures int `xml:"failures,attr"`
	}
	b, err := os.ReadFile(junit)
	if err != nil {
		t.Fatal(err)
	}
	if err := xml.Unmarshal(b, &suite); err != nil || suite.Tests != 2 || suite.Failures != 0 {
		t.Errorf("junit: got %+v (%v), want 2 tests, 0 failures", suite, err)
	}
	stdout, _, code = plumb(t, "check", "--json", "--baseline", base, base)
	var res struct {
		Outcome  string `json:"outcome"`
		Settings []struct {
			Disparity *float64 `json:"disparity_to_baseline"`
		} `json:"settings"`
	}
	if err := json.Unmarshal([]byte(stdout), &res); err != nil || code != 0 || res.Outcome != "pass" || len(res.Settings) != 2 {
		t.Fatalf("json: exit %d, %+v, %v\n%s", code, res, err, stdout)
	}
	// Same study: identical consensus layouts, disparity 0 (definition).
	for _, s := range res.Settings {
		if s.Disparity == nil || *s.Disparity > 1e-12 {
			t.Errorf("self disparity: got %v want 0", s.Disparity)
		}
	}
}

// A deliberately broken engine setting: only 10 iterations after early
// exaggeration instead of 300. Its settings differ from the baseline's in
// "iters", so they match only when that parameter is ignored; then the
// gate must fail and name the settings.
func TestCheckBrokenEngineSetting(t *testing.T) {
	base := baseline(t)
	cur := filepath.Join(t.TempDir(), "short")
	irisStudy(t, cur, "../../testdata/iris.csv", "--iters", "110")

	stdout, stderr, code := plumb(t, "check", "--baseline", base, cur)
	if code != 2 || !strings.Contains(stderr, "no setting in common") {
		t.Errorf("without --ignore: exit %d want 2 with the reason\n%s", code, stderr)
	}
	junit := filepath.Join(t.TempDir(), "check.xml")
	stdout, stderr, code = plumb(t, "check", "--baseline", base, "--ignore", "iters", "--junit", junit, cur)
	if code != 1 {
		t.Fatalf("exit %d want 1\n%s%s", code, stdout, stderr)
	}
	if !strings.Contains(stdout, "FAIL perplexity=10:") && !strings.Contains(stdout, "FAIL perplexity=30:") {
		t.Errorf("stdout does not name a failing setting:\n%s", stdout)
	}
	if !strings.Contains(stderr, "plumb: error: regression:") {
		t.Errorf("stderr: %s", stderr)
	}
	b, _ := os.ReadFile(junit)
	if !strings.Contains(string(b), "<failure") {
		t.Errorf("junit lacks a failure:\n%s", b)
	}
}

// Perturbed data: the features of 20 setosa and 20 virginica rows are
// swapped (ids kept), so those points belong elsewhere. The fingerprint
// differs (exit 2); allowed, the gate fails and lists swapped points among
// those that moved most.
func TestCheckPerturbedData(t *testing.T) {
	base := baseline(t)
	tmp := t.TempDir()
	iris := fixture.MustReadCSV(t, "../../testdata/iris.csv")
	rows := append([][]string{iris.Header}, iris.Rows...)
	head := rows[0]
	idCol, spCol := -1, -1
	for j, h := range head {
		switch h {
		case "id":
			idCol = j
		case "species":
			spCol = j
		}
	}
	swapped := map[string]bool{}
	// iris rows 0-49 are setosa and 100-149 virginica (Fisher 1936 order,
	// kept by scikit-learn).
	for i := 0; i < 20; i++ {
		a, b := rows[1+i], rows[1+100+i]
		for j := range a {
			if j != idCol && j != spCol {
				a[j], b[j] = b[j], a[j]
			}
		}
		swapped[a[idCol]], swapped[b[idCol]] = true, true
	}
	path := filepath.Join(tmp, "iris-swapped.csv")
	f, _ := os.Create(path)
	w := csv.NewWriter(f)
	w.WriteAll(rows)
	f.Close()
	cur := filepath.Join(tmp, "swapped")
	irisStudy(t, cur, path)

	_, stderr, code := plumb(t, "check", "--baseline", base, cur)
	if code != 2 || !strings.Contains(stderr, "input data differ") {
		t.Errorf("other data: exit %d want 2 naming the fingerprint\n%s", code, stderr)
	}
	stdout, stderr, code := plumb(t, "check", "--json", "--allow-other-data", "--baseline", base, cur)
	if code != 1 {
		t.Fatalf("allowed: exit %d want 1\n%s%s", code, stdout, stderr)
	}
	var res struct {
		Settings []struct {
			Label string   `json:"label"`
			Pass  bool     `json:"pass"`
			Fail  []string `json:"failures"`
			Moved []struct {
				ID string `json:"id"`
			} `json:"moved_most"`
		} `json:"settings"`
	}
	if err := json.Unmarshal([]byte(stdout), &res); err != nil {
		t.Fatal(err)
	}
	failed := 0
	for _, s := range res.Settings {
		if s.Pass {
			continue
		}
		failed++
		hits := 0
		for _, m := range s.Moved {
			if swapped[m.ID] {
				hits++
			}
		}
		if hits == 0 {
			t.Errorf("%s: none of the swapped points among those that moved most: %+v", s.Label, s.Moved)
		}
	}
	if failed == 0 {
		t.Error("no setting failed on swapped data")
	}
}

func TestCheckUsageErrors(t *testing.T) {
	base := baseline(t)
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"no baseline", []string{"check", base}, "--baseline"},
		{"no study", []string{"check", "--baseline", base}, "STUDY_DIR"},
		{"missing study", []string{"check", "--baseline", base, filepath.Join(t.TempDir(), "nope")}, "is not a study"},
		{"bad threshold", []string{"check", "--baseline", base, "--max-disparity", "-1", base}, "--max-disparity"},
		{"unknown flag", []string{"check", "--bogus", base}, "bogus"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, stderr, code := plumb(t, tc.args...)
			if code != 2 || !strings.Contains(stderr, tc.want) {
				t.Errorf("exit %d stderr %q, want 2 mentioning %q", code, stderr, tc.want)
			}
		})
	}
}
