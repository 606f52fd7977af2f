package gate

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"plumb/sweep"
)

// TestFalseAlarmRate measures how often the gate fails a current study made
// by the same code from the same data with other seeds (a false alarm),
// and how often it fails deliberate changes. It needs studies made by
// internal/scripts/gatecal/run.sh (one setting, thousands of seeds) and
// runs only with PLUMB_LONG=1 and PLUMB_GATECAL=DIR:
//
//	bash internal/scripts/gatecal/run.sh /tmp/gatecal
//	PLUMB_LONG=1 PLUMB_GATECAL=/tmp/gatecal go test -run FalseAlarmRate -v ./cmd/plumb/internal/gate/
//
// Each trial takes disjoint seed sets for the baseline and the current
// study (no run is used twice), so trials are independent. The numbers are
// recorded in internal/scripts/gatecal/README.md. Trustworthiness is not
// part of these studies (they are not scored); KL and both layout tests
// are.
func TestFalseAlarmRate(t *testing.T) {
	dir := os.Getenv("PLUMB_GATECAL")
	if os.Getenv("PLUMB_LONG") == "" || dir == "" {
		t.Skip("set PLUMB_LONG=1 and PLUMB_GATECAL=DIR (made by internal/scripts/gatecal/run.sh)")
	}
	load := func(name string) []Run {
		s, err := sweep.Open(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		n := s.Info.Input.N
		var runs []Run
		for _, r := range s.Rows {
			if r.Status != sweep.StatusDone {
				continue
			}
			l, err := s.Layout(r.RunID)
			if err != nil {
				t.Fatal(err)
			}
			y, err := inInputOrder(l, n)
			if err != nil {
				t.Fatal(err)
			}
			runs = append(runs, Run{Seed: r.Seed, KL: r.KL, Trust: nanValue(), Layout: func() ([]float64, error) { return y, nil }})
		}
		return runs
	}
	ids := func(name string) []string {
		s, err := sweep.Open(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		l, err := s.Layout(s.Rows[0].RunID)
		if err != nil {
			t.Fatal(err)
		}
		out := make([]string, len(l.IDs))
		for j, p := range l.Point {
			out[p] = l.IDs[j]
		}
		return out
	}
	study := func(name string, runs []Run, pid []string) *Study {
		return &Study{Dir: name, Fingerprint: "same", Plan: map[string]string{}, K: 15, IDs: pid,
			Settings: []Setting{{ID: "s", Params: []Param{{"perplexity", "30"}}, Runs: runs}}}
	}
	type outcome map[Outcome]int
	why := map[string]int{} // what failed, by the start of the message
	trial := func(base, cur []Run, pid []string) Outcome {
		res, err := Compare(study("base", base, pid), study("cur", cur, pid), Options{})
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range res.Settings {
			for _, f := range s.Failures {
				w := f
				if i := strings.IndexAny(w, "0123456789"); i > 0 {
					w = w[:i]
				}
				why[w]++
			}
		}
		return res.Outcome
	}
	for _, data := range []string{"iris", "digits"} {
		if _, err := os.Stat(filepath.Join(dir, data+"-base")); err != nil {
			t.Logf("%s: no studies, skipped", data)
			continue
		}
		pid := ids(data + "-base")
		base := load(data + "-base")
		for _, size := range []int{3, 6, 10} {
			got := outcome{}
			trials := 0
			for off := 0; off+2*size <= len(base); off += 2 * size {
				got[trial(base[off:off+size], base[off+size:off+2*size], pid)]++
				trials++
			}
			if trials == 0 {
				continue
			}
			t.Logf("%s, same code and data, other seeds, %d v %d runs: %d trials, %s; false alarms (exit 1) %d = %.1f%%",
				data, size, size, trials, show(got), got[Regression], 100*float64(got[Regression])/float64(trials))
			if len(why) > 0 {
				t.Logf("  failures: %v", why)
				clear(why)
			}
			if size >= 6 && float64(got[Regression]) > 0.01*float64(trials)+2 {
				t.Errorf("%s %dv%d: %d false alarms in %d trials", data, size, size, got[Regression], trials)
			}
		}
		// Resampled trials: each draws 2·size distinct runs at random from
		// the pool (trials share runs, so they are not independent, but
		// each is a draw under the null hypothesis).
		rs := rand.New(rand.NewPCG(2026, 12))
		resampled := map[string]int{"iris": 1000, "digits": 300}[data]
		for _, size := range []int{6, 10} {
			got := outcome{}
			for i := 0; i < resampled; i++ {
				perm := rs.Perm(len(base))[:2*size]
				var b, c []Run
				for j, p := range perm {
					if j < size {
						b = append(b, base[p])
					} else {
						c = append(c, base[p])
					}
				}
				got[trial(b, c, pid)]++
			}
			t.Logf("%s, same code and data, other seeds, %d v %d runs, resampled: %d trials, %s; false alarms (exit 1) %.2f%%",
				data, size, size, resampled, show(got), 100*float64(got[Regression])/float64(resampled))
			if len(why) > 0 {
				t.Logf("  failures: %v", why)
				clear(why)
			}
		}
		entries, _ := os.ReadDir(dir)
		for _, e := range entries {
			name := e.Name()
			if !strings.HasPrefix(name, data+"-") || name == data+"-base" {
				continue
			}
			alt := load(name)
			for _, size := range []int{3, 6, 10} {
				got := outcome{}
				trials := 0
				for off := 0; off+size <= len(alt) && (trials+1)*size <= len(base); off += size {
					// Baseline runs from the end of the base study, away
					// from the runs used above as much as possible.
					b := base[len(base)-(trials+1)*size : len(base)-trials*size]
					got[trial(b, alt[off:off+size], pid)]++
					trials++
				}
				if len(why) > 0 {
					t.Logf("  failures: %v", why)
					clear(why)
				}
				t.Logf("%s vs %s, %d v %d runs: %d trials, %s; detected (exit 1) %.0f%%", name, data+"-base", size, size, trials, show(got),
					100*float64(got[Regression])/float64(max(trials, 1)))
			}
		}
	}
}

func show(m map[Outcome]int) string {
	var parts []string
	for _, o := range []Outcome{Pass, Regression, Incomparable, DataChanged, Untested} {
		if m[o] > 0 {
			parts = append(parts, fmt.Sprintf("%s %d", o, m[o]))
		}
	}
	return strings.Join(parts, ", ")
}

func nanValue() float64 {
	var z float64
	return z / z
}
