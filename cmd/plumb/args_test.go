package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

func TestFlagsFirst(t *testing.T) {
	cases := []struct {
		name string
		in   string
		want string
	}{
		{"value flag after study", "report S --out D", "report --out D S"},
		{"flags on both sides", "check --baseline A B --json", "check --baseline A --json B"},
		{"baseline after study", "check B --baseline A --json --junit x.xml", "check --baseline A --json --junit x.xml B"},
		{"bool flag does not take the next argument", "show --json S", "show --json S"},
		{"bool flag after study", "show S --desc --sort kl_median", "show --desc --sort kl_median S"},
		{"name=value", "score S --k=10 --input=f.csv", "score --k=10 --input=f.csv S"},
		{"single dash and alias", "report S -o D", "report -o D S"},
		{"value that starts with a dash", "score S --spread-threshold -1", "score --spread-threshold -1 S"},
		{"double dash keeps the rest positional", "show --json -- -odd --desc", "show --json -- -odd --desc"},
		{"double dash after a positional", "show S --json -- T", "show --json -- S T"},
		{"unknown flag moved for the library to report", "report S --bogus", "report --bogus S"},
		{"help anywhere", "report S --help", "report --help S"},
		{"value flag at the end without its value", "report S --out", "report --out S"},
		{"unknown command left alone", "swep S --out D", "swep S --out D"},
		{"no command", "--version", "--version"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			got := flagsFirst(append([]string{"plumb"}, strings.Fields(tc.in)...), commands)
			want := append([]string{"plumb"}, strings.Fields(tc.want)...)
			if !reflect.DeepEqual(got, want) {
				t.Errorf("got %q want %q", got, want)
			}
		})
	}
}

// Every command that takes a positional argument accepts its flags after
// it, and gives the same result as with the flags first.
func TestFlagsAfterPositionals(t *testing.T) {
	base := baseline(t)
	tmp := t.TempDir()
	run := func(args ...string) string {
		t.Helper()
		stdout, stderr, code := plumb(t, args...)
		if code != 0 {
			t.Fatalf("plumb %s: exit %d, stderr %q", strings.Join(args, " "), code, stderr)
		}
		return stdout
	}

	// show: --json and --sort with its value after the study.
	first := run("show", "--json", "--sort", "kl_median", base)
	after := run("show", base, "--json", "--sort", "kl_median")
	if first != after || !json.Valid([]byte(after)) {
		t.Errorf("show: flags after STUDY printed %q, flags first %q", after, first)
	}

	// score: --k after the study is applied (the score files record k).
	run("score", base, "--k", "7")
	var sh showOut
	if err := json.Unmarshal([]byte(run("show", base, "--json")), &sh); err != nil {
		t.Fatal(err)
	}
	if sh.K != 7 {
		t.Errorf("score STUDY --k 7: study scored with k = %d, want 7", sh.K)
	}

	// report: --out after the study writes there.
	out := filepath.Join(tmp, "rep")
	run("report", base, "--out", out)
	if _, err := os.Stat(filepath.Join(out, "index.html")); err != nil {
		t.Errorf("report STUDY --out DIR: %v", err)
	}

	// check: the README's own example, and --baseline last.
	for _, args := range [][]string{
		{"check", "--baseline", base, base, "--json"},
		{"check", base, "--json", "--baseline", base},
	} {
		stdout := run(args...)
		if !json.Valid([]byte(stdout)) {
			t.Errorf("plumb %s: stdout is not JSON: %q", strings.Join(args, " "), stdout)
		}
	}

	// embed and sweep take no positional argument; flags after a stray
	// one still give their usage error, not a silent run.
	if _, stderr, code := plumb(t, "embed", "../../testdata/iris.csv", "--input", "../../testdata/iris.csv", "--out", filepath.Join(tmp, "l.csv")); code != 2 || !strings.Contains(stderr, "did you mean --input") {
		t.Errorf("embed with a positional: exit %d %q", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(tmp, "l.csv")); err == nil {
		t.Errorf("embed with a positional wrote its output")
	}
}

func TestUnknownCommand(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"swep"}, `unknown command "swep"; did you mean "sweep"?`},
		{[]string{"reprot", "study"}, `did you mean "report"?`},
		{[]string{"sho"}, `did you mean "show"?`},
		{[]string{"help", "chek"}, `unknown command "chek"; did you mean "check"?`},
		{[]string{"frobnicate"}, `unknown command "frobnicate" (commands: check, demo, embed, report, reproduce, score, show, sweep)`},
	}
	for _, tc := range cases {
		t.Run(tc.args[0], func(t *testing.T) {
			_, stderr, code := plumb(t, tc.args...)
			if code != 2 || !strings.Contains(stderr, tc.want) || strings.Count(stderr, "\n") != 1 {
				t.Errorf("exit %d stderr %q, want exit 2 and one line with %q", code, stderr, tc.want)
			}
		})
	}
	for _, args := range [][]string{{"help"}, {"help", "show"}} {
		stdout, _, code := plumb(t, args...)
		if code != 0 || !strings.Contains(stdout, "USAGE") {
			t.Errorf("plumb %v: exit %d, stdout %q", args, code, stdout)
		}
	}
}

func TestEditDistance(t *testing.T) {
	// Levenshtein distances from memory (kitten/sitting is the textbook
	// example: 3).
	for _, tc := range []struct {
		a, b string
		want int
	}{{"kitten", "sitting", 3}, {"", "abc", 3}, {"swep", "sweep", 1}, {"sweep", "sweep", 0}, {"chek", "check", 1}, {"ab", "ba", 2}} {
		if got := editDistance(tc.a, tc.b); got != tc.want {
			t.Errorf("editDistance(%q, %q) = %d, want %d", tc.a, tc.b, got, tc.want)
		}
	}
}
