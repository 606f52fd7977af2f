package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"
)

// lsStatusKB reads a "Name:   N kB" field of /proc/PID/status.
func lsStatusKB(pid int, field string) int {
	b, err := os.ReadFile("/proc/" + strconv.Itoa(pid) + "/status")
	if err != nil {
		return -1
	}
	for _, l := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(l, field+":") {
			f := strings.Fields(l)
			if len(f) >= 2 {
				v, _ := strconv.Atoi(f[1])
				return v
			}
		}
	}
	return -1
}

// lsFDs counts the open file descriptors of pid.
func lsFDs(pid int) int {
	ents, err := os.ReadDir("/proc/" + strconv.Itoa(pid) + "/fd")
	if err != nil {
		return -1
	}
	return len(ents)
}

// TestLongSweep (PLUMB_LONG=1): a 1,000-run sweep of small runs (iris,
// 10 perplexities × 100 seeds, 30 iterations) keeps memory flat and open
// files bounded (issue 7). Peak RSS (VmHWM of /proc/PID/status) is read
// when 100 runs are written and at the end (getrusage of the child,
// ru_maxrss); open descriptors are counted in /proc/PID/fd every 10 ms.
// The bounds — peak RSS at 1,000 runs within 1.25 × that at 100 runs plus
// 16 MiB, at most 32 descriptors — are common practice for "flat" and
// "bounded", not a published figure; the measured numbers are logged.
func TestLongSweep(t *testing.T) {
	if os.Getenv("PLUMB_LONG") != "1" {
		t.Skip("set PLUMB_LONG=1 (a 1,000-run sweep: a few minutes)")
	}
	bin := krBuild(t)
	dir := filepath.Join(t.TempDir(), "study")
	args := []string{"sweep", "--input", rbIris, "--id-column", "id", "--label-column", "species", "--out", dir,
		"--perplexity", "3,6,9,12,15,18,21,24,27,30", "--init", "random", "--seeds", "100",
		"--iters", "30", "--exaggeration-iters", "10", "--no-score", "--quiet"}
	cmd := exec.Command(bin, args...)
	var stderr strings.Builder
	cmd.Stderr = &stderr
	start := time.Now()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	pid := cmd.Process.Pid
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	var (
		hwm100, rss100, maxFD, samples int
		t100                           time.Duration
		err                            error
	)
	tick := time.NewTicker(10 * time.Millisecond)
	defer tick.Stop()
loop:
	for {
		select {
		case err = <-done:
			break loop
		case <-tick.C:
			if n := lsFDs(pid); n > maxFD {
				maxFD = n
			}
			samples++
			if hwm100 == 0 && krLayouts(dir) >= 100 {
				hwm100, rss100 = lsStatusKB(pid, "VmHWM"), lsStatusKB(pid, "VmRSS")
				t100 = time.Since(start)
			}
		}
	}
	elapsed := time.Since(start)
	if err != nil {
		t.Fatalf("sweep: %v\n%s", err, stderr.String())
	}
	maxrss := int(cmd.ProcessState.SysUsage().(*syscall.Rusage).Maxrss) // kB on Linux
	n := krLayouts(dir)
	t.Logf("1,000-run sweep: %d layouts in %s (100 runs after %s)", n, elapsed.Round(time.Millisecond), t100.Round(time.Millisecond))
	t.Logf("peak RSS at 100 runs: %d kB (current RSS %d kB); peak RSS at 1,000 runs: %d kB (getrusage ru_maxrss)", hwm100, rss100, maxrss)
	t.Logf("open file descriptors: at most %d over %d samples", maxFD, samples)
	if n != 1000 {
		t.Errorf("%d layouts, want 1000", n)
	}
	if hwm100 <= 0 {
		t.Fatalf("never sampled the process at 100 runs")
	}
	if float64(maxrss) > 1.25*float64(hwm100)+16*1024 {
		t.Errorf("memory grows: peak RSS %d kB at 1,000 runs vs %d kB at 100", maxrss, hwm100)
	}
	if maxFD > 32 {
		t.Errorf("up to %d open file descriptors", maxFD)
	}
	// Scoring the 1,000 runs (10 settings × 100 seeds: 49,500 pairs).
	sc := exec.Command(bin, "score", dir)
	t0 := time.Now()
	if out, err := sc.CombinedOutput(); err != nil {
		t.Fatalf("score: %v\n%s", err, out)
	}
	t.Logf("plumb score of the 1,000 runs: %s, peak RSS %d kB", time.Since(t0).Round(time.Millisecond),
		sc.ProcessState.SysUsage().(*syscall.Rusage).Maxrss)
}
