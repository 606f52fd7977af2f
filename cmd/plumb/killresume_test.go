package main

// Kill and resume (issue 7): the real binary is started on a small sweep,
// SIGKILLed at several points, resumed each time, and the study is then
// compared with an uninterrupted sweep. SIGINT must stop cleanly.

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"syscall"
	"testing"
	"time"

	"plumb/internal/parquetio"
	"plumb/internal/words"
	"plumb/sweep"
)

// krBuild builds the plumb binary into a temporary directory.
func krBuild(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "plumb")
	cmd := exec.Command("go", "build", "-o", bin, ".")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// krArgs: iris (testdata/iris.csv, Fisher's iris via scikit-learn's copy),
// 2 perplexities × 2 exaggerations × 3 seeds = 12 short runs, two jobs.
func krArgs(out string, extra ...string) []string {
	return append([]string{"sweep", "--input", rbIris, "--id-column", "id", "--label-column", "species", "--out", out,
		"--perplexity", "5,20", "--exaggeration", "4,12", "--init", "random", "--seeds", "3",
		"--iters", "250", "--exaggeration-iters", "50", "--jobs", "2", "--threads", "1"}, extra...)
}

const krRuns = 12

// krLayouts counts the finished layout files (temporary files excluded).
func krLayouts(dir string) int {
	m, _ := filepath.Glob(filepath.Join(dir, "layouts", "*.parquet"))
	return len(m)
}

// krStart starts the binary; stderr lines are sent on the returned channel,
// which is closed when stderr ends.
func krStart(t *testing.T, bin string, args []string) (*exec.Cmd, <-chan string, *bytes.Buffer) {
	t.Helper()
	cmd := exec.Command(bin, args...)
	pr, err := cmd.StderrPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	lines := make(chan string, 1024)
	all := &bytes.Buffer{}
	go func() {
		sc := bufio.NewScanner(pr)
		for sc.Scan() {
			lines <- sc.Text()
		}
		close(lines)
	}()
	return cmd, lines, all
}

// krDrain collects the remaining stderr lines and waits for the process.
func krDrain(cmd *exec.Cmd, lines <-chan string, all *bytes.Buffer) error {
	for l := range lines {
		all.WriteString(l + "\n")
	}
	return cmd.Wait()
}

// krUntil polls until cond holds or the process ends; it reports whether
// cond held while the process was still running.
func krUntil(lines <-chan string, all *bytes.Buffer, cond func(line string) bool) bool {
	for {
		select {
		case l, ok := <-lines:
			if !ok {
				return false
			}
			all.WriteString(l + "\n")
			if cond(l) {
				return true
			}
		case <-time.After(time.Millisecond):
			if cond("") {
				return true
			}
		}
	}
}

// krFileID identifies one version of a file: a rewrite (temp + rename)
// gives a new inode.
type krFileID struct {
	ino   uint64
	mtime int64
}

func krFinished(t *testing.T, dir string) map[string]krFileID {
	t.Helper()
	m := map[string]krFileID{}
	files, _ := filepath.Glob(filepath.Join(dir, "layouts", "*.parquet"))
	for _, f := range files {
		fi, err := os.Stat(f)
		if err != nil {
			continue
		}
		m[filepath.Base(f)] = krFileID{fi.Sys().(*syscall.Stat_t).Ino, fi.ModTime().UnixNano()}
	}
	return m
}

// krTemps lists temporary files of atomic writes (".NAME.tmp-*") under dir.
func krTemps(dir string) []string {
	var out []string
	filepath.Walk(dir, func(p string, fi os.FileInfo, err error) error {
		if err == nil && !fi.IsDir() && strings.HasPrefix(fi.Name(), ".") && strings.Contains(fi.Name(), ".tmp-") {
			rel, _ := filepath.Rel(dir, p)
			out = append(out, rel)
		}
		return nil
	})
	sort.Strings(out)
	return out
}

// krCheckFiles decodes every Parquet file (parquetio.Read) and every JSON file
// under dir; a partial or corrupt file fails the test.
func krCheckFiles(t *testing.T, dir string) {
	t.Helper()
	filepath.Walk(dir, func(p string, fi os.FileInfo, err error) error {
		if err != nil || fi.IsDir() || strings.Contains(fi.Name(), ".tmp-") {
			return nil
		}
		switch filepath.Ext(p) {
		case ".parquet":
			if _, err := parquetio.Read(p); err != nil {
				t.Errorf("corrupt file after kill: %v", err)
			}
		case ".json":
			b, _ := os.ReadFile(p)
			if !json.Valid(b) {
				t.Errorf("corrupt JSON after kill: %s", p)
			}
		}
		return nil
	})
}

// krStudy decodes a study for comparison: every table's columns by file,
// with timing columns (seconds) and time stamps dropped.
func krStudy(t *testing.T, dir string) map[string]map[string]any {
	t.Helper()
	out := map[string]map[string]any{}
	filepath.Walk(dir, func(p string, fi os.FileInfo, err error) error {
		if err != nil || fi.IsDir() || strings.HasPrefix(fi.Name(), ".") {
			return nil
		}
		rel, _ := filepath.Rel(dir, p)
		switch filepath.Ext(p) {
		case ".parquet":
			tb, err := parquetio.Read(p)
			if err != nil {
				t.Errorf("%s: %v", rel, err)
				return nil
			}
			cols := map[string]any{}
			for _, c := range tb.Columns {
				if c.Name == "seconds" {
					continue
				}
				if f, ok := c.Values.([]float64); ok {
					bits := make([]uint64, len(f))
					for i, v := range f {
						bits[i] = math.Float64bits(v)
					}
					cols[c.Name] = bits
				} else {
					cols[c.Name] = c.Values
				}
				if c.Valid != nil {
					cols[c.Name+"/valid"] = c.Valid
				}
			}
			for k, v := range tb.Meta {
				cols["meta:"+k] = v
			}
			out[rel] = cols
		case ".json":
			var v map[string]any
			b, _ := os.ReadFile(p)
			if err := json.Unmarshal(b, &v); err != nil {
				t.Errorf("%s: %v", rel, err)
				return nil
			}
			delete(v, "seconds")
			delete(v, "created")
			out[rel] = v
		}
		return nil
	})
	return out
}

// krCompare reports every difference between two decoded studies.
func krCompare(t *testing.T, want, got map[string]map[string]any) {
	t.Helper()
	for f, wc := range want {
		gc, ok := got[f]
		if !ok {
			t.Errorf("missing %s", f)
			continue
		}
		for k, wv := range wc {
			if !reflect.DeepEqual(wv, gc[k]) {
				t.Errorf("%s: %s differs from the uninterrupted sweep", f, k)
			}
		}
		if len(gc) != len(wc) {
			t.Errorf("%s: %d columns/fields, want %d", f, len(gc), len(wc))
		}
	}
	for f := range got {
		if _, ok := want[f]; !ok {
			t.Errorf("extra file %s", f)
		}
	}
}

func TestKillResume(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the binary")
	}
	bin := krBuild(t)
	tmp := t.TempDir()

	// The uninterrupted sweep.
	ref := filepath.Join(tmp, "ref")
	if out, err := exec.Command(bin, krArgs(ref)...).CombinedOutput(); err != nil {
		t.Fatalf("reference sweep: %v\n%s", err, out)
	}
	want := krStudy(t, ref)
	if krLayouts(ref) != krRuns || len(want) == 0 {
		t.Fatalf("reference sweep: %d layouts", krLayouts(ref))
	}

	dir := filepath.Join(tmp, "killed")
	seenTemps := map[string]bool{}
	prev := map[string]krFileID{}
	// SIGKILL once 1, 3 and 6 runs have been written, and once scoring
	// has started; resume after each.
	for _, at := range []int{1, 3, 6, -1} {
		cmd, lines, all := krStart(t, bin, krArgs(dir))
		hit := krUntil(lines, all, func(l string) bool {
			if at < 0 {
				return strings.HasPrefix(l, "plumb: scoring")
			}
			return krLayouts(dir) >= at
		})
		if hit {
			cmd.Process.Signal(syscall.SIGKILL)
		}
		err := krDrain(cmd, lines, all)
		if hit && err == nil {
			t.Logf("kill at %d: the process had already finished", at)
		}
		if !hit {
			t.Errorf("kill at %d: the sweep ended before the kill point (exit %v)\n%s", at, err, all)
		}
		// Nothing finished before the kill was redone by this pass.
		now := krFinished(t, dir)
		for f, id := range prev {
			if now[f] != id {
				t.Errorf("kill at %d: layout %s was rewritten (a finished run ran again or was lost)", at, f)
			}
		}
		prev = now
		if at > 0 && len(now) < at {
			t.Errorf("kill at %d: only %d layouts", at, len(now))
		}
		krCheckFiles(t, dir)
		for _, f := range krTemps(dir) {
			seenTemps[f] = true
		}
		t.Logf("killed at %d: %d layouts, temporary files %v", at, len(now), krTemps(dir))
	}
	// Resume to the end.
	out, err := exec.Command(bin, krArgs(dir)...).CombinedOutput()
	if err != nil {
		t.Fatalf("final resume: %v\n%s", err, out)
	}
	finished := len(prev)
	if wantLine := fmt.Sprintf("%s done, 0 failed, %d already finished", words.Count(krRuns-finished, "run"), finished); !strings.Contains(string(out), wantLine) {
		t.Errorf("final resume lacks %q:\n%s", wantLine, out)
	}
	for f, id := range prev {
		if krFinished(t, dir)[f] != id {
			t.Errorf("final resume rewrote finished layout %s", f)
		}
	}
	krCheckFiles(t, dir)
	krCompare(t, want, krStudy(t, dir))
	// Readers ignore temporary files: show and score read the study.
	if _, stderr, code := plumb(t, "show", dir); code != 0 {
		t.Errorf("show after resume: exit %d %s", code, stderr)
	}

	// runs.parquet lists each run once, done.
	tb, err := parquetio.Read(filepath.Join(dir, "runs.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	ids, _ := tb.String("run_id")
	status, _ := tb.String("status")
	seen := map[string]int{}
	for i, id := range ids {
		seen[id]++
		if status[i] != "done" {
			t.Errorf("run %s: status %s", id, status[i])
		}
	}
	if len(seen) != krRuns || len(ids) != krRuns {
		t.Errorf("runs.parquet: %d rows, %d distinct runs, want %d", len(ids), len(seen), krRuns)
	}
	// Last: temporary files a kill left must be gone after the resume.
	if left := krTemps(dir); len(left) > 0 {
		var perRun []string
		for _, f := range left {
			if strings.HasPrefix(f, "layouts/") || strings.HasPrefix(f, "traces/") || strings.HasPrefix(f, "records/") {
				perRun = append(perRun, f)
			}
		}
		if len(perRun) > 0 {
			t.Errorf("per-run temporary files left after the resume: %v", perRun)
		}
		// The final resume is unsharded, the study's only writer, so it
		// removes study-level temporary files of any age too.
		t.Errorf("temporary files left after the final (unsharded) resume: %v", left)
	}
}

// TestInterruptResume: SIGINT (Ctrl-C) and SIGTERM (what schedulers such
// as Slurm and Kubernetes send first) stop the sweep cleanly — exit 130, one error
// line saying what was kept, a hint, no panic — keeps the finished runs and
// a resume completes the same study as an uninterrupted sweep.
func TestInterruptResume(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the binary")
	}
	bin := krBuild(t)
	tmp := t.TempDir()
	ref := filepath.Join(tmp, "ref")
	if out, err := exec.Command(bin, krArgs(ref, "--no-score")...).CombinedOutput(); err != nil {
		t.Fatalf("reference sweep: %v\n%s", err, out)
	}
	want := krStudy(t, ref)
	for _, sig := range []os.Signal{os.Interrupt, syscall.SIGTERM} {
		t.Run(sig.String(), func(t *testing.T) {
			krInterrupt(t, bin, filepath.Join(tmp, "int-"+strings.ReplaceAll(sig.String(), " ", "-")), sig, want)
		})
	}
}

// krInterrupt stops a sweep into dir with sig after two runs were written,
// checks the clean stop, resumes and compares the study with want.
func krInterrupt(t *testing.T, bin, dir string, sig os.Signal, want map[string]map[string]any) {
	cmd, lines, all := krStart(t, bin, krArgs(dir, "--no-score"))
	hit := krUntil(lines, all, func(string) bool { return krLayouts(dir) >= 2 })
	if !hit {
		t.Fatalf("the sweep ended before 2 runs were written:\n%s", all)
	}
	cmd.Process.Signal(sig)
	err := krDrain(cmd, lines, all)
	stderr := all.String()
	code := cmd.ProcessState.ExitCode()
	if err == nil || code != 130 {
		t.Errorf("%v: exit %d (%v), want 130\n%s", sig, code, err, stderr)
	}
	if strings.Contains(stderr, "panic") || strings.Contains(stderr, "goroutine ") {
		t.Errorf("panic trace:\n%s", stderr)
	}
	if strings.Count(stderr, "plumb: error: ") != 1 || !strings.Contains(stderr, "plumb: error: interrupted: ") ||
		!strings.Contains(stderr, "plumb: hint: run the same command again to resume") {
		t.Errorf("%v message:\n%s", sig, stderr)
	}
	kept := krFinished(t, dir)
	if len(kept) < 2 || len(kept) == krRuns {
		t.Errorf("%v kept %d layouts, want 2..%d", sig, len(kept), krRuns-1)
	}
	krCheckFiles(t, dir)
	if left := krTemps(dir); len(left) > 0 {
		t.Errorf("a clean stop left temporary files: %v", left)
	}
	// Records of the kept runs exist; runs.parquet (written on the way out)
	// lists exactly them.
	tb, err := parquetio.Read(filepath.Join(dir, "runs.parquet"))
	if err != nil {
		t.Errorf("runs.parquet after %v: %v", sig, err)
	} else if tb.Rows() != len(kept) {
		t.Errorf("runs.parquet after %v: %d rows, %d layouts", sig, tb.Rows(), len(kept))
	}
	out, err := exec.Command(bin, krArgs(dir, "--no-score")...).CombinedOutput()
	if err != nil {
		t.Fatalf("resume: %v\n%s", err, out)
	}
	if w := fmt.Sprintf("%d already finished", len(kept)); !strings.Contains(string(out), w) {
		t.Errorf("resume lacks %q:\n%s", w, out)
	}
	for f, id := range kept {
		if krFinished(t, dir)[f] != id {
			t.Errorf("resume rewrote kept layout %s", f)
		}
	}
	krCompare(t, want, krStudy(t, dir))
}

// TestResumeCleansStudyTemps plants the temporary files a kill during a
// study-level write leaves (atomicfile writes ".NAME.tmp-RANDOM" beside NAME, see
// internal/atomicfile/atomicfile.go) and checks that readers ignore them and who removes
// them (the rule of sweep/study.go cleanStudyTemps): only a process that
// holds the study exclusively (sweep/lock.go) — an unsharded sweep,
// `plumb score`, or a shard that found every run finished and got the
// study to itself — and then whatever their age, since no other writer can
// be at work. A shard that shares the study with another running shard
// leaves them alone.
func TestResumeCleansStudyTemps(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	args := rbSweep(rbIris, dir, "--seeds", "2")
	if _, stderr, code := plumb(t, args...); code != 0 {
		t.Fatalf("sweep: %d %s", code, stderr)
	}
	planted := []string{".runs.parquet.tmp-1", ".study.json.tmp-2", "scores/.settings.parquet.tmp-3", "scores/.pairs.parquet.tmp-4"}
	plant := func() {
		t.Helper()
		for _, f := range planted {
			if err := os.WriteFile(filepath.Join(dir, f), []byte("PAR1 partial"), 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
	plant()
	if _, stderr, code := plumb(t, "show", dir); code != 0 {
		t.Errorf("show with temporary files present: exit %d %s", code, stderr)
	}
	// Shard 0/2 is running (holds its lock): shard 1/2 shares the study
	// and leaves the shared files, and their temporary files, alone.
	other, err := sweep.LockStudy(dir, sweep.Shard{Index: 0, Count: 2}, false, "plumb sweep --shard 0/2 (test)")
	if err != nil {
		t.Fatal(err)
	}
	_, stderr, code := plumb(t, append(args, "--shard", "1/2", "--quiet=false")...)
	other.Release()
	if code != 0 || !strings.Contains(stderr, "other processes still hold the study") {
		t.Fatalf("resume of shard 1/2 beside shard 0/2: %d %s", code, stderr)
	}
	if left := krTemps(dir); len(left) != len(planted) {
		t.Errorf("a shard sharing the study removed temporary files (another process's writes may be in progress): left %v", left)
	}
	// score holds the study alone: removes them.
	if _, stderr, code := plumb(t, "score", dir); code != 0 {
		t.Fatalf("score: %d %s", code, stderr)
	}
	if left := krTemps(dir); len(left) > 0 {
		t.Errorf("score left temporary files: %v", left)
	}
	// A shard alone, with every run finished, takes the study to itself.
	plant()
	if _, stderr, code := plumb(t, append(args, "--shard", "0/2")...); code != 0 {
		t.Fatalf("resume of shard 0/2: %d %s", code, stderr)
	}
	if left := krTemps(dir); len(left) > 0 {
		t.Errorf("a shard with the study to itself left temporary files: %v", left)
	}
	plant()
	if _, stderr, code := plumb(t, args...); code != 0 {
		t.Fatalf("resume: %d %s", code, stderr)
	}
	if left := krTemps(dir); len(left) > 0 {
		t.Errorf("the unsharded resume left temporary files: %v", left)
	}
}

// TestScoreKilledBetweenTables: `plumb score` writes its four tables one
// after another (scores/runs, settings, points, pairs), each atomically. A
// kill after settings.parquet was renamed but before points.parquet leaves
// new runs/settings tables (k=7) beside old points/pairs tables (k=15).
// The study must not then pass for one scored with k=7: readers should see
// it as not (consistently) scored, so that the user rescores.
func TestScoreKilledBetweenTables(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	if _, stderr, code := plumb(t, rbSweep(rbIris, dir, "--seeds", "3")...); code != 0 {
		t.Fatalf("sweep: %d %s", code, stderr)
	}
	old := map[string][]byte{}
	for _, f := range []string{"points.parquet", "pairs.parquet"} {
		b, err := os.ReadFile(filepath.Join(dir, "scores", f))
		if err != nil {
			t.Fatal(err)
		}
		old[f] = b
	}
	if _, stderr, code := plumb(t, "score", dir, "--k", "7"); code != 0 {
		t.Fatalf("score: %d %s", code, stderr)
	}
	for f, b := range old { // what a kill between the renames leaves
		if err := os.WriteFile(filepath.Join(dir, "scores", f), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	for _, f := range []string{"runs.parquet", "settings.parquet", "points.parquet", "pairs.parquet"} {
		m, _, err := parquetio.ReadMeta(filepath.Join(dir, "scores", f))
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("scores/%s: plumb.k = %s", f, m["plumb.k"])
	}
	stdout, stderr, code := plumb(t, "show", dir, "--json")
	if code != 0 {
		t.Fatalf("show --json: exit %d %s", code, stderr)
	}
	var so showOut
	if err := json.Unmarshal([]byte(stdout), &so); err != nil {
		t.Fatalf("show --json: %v", err)
	}
	var extra struct {
		Problem string `json:"scores_problem"`
	}
	json.Unmarshal([]byte(stdout), &extra)
	if so.Scored || !strings.Contains(extra.Problem, "k=7") || !strings.Contains(extra.Problem, "k=15") {
		t.Errorf("show --json: scored=%v k=%d scores_problem=%q, want not scored and a problem naming k=7 and k=15", so.Scored, so.K, extra.Problem)
	}
	stdout, _, code = plumb(t, "show", dir)
	if code != 0 || !strings.Contains(stdout, "not scored: the score tables mix two scorings") {
		t.Errorf("show: exit %d, first line does not say the tables mix two scorings:\n%s", code, stdout)
	}
	// A sweep of the same plan (all runs finished) must rescore it rather
	// than say the scores are up to date; afterwards all four agree.
	_, stderr, code = plumb(t, append(rbSweep(rbIris, dir, "--seeds", "3"), "--k", "7")...)
	if code != 0 {
		t.Fatalf("sweep again: %d %s", code, stderr)
	}
	for _, f := range []string{"runs.parquet", "settings.parquet", "points.parquet", "pairs.parquet"} {
		m, _, err := parquetio.ReadMeta(filepath.Join(dir, "scores", f))
		if err != nil || m["plumb.k"] != "7" {
			t.Errorf("after the sweep, scores/%s: plumb.k = %q (err %v), want 7", f, m["plumb.k"], err)
		}
	}
	stdout, _, _ = plumb(t, "show", dir, "--json")
	so = showOut{}
	if err := json.Unmarshal([]byte(stdout), &so); err != nil || !so.Scored || so.K != 7 {
		t.Errorf("after rescoring: scored=%v k=%d (err %v), want scored at k=7", so.Scored, so.K, err)
	}
}
