package main

// Issue 19 (one writer per study, scores never stale, user files never
// clobbered, honest exit codes), in process: each test is one row of the
// README's bad-input table. The cases that need real processes (two
// writers at once, shards at once, signals) are in lockproc_test.go.

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"plumb/internal/parquetio"
	"plumb/sweep"
)

// lfShow decodes `plumb show --json` of dir.
func lfShow(t *testing.T, dir string) (showOut, string) {
	t.Helper()
	stdout, stderr, code := plumb(t, "show", dir, "--json")
	if code != 0 {
		t.Fatalf("show --json: exit %d %s", code, stderr)
	}
	var so showOut
	var extra struct {
		Problem string `json:"scores_problem"`
	}
	if err := json.Unmarshal([]byte(stdout), &so); err != nil {
		t.Fatal(err)
	}
	json.Unmarshal([]byte(stdout), &extra)
	return so, extra.Problem
}

// TestSecondWriterRefused: while another writer holds a study (here a lock
// taken in this process through sweep.LockStudy, which conflicts like
// another process's: flock locks belong to open files), sweep, score and
// report are refused at once with one line naming the holder's pid and
// command, and change nothing; show waits briefly, then reads and says so.
// A shard of the study's plan shares it with a running shard; a shard of
// another plan is refused.
func TestSecondWriterRefused(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	args := rbSweep(rbIris, dir, "--seeds", "2")
	if _, stderr, code := plumb(t, args...); code != 0 {
		t.Fatalf("sweep: %d %s", code, stderr)
	}
	before := rbSnapshot(t, dir)
	held, err := sweep.LockStudy(dir, sweep.Shard{}, true, "plumb score "+dir+" (test holder)")
	if err != nil {
		t.Fatal(err)
	}
	pid := "pid " + itoa(os.Getpid())
	for _, cmd := range [][]string{args, append(args, "--shard", "0/2"), {"score", dir}, {"report", dir}, append(rbSweep(rbIris, dir, "--seeds", "3"), "--force")} {
		_, stderr, code := plumb(t, cmd...)
		rbOneError(t, code, stderr, 1, dir+" is in use by "+pid+" (plumb score "+dir+" (test holder))", "one writer at a time")
	}
	stdout, stderr, code := plumb(t, "show", dir)
	if code != 0 || !strings.Contains(stderr, "plumb: warning: "+dir+" is being written by "+pid) || !strings.Contains(stdout, "2 of 2 runs done") {
		t.Errorf("show beside a writer: exit %d\n%s\n%s", code, stdout, stderr)
	}
	held.Release()
	if after := rbSnapshot(t, dir); !rbSameSnapshot(before, after) {
		t.Errorf("refused writers changed the study")
	}
	// A running shard: shards of the same plan share the study, others
	// are refused.
	shard0, err := sweep.LockStudy(dir, sweep.Shard{Index: 0, Count: 2}, false, "plumb sweep --shard 0/2 (test holder)")
	if err != nil {
		t.Fatal(err)
	}
	defer shard0.Release()
	if _, stderr, code := plumb(t, append(args, "--shard", "1/2")...); code != 0 {
		t.Errorf("shard 1/2 beside shard 0/2: exit %d %s", code, stderr)
	}
	_, stderr, code = plumb(t, append(args, "--shard", "0/2")...)
	rbOneError(t, code, stderr, 1, "in use by "+pid+" (plumb sweep --shard 0/2 (test holder)) (the same shard)")
	_, stderr, code = plumb(t, append(args, "--shard", "0/3")...)
	rbOneError(t, code, stderr, 1, "in use by "+pid, "a shard of another split")
	_, stderr, code = plumb(t, append(rbSweep(rbIris, dir, "--seeds", "3"), "--shard", "1/2")...)
	rbOneError(t, code, stderr, 1, "another plan")
	_, stderr, code = plumb(t, "score", dir)
	rbOneError(t, code, stderr, 1, "in use by "+pid+" (plumb sweep --shard 0/2 (test holder))")
}

func itoa(i int) string { b, _ := json.Marshal(i); return string(b) }

// TestStaleScores: shard 0/2 swept and scored, then shard 1/2 swept
// without scoring: the score tables cover 2 of the 4 finished runs, and
// show, report and check say so instead of presenting them; the plain
// sweep then rescores. Every score table records the runs it covers.
func TestStaleScores(t *testing.T) {
	tmp := t.TempDir()
	dir := filepath.Join(tmp, "study")
	args := rbSweep(rbIris, dir, "--seeds", "2", "--perplexity", "5,10")
	if _, stderr, code := plumb(t, append(args, "--shard", "0/2")...); code != 0 {
		t.Fatalf("shard 0/2: %d %s", code, stderr)
	}
	if _, stderr, code := plumb(t, "score", dir); code != 0 || !strings.Contains(stderr, "2 of 4 planned runs are not finished") {
		t.Fatalf("score of half the runs: %d %s", code, stderr)
	}
	for _, f := range []string{"runs", "settings", "points", "pairs"} {
		m, _, err := parquetio.ReadMeta(filepath.Join(dir, "scores", f+".parquet"))
		if err != nil || !strings.HasPrefix(m[sweep.MetaCovers], "2:") {
			t.Errorf("scores/%s.parquet: %s = %q (%v), want 2:HASH", f, sweep.MetaCovers, m[sweep.MetaCovers], err)
		}
	}
	if _, stderr, code := plumb(t, append(args, "--shard", "1/2", "--no-score")...); code != 0 {
		t.Fatalf("shard 1/2: %d %s", code, stderr)
	}
	so, problem := lfShow(t, dir)
	if so.Scored || so.Done != 4 || problem != "scores cover 2 of 4 finished runs" {
		t.Errorf("show --json: scored=%v done=%d problem=%q, want not scored, 4 done, scores cover 2 of 4 finished runs", so.Scored, so.Done, problem)
	}
	stdout, _, _ := plumb(t, "show", dir)
	if !strings.Contains(stdout, "not scored: scores cover 2 of 4 finished runs (run plumb score "+dir+")") {
		t.Errorf("show:\n%s", stdout)
	}
	_, stderr, code := plumb(t, "report", dir)
	rbOneError(t, code, stderr, 1, "scores cover 2 of 4 finished runs")
	if !strings.Contains(stderr, "plumb: hint: run: plumb score "+dir) {
		t.Errorf("report: no hint to score:\n%s", stderr)
	}
	_, stderr, code = plumb(t, "check", "--baseline", dir, dir)
	rbOneError(t, code, stderr, 2, "scores cover 2 of 4 finished runs")
	// The plain sweep rescores.
	_, stderr, code = plumb(t, append(args, "--quiet=false")...)
	if code != 0 || !strings.Contains(stderr, "plumb: scoring") {
		t.Errorf("plain sweep did not rescore: %d\n%s", code, stderr)
	}
	if so, problem = lfShow(t, dir); !so.Scored || problem != "" {
		t.Errorf("after rescoring: scored=%v problem=%q", so.Scored, problem)
	}
	// A run redone since the scoring (same count, other record).
	rec := filepath.Join(dir, "records")
	m, _ := filepath.Glob(filepath.Join(rec, "*.json"))
	b, _ := os.ReadFile(m[0])
	var r map[string]any
	json.Unmarshal(b, &r)
	r["iterations_done"] = 29.0
	b, _ = json.Marshal(r)
	os.WriteFile(m[0], b, 0o644)
	if _, problem = lfShow(t, dir); problem != "scores cover 4 runs, but finished runs were redone since" {
		t.Errorf("after a record changed: problem %q", problem)
	}
	_, stderr, code = plumb(t, append(args, "--quiet=false")...)
	if code != 0 || !strings.Contains(stderr, "plumb: scoring") {
		t.Errorf("sweep did not rescore after a run changed: %d\n%s", code, stderr)
	}
	_, stderr, _ = plumb(t, append(args, "--quiet=false")...)
	if !strings.Contains(stderr, "nothing new to score (scores at k=15 cover every finished run)") {
		t.Errorf("up-to-date sweep:\n%s", stderr)
	}
}

// TestUserFilesNeverClobbered: plumb never overwrites or removes a file it
// did not write.
func TestUserFilesNeverClobbered(t *testing.T) {
	tmp := t.TempDir()
	data := filepath.Join(tmp, "d.csv")
	orig, _ := os.ReadFile(rbIris)
	os.WriteFile(data, orig, 0o644)
	link := filepath.Join(tmp, "link.csv")
	os.Symlink(data, link)
	mine := filepath.Join(tmp, "mine.csv")
	os.WriteFile(mine, []byte("my,own\n1,2\n"), 0o644)
	// embed: --out is the input, a link to it, or a user file.
	for _, c := range []struct{ out, want string }{
		{data, "is the input file"}, {link, "is the input file"}, {mine, "was not written by plumb embed"},
	} {
		_, stderr, code := plumb(t, rbEmbed(data, c.out)...)
		rbOneError(t, code, stderr, 1, "--out "+c.out, c.want)
	}
	if b, _ := os.ReadFile(data); string(b) != string(orig) {
		t.Errorf("embed overwrote its input")
	}
	if b, _ := os.ReadFile(mine); string(b) != "my,own\n1,2\n" {
		t.Errorf("embed overwrote a user file")
	}
	// A layout plumb wrote may be rewritten.
	lay := filepath.Join(tmp, "layout.csv")
	for i := 0; i < 2; i++ {
		if _, stderr, code := plumb(t, rbEmbed(data, lay)...); code != 0 {
			t.Fatalf("embed #%d: %d %s", i, code, stderr)
		}
	}
	layPq := filepath.Join(tmp, "layout.parquet")
	for i := 0; i < 2; i++ {
		if _, stderr, code := plumb(t, rbEmbed(data, layPq)...); code != 0 {
			t.Fatalf("embed parquet #%d: %d %s", i, code, stderr)
		}
	}

	// report --out: a directory holding someone's index.html is refused.
	study := filepath.Join(tmp, "study")
	if _, stderr, code := plumb(t, rbSweep(data, study, "--seeds", "2")...); code != 0 {
		t.Fatalf("sweep: %d %s", code, stderr)
	}
	site := filepath.Join(tmp, "site")
	os.MkdirAll(site, 0o755)
	os.WriteFile(filepath.Join(site, "index.html"), []byte("<p>my page</p>"), 0o644)
	os.WriteFile(filepath.Join(site, "methods.md"), []byte("my methods"), 0o644)
	_, stderr, code := plumb(t, "report", "--out", site, study)
	rbOneError(t, code, stderr, 1, site+" holds files plumb did not write")
	if b, _ := os.ReadFile(filepath.Join(site, "index.html")); string(b) != "<p>my page</p>" {
		t.Errorf("report overwrote a user's index.html")
	}
	fresh := filepath.Join(tmp, "fresh")
	for i := 0; i < 2; i++ { // a new directory, then the one it made
		if _, stderr, code := plumb(t, "report", "--out", fresh, study); code != 0 {
			t.Fatalf("report #%d into its own directory: %d %s", i, code, stderr)
		}
	}

	// sweep --force on a directory that is not a study.
	notStudy := filepath.Join(tmp, "notstudy")
	os.MkdirAll(filepath.Join(notStudy, "records"), 0o755)
	os.MkdirAll(filepath.Join(notStudy, "scores"), 0o755)
	os.WriteFile(filepath.Join(notStudy, "records", "notes.json"), []byte(`{"mine":1}`), 0o644)
	os.WriteFile(filepath.Join(notStudy, "scores", "table.csv"), []byte("a,b"), 0o644)
	snap := rbSnapshot(t, notStudy)
	_, stderr, code = plumb(t, append(rbSweep(data, notStudy), "--force")...)
	rbOneError(t, code, stderr, 1, "holds no study.json")
	if !rbSameSnapshot(snap, rbSnapshot(t, notStudy)) {
		t.Errorf("sweep --force changed a directory that is no study")
	}
	// A directory holding only runs.parquet and records/ is no study.
	onlyRuns := filepath.Join(tmp, "onlyruns")
	os.MkdirAll(filepath.Join(onlyRuns, "records"), 0o755)
	rb, _ := os.ReadFile(filepath.Join(study, "runs.parquet"))
	os.WriteFile(filepath.Join(onlyRuns, "runs.parquet"), rb, 0o644)
	snap = rbSnapshot(t, onlyRuns)
	_, stderr, code = plumb(t, rbSweep(data, onlyRuns)...)
	rbOneError(t, code, stderr, 1, "holds no study.json")
	if !rbSameSnapshot(snap, rbSnapshot(t, onlyRuns)) {
		t.Errorf("sweep changed a directory holding only runs.parquet and records/")
	}
	// --force in a real study removes only plumb's files of the old plan.
	os.WriteFile(filepath.Join(study, "records", "notes.json"), []byte(`{"mine":1}`), 0o644)
	os.WriteFile(filepath.Join(study, "records", "0123456789-1.json"), []byte(`{"mine":2}`), 0o644)
	os.WriteFile(filepath.Join(study, "scores", "mine.parquet"), []byte("not parquet"), 0o644)
	if _, stderr, code := plumb(t, append(rbSweep(data, study, "--seeds", "3", "--perplexity", "7"), "--force")...); code != 0 {
		t.Fatalf("sweep --force: %d %s", code, stderr)
	}
	for _, f := range []string{"records/notes.json", "records/0123456789-1.json", "scores/mine.parquet"} {
		if _, err := os.Stat(filepath.Join(study, f)); err != nil {
			t.Errorf("sweep --force removed the user's %s", f)
		}
	}
	if m, _ := filepath.Glob(filepath.Join(study, "layouts", "*.parquet")); len(m) != 3 {
		t.Errorf("after --force: %d layouts, want the new plan's 3 (the old plan's removed)", len(m))
	}
}

// TestNumericFlagRanges: numeric flags are checked against their real range
// before any work: k against n (also 2^62, which wrapped past the check),
// the default k on a small input before the runs, jobs and threads.
func TestNumericFlagRanges(t *testing.T) {
	tmp := t.TempDir()
	dir := filepath.Join(tmp, "study")
	if _, stderr, code := plumb(t, rbSweep(rbIris, dir, "--seeds", "2")...); code != 0 {
		t.Fatalf("sweep: %d %s", code, stderr)
	}
	for _, k := range []string{"4611686018427387904", "75"} { // 2^62; n/2 for iris's 150 points
		_, stderr, code := plumb(t, "score", dir, "-k", k)
		rbOneError(t, code, stderr, 1, "--k: k = "+k+" is too large for 150 points: k must be below n/2, so at most 74")
	}
	// 29 points with the default k = 15: refused before any run.
	small := rbVariant(t, tmp, "small.csv", func(l []string) []string { return l[:30] })
	out := filepath.Join(tmp, "small")
	_, stderr, code := plumb(t, rbSweep(small, out, "--perplexity", "3")...)
	rbOneError(t, code, stderr, 1, "--k: k = 15 is too large for 29 points", "at most 14", "checked before the runs")
	if !strings.Contains(stderr, "plumb: hint: pass --k 14 or smaller, or --no-score") {
		t.Errorf("no hint:\n%s", stderr)
	}
	rbNothingIn(t, out)
	if _, stderr, code := plumb(t, rbSweep(small, out, "--perplexity", "3", "--k", "14")...); code != 0 {
		t.Errorf("with --k 14: %d %s", code, stderr)
	}
	for _, f := range []string{"--jobs", "--threads"} {
		out := filepath.Join(tmp, "j"+f)
		_, stderr, code := plumb(t, append(rbSweep(rbIris, out), f, "4611686018427387904")...)
		rbOneError(t, code, stderr, 1, f+" 4611686018427387904: must be 0 (automatic) or 1..4096")
		rbNothingIn(t, out)
	}
	_, stderr, code = plumb(t, "report", "--auc-tolerance", "+Inf", dir)
	rbOneError(t, code, stderr, 1, "--auc-tolerance +Inf: must be positive")
}

// TestDamagedDerivedFiles: a truncated runs.parquet makes show, report and
// check say that `plumb score` rebuilds it (and it does); a deleted record
// is not dropped silently by score; an input changed since the sweep gets a
// hint score can follow; a report's leftover temporary files are removed by
// the next report.
func TestDamagedDerivedFiles(t *testing.T) {
	tmp := t.TempDir()
	data := filepath.Join(tmp, "d.csv")
	orig, _ := os.ReadFile(rbIris)
	os.WriteFile(data, orig, 0o644)
	dir := filepath.Join(tmp, "study")
	if _, stderr, code := plumb(t, rbSweep(data, dir, "--seeds", "3")...); code != 0 {
		t.Fatalf("sweep: %d %s", code, stderr)
	}
	runs := filepath.Join(dir, "runs.parquet")
	b, _ := os.ReadFile(runs)
	os.WriteFile(runs, b[:len(b)/2], 0o644)
	for _, cmd := range [][]string{{"show", dir}, {"report", dir}, {"check", "--baseline", dir, dir}} {
		_, stderr, code := plumb(t, cmd...)
		rbOneError(t, code, stderr, 0, "runs.parquet")
		if !strings.Contains(stderr, "plumb: hint: run `plumb score "+dir+"`: it rebuilds runs.parquet from records/") {
			t.Errorf("%s: no hint to rebuild:\n%s", cmd[0], stderr)
		}
	}
	if _, stderr, code := plumb(t, "score", dir); code != 0 {
		t.Fatalf("score: %d %s", code, stderr)
	}
	if _, stderr, code := plumb(t, "show", dir); code != 0 {
		t.Errorf("show after score: %d %s", code, stderr)
	}
	// A deleted record: score says which run it leaves out.
	m, _ := filepath.Glob(filepath.Join(dir, "records", "*.json"))
	os.Remove(m[1])
	id := strings.TrimSuffix(filepath.Base(m[1]), ".json")
	_, stderr, code := plumb(t, "score", dir)
	if code != 0 || !strings.Contains(stderr, "plumb: warning: 1 of 3 planned runs are not finished (no valid record: "+id+") and are not scored") ||
		!strings.Contains(stderr, "scored 2 runs") {
		t.Errorf("score with a deleted record: %d\n%s", code, stderr)
	}
	// Report temporary files left by a killed report.
	rep := filepath.Join(dir, "report")
	if _, stderr, code := plumb(t, "report", dir); code != 0 {
		t.Fatalf("report: %d %s", code, stderr)
	}
	left := []string{filepath.Join(rep, ".index.html.tmp-1"), filepath.Join(rep, "figures", ".layouts.svg.tmp-2")}
	for _, f := range left {
		os.WriteFile(f, []byte("<svg"), 0o644)
	}
	if _, stderr, code := plumb(t, "report", dir); code != 0 {
		t.Fatalf("report: %d %s", code, stderr)
	}
	rbNoTemps(t, rep)
	// The input changed since the sweep.
	os.WriteFile(data, []byte(strings.Replace(string(orig), "5.1", "5.2", 1)), 0o644)
	_, stderr, code = plumb(t, "score", dir)
	rbOneError(t, code, stderr, 1, "was made from other input data", "the file changed since the sweep")
	if strings.Contains(stderr, "--force") || strings.Contains(stderr, "--out") || !strings.Contains(stderr, "plumb: hint: pass the study's original data with --input") {
		t.Errorf("score's hint names flags score does not have, or none:\n%s", stderr)
	}
}
