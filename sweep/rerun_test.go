package sweep

import (
	"context"
	"errors"
	"math"
	"testing"

	"plumb/internal/parquetio"
)

// TestRerunEqualsSweep: Rerun repeats what Execute did for a run, bit for
// bit (same inputs and seed give identical results: common practice, and
// a project rule), across the paths a run can take: exact, Barnes-Hut and
// FFT gradients, PCA and random starts, runs on all points and on a
// subsample, and the locality renumbering (forced on with localityMinN).
func TestRerunEqualsSweep(t *testing.T) {
	saved := localityMinN
	localityMinN = 0
	defer func() { localityMinN = saved }()
	ds := iris(t)
	p, err := Spec{Perplexity: "5,10", Seeds: "2", Iters: "40", ExaggerationIters: "15", Init: "random,pca",
		Gradient: "exact,barnes-hut,fft", Subsample: "0.7,1", KLEvery: "20"}.Plan()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	runSweep(t, ds, p, dir, func(o *Options) { o.Jobs, o.Threads = 2, 1 })
	ids, err := FinishedRuns(dir)
	if err != nil {
		t.Fatal(err)
	}
	if len(ids) != p.NumRuns() {
		t.Fatalf("got %d finished runs want %d", len(ids), p.NumRuns())
	}
	for _, id := range ids {
		c, err := CheckRun(context.Background(), dir, ds, id, 2, "test")
		if err != nil {
			t.Fatalf("run %s: %v", id, err)
		}
		if !c.Match {
			t.Errorf("run %s: %d of %d coordinates differ, largest by %g (%d ulp); %s", id, c.Differ, 2*c.Points, c.MaxDeviation, c.MaxULP, c.Problem)
		}
		if c.Stored == nil || c.Stored.Kernels == "" || c.Stored.Differences(c.Now) != nil {
			t.Errorf("run %s: recorded environment %+v, now %+v", id, c.Stored, c.Now)
		}
	}

	// One coordinate nudged by one ulp is found, named and measured.
	path := layoutPath(dir, ids[3])
	tb, err := parquetio.Read(path)
	if err != nil {
		t.Fatal(err)
	}
	xs, _ := tb.Float64("x")
	old := xs[5]
	xs[5] = math.Nextafter(old, math.Inf(-1))
	if err := parquetio.Write(path, tb); err != nil {
		t.Fatal(err)
	}
	c, err := CheckRun(context.Background(), dir, ds, ids[3], 1, "test")
	if err != nil {
		t.Fatal(err)
	}
	if c.Match || c.Differ != 1 || c.MaxULP != 1 || c.Row != 5 || c.Axis != "x" || c.MaxDeviation != math.Abs(old-xs[5]) {
		t.Errorf("after a 1-ulp nudge of x[5]: got %+v", c)
	}

	if _, err := Rerun(context.Background(), dir, ds, "nosuch-1", 1); !errors.As(err, new(*UnknownRunError)) {
		t.Errorf("unknown run: got %v want *UnknownRunError", err)
	}
	other := *ds
	other.Fingerprint = "0000"
	if _, err := Rerun(context.Background(), dir, &other, ids[0], 1); err == nil {
		t.Error("other input: no error")
	}
}

func TestULPs(t *testing.T) {
	for _, c := range []struct {
		a, b float64
		want uint64
	}{
		{1, 1, 0},
		{1, math.Nextafter(1, 2), 1},
		{-1, math.Nextafter(-1, -2), 1},
		{math.SmallestNonzeroFloat64, -math.SmallestNonzeroFloat64, 2}, // across zero (±0 one value)
		{0, math.Copysign(0, -1), 0},
	} {
		if got := ulps(c.a, c.b); got != c.want {
			t.Errorf("ulps(%g, %g) = %d want %d", c.a, c.b, got, c.want)
		}
	}
}

func TestSampleRuns(t *testing.T) {
	ids := []string{"a", "b", "c", "d", "e", "f"}
	s1, s2 := SampleRuns(ids, 3, 9), SampleRuns(ids, 3, 9)
	if len(s1) != 3 || s1[0] != s2[0] || s1[1] != s2[1] || s1[2] != s2[2] {
		t.Errorf("SampleRuns(6 ids, 3, 9) twice: %v, %v", s1, s2)
	}
	for i := 1; i < len(s1); i++ {
		if s1[i-1] >= s1[i] {
			t.Errorf("sample %v not in input order", s1)
		}
	}
	if got := SampleRuns(ids, 10, 1); len(got) != 6 {
		t.Errorf("SampleRuns(6 ids, 10) = %v want all", got)
	}
}
