package main

// Issue 19 with real processes: two writers launched at once on one study,
// shards launched at once, a score during a sweep, and SIGINT/SIGTERM in
// the scoring phase and in other commands. Each test is bounded in time
// (lpRun kills a process that outlives lpTimeout). The loops run lpLoops
// times (PLUMB_LONG=1: the long counts).

import (
	"bytes"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"plumb/sweep"
)

const lpTimeout = 2 * time.Minute

// lpLoops returns short unless PLUMB_LONG=1.
func lpLoops(short, long int) int {
	if os.Getenv("PLUMB_LONG") == "1" {
		return long
	}
	return short
}

// lpArgs: iris (testdata/iris.csv, Fisher's iris via scikit-learn's copy),
// 2 perplexities × SEEDS seeds of short runs.
func lpArgs(out, seeds string, extra ...string) []string {
	return append([]string{"sweep", "--input", rbIris, "--id-column", "id", "--label-column", "species", "--out", out,
		"--perplexity", "5,20", "--init", "random", "--seeds", seeds,
		"--iters", "200", "--exaggeration-iters", "50", "--jobs", "1", "--threads", "1", "--quiet"}, extra...)
}

// lpProc is a started process with its stderr.
type lpProc struct {
	cmd    *exec.Cmd
	stderr *bytes.Buffer
	done   chan error
}

func lpStart(t *testing.T, bin string, args ...string) *lpProc {
	t.Helper()
	p := &lpProc{cmd: exec.Command(bin, args...), stderr: &bytes.Buffer{}, done: make(chan error, 1)}
	p.cmd.Stderr = p.stderr
	if err := p.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() { p.done <- p.cmd.Wait() }()
	return p
}

// wait returns the exit code; a process still running after lpTimeout is
// killed and fails the test.
func (p *lpProc) wait(t *testing.T) int {
	t.Helper()
	select {
	case <-p.done:
	case <-time.After(lpTimeout):
		p.cmd.Process.Kill()
		<-p.done
		t.Errorf("%v: still running after %s, killed", p.cmd.Args[1:], lpTimeout)
	}
	return p.cmd.ProcessState.ExitCode()
}

// lpMixed reports what makes a study inconsistent: records of another
// plan than study.json's, or show presenting scores that do not cover the
// finished runs.
func lpMixed(t *testing.T, bin, dir string) string {
	t.Helper()
	info, err := sweep.ReadInfo(dir)
	if err != nil {
		return "study.json: " + err.Error()
	}
	recs, _ := filepath.Glob(filepath.Join(dir, "records", "*.json"))
	for _, f := range recs {
		var r sweep.Record
		b, _ := os.ReadFile(f)
		if json.Unmarshal(b, &r) != nil || r.PlanHash != info.PlanHash {
			return "record " + filepath.Base(f) + " is from plan " + r.PlanHash + ", study.json names " + info.PlanHash
		}
	}
	out, err := exec.Command(bin, "show", dir, "--json").Output()
	if err != nil {
		return "show: " + err.Error()
	}
	var so struct {
		Planned int    `json:"runs_planned"`
		Done    int    `json:"runs_done"`
		Scored  bool   `json:"scored"`
		Problem string `json:"scores_problem"`
	}
	json.Unmarshal(out, &so)
	if so.Done != so.Planned || !so.Scored || so.Problem != "" {
		return "show: " + string(out)
	}
	return ""
}

// TestTwoWritersAtOnce: two sweeps of different plans launched at once on
// one empty directory: never both succeed, the refused one names the
// holder (or the other plan), and the study is never mixed. The same plan
// launched twice: one is refused or waits its turn, no run is done twice
// at once (no "rename … no such file"), and the study equals a single
// sweep. A score during a sweep is refused with the sweep's pid.
func TestTwoWritersAtOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the binary")
	}
	bin := krBuild(t)
	tmp := t.TempDir()
	ref := filepath.Join(tmp, "ref")
	if out, err := exec.Command(bin, lpArgs(ref, "1-6")...).CombinedOutput(); err != nil {
		t.Fatalf("reference: %v\n%s", err, out)
	}
	want := krStudy(t, ref)
	loops := lpLoops(3, 20)
	// Each sweep takes over a second (12 runs), longer than a writer waits (0.3 s)
	// for the lock, so the second one meets the first at work.
	refusedBusy, refusedPlan := 0, 0
	for i := 0; i < loops; i++ {
		dir := filepath.Join(tmp, "mixed"+strconv.Itoa(i))
		a := lpStart(t, bin, lpArgs(dir, "1-6")...)
		b := lpStart(t, bin, lpArgs(dir, "1-4")...)
		ca, cb := a.wait(t), b.wait(t)
		if ca == 0 && cb == 0 {
			t.Errorf("launch %d: both writers of different plans exited 0", i)
		}
		for _, x := range []struct {
			p, other *lpProc
			code     int
		}{{a, b, ca}, {b, a, cb}} {
			if x.code == 0 {
				continue
			}
			s := x.p.stderr.String()
			busy := "is in use by pid " + strconv.Itoa(x.other.cmd.Process.Pid) + " (plumb sweep --input"
			switch {
			case strings.Contains(s, busy):
				refusedBusy++
			case strings.Contains(s, "was made from another plan"):
				refusedPlan++
			default:
				t.Errorf("launch %d: refused writer's message names neither the holder nor the plan:\n%s", i, s)
			}
			rbOneError(t, x.code, s, 1)
		}
		if m := lpMixed(t, bin, dir); m != "" && (ca == 0 || cb == 0) {
			t.Errorf("launch %d: inconsistent study: %s", i, m)
		}
	}
	t.Logf("different plans: %d double launches, refused as busy %d, as another plan %d", loops, refusedBusy, refusedPlan)

	samePlanRefused := 0
	for i := 0; i < loops; i++ {
		dir := filepath.Join(tmp, "same"+strconv.Itoa(i))
		a := lpStart(t, bin, lpArgs(dir, "1-6")...)
		b := lpStart(t, bin, lpArgs(dir, "1-6")...)
		ca, cb := a.wait(t), b.wait(t)
		all := a.stderr.String() + b.stderr.String()
		if strings.Contains(all, "no such file") || (ca != 0 && cb != 0) {
			t.Errorf("launch %d: exits %d, %d:\n%s", i, ca, cb, all)
		}
		if ca != 0 || cb != 0 {
			samePlanRefused++
			if !strings.Contains(all, "one writer at a time") {
				t.Errorf("launch %d: the refused one does not say why:\n%s", i, all)
			}
		}
		krCompare(t, want, krStudy(t, dir))
	}
	t.Logf("same plan: %d double launches, %d with the second refused", loops, samePlanRefused)

	// A score while the sweep runs.
	dir := filepath.Join(tmp, "scoring")
	s := lpStart(t, bin, lpArgs(dir, "1-30")...) // 60 runs: seconds, time enough for a score to start

	deadline := time.Now().Add(lpTimeout)
	for krLayouts(dir) < 1 && time.Now().Before(deadline) {
		time.Sleep(5 * time.Millisecond)
	}
	out, err := exec.Command(bin, "score", dir).CombinedOutput()
	if err == nil {
		t.Logf("score during the sweep: the sweep had already finished")
	} else {
		code := err.(*exec.ExitError).ExitCode()
		rbOneError(t, code, string(out), 1, "is in use by pid "+strconv.Itoa(s.cmd.Process.Pid)+" (plumb sweep")
	}
	if code := s.wait(t); code != 0 {
		t.Errorf("the sweep beside a refused score: exit %d\n%s", code, s.stderr)
	}
	if m := lpMixed(t, bin, dir); m != "" {
		t.Errorf("after score during sweep: %s", m)
	}
}

// TestShardsAtOnce: the shards of one plan launched at once share the
// study and together equal one process, file for file (timings aside),
// scores included: the last one scores.
func TestShardsAtOnce(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the binary")
	}
	bin := krBuild(t)
	tmp := t.TempDir()
	ref := filepath.Join(tmp, "ref")
	if out, err := exec.Command(bin, lpArgs(ref, "3")...).CombinedOutput(); err != nil {
		t.Fatalf("reference: %v\n%s", err, out)
	}
	want := krStudy(t, ref)
	loops := lpLoops(2, 10)
	for i := 0; i < loops; i++ {
		dir := filepath.Join(tmp, "shards"+strconv.Itoa(i))
		var ps []*lpProc
		for s := 0; s < 3; s++ {
			ps = append(ps, lpStart(t, bin, lpArgs(dir, "3", "--shard", strconv.Itoa(s)+"/3")...))
		}
		for s, p := range ps {
			if code := p.wait(t); code != 0 {
				t.Errorf("launch %d: shard %d/3: exit %d\n%s", i, s, code, p.stderr)
			}
		}
		krCompare(t, want, krStudy(t, dir))
	}
	t.Logf("%d launches of 3 shards at once", loops)
}

// TestInterruptEveryPhase: SIGTERM while the sweep scores, SIGINT during
// `plumb score` and during `plumb embed`: exit 130, one "interrupted" line
// and a hint; nothing half-written; the same command then completes.
func TestInterruptEveryPhase(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the binary")
	}
	bin := krBuild(t)
	tmp := t.TempDir()
	dir := filepath.Join(tmp, "study")
	// testdata/digits.csv (UCI optical digits via scikit-learn): scoring
	// 8 runs of 1,797 points (28 pairs) takes about a second even on an
	// idle machine (4 runs took 350 ms there), long enough to be
	// interrupted; the signal goes as soon as scoring starts.
	args := []string{"sweep", "--input", "../../testdata/digits.csv", "--id-column", "id", "--label-column", "digit", "--out", dir,
		"--perplexity", "10", "--init", "random", "--seeds", "8", "--iters", "60", "--exaggeration-iters", "20", "--jobs", "2", "--threads", "1"}
	cmd, lines, all := krStart(t, bin, args)
	if !krUntil(lines, all, func(l string) bool { return strings.HasPrefix(l, "plumb: scoring") }) {
		t.Fatalf("the sweep never reached scoring:\n%s", all)
	}
	time.Sleep(20 * time.Millisecond)
	cmd.Process.Signal(syscall.SIGTERM)
	krDrain(cmd, lines, all)
	if code := cmd.ProcessState.ExitCode(); code != 130 {
		t.Errorf("SIGTERM while scoring: exit %d, want 130\n%s", code, all)
	} else {
		krInterruptLines(t, all.String(), "plumb: error: interrupted: while scoring: all 8 runs are kept; the score tables were not written",
			"plumb: hint: run the same command again to resume")
	}
	rbNoTemps(t, dir)
	out, err := exec.Command(bin, args...).CombinedOutput()
	if err != nil || !strings.Contains(string(out), "8 already finished") || !strings.Contains(string(out), "plumb: scored") {
		t.Errorf("resume after the interrupted scoring: %v\n%s", err, out)
	}

	// plumb score, SIGINT.
	p := lpStart(t, bin, "score", dir)
	time.Sleep(800 * time.Millisecond)
	p.cmd.Process.Signal(os.Interrupt)
	if code := p.wait(t); code == 0 {
		t.Logf("plumb score finished before SIGINT arrived; not checked")
	} else if code != 130 {
		t.Errorf("SIGINT during plumb score: exit %d\n%s", code, p.stderr)
	} else {
		krInterruptLines(t, p.stderr.String(), "plumb: error: interrupted: the score tables were not written", "plumb: hint: run `plumb score")
	}
	rbNoTemps(t, dir)

	// plumb embed, SIGINT.
	lay := filepath.Join(tmp, "layout.parquet")
	p = lpStart(t, bin, "embed", "--input", "../../testdata/digits.csv", "--id-column", "id", "--label-column", "digit",
		"--iters", "5000", "--exaggeration-iters", "100", "--out", lay, "--quiet")
	time.Sleep(1500 * time.Millisecond)
	p.cmd.Process.Signal(os.Interrupt)
	if code := p.wait(t); code != 130 {
		t.Errorf("SIGINT during plumb embed: exit %d\n%s", code, p.stderr)
	} else {
		krInterruptLines(t, p.stderr.String(), "plumb: error: interrupted: no layout was written", "plumb: hint: ")
	}
	rbNothingIn(t, lay)
	rbNoTemps(t, tmp)
}

// krInterruptLines checks the two lines of an interrupted command.
func krInterruptLines(t *testing.T, stderr, errLine, hint string) {
	t.Helper()
	if strings.Count(stderr, "plumb: error: ") != 1 || !strings.Contains(stderr, errLine) || !strings.Contains(stderr, hint) ||
		strings.Contains(stderr, "panic") || strings.Contains(stderr, "context canceled") {
		t.Errorf("want %q and %q, got:\n%s", errLine, hint, stderr)
	}
}
