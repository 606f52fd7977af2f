// Command clusterstudy times the map-cluster readings of a finished study:
// it reads every run's layout (not timed), then clusters every run
// (stability.MapClusters) and, per setting, computes the co-assignment
// scores, the cluster-wise stability on the setting's first run and, when
// the study has labels, the label stability. It prints the process CPU
// time (user + sys) and wall time of that work, for comparison with the
// CPU time of `plumb score` on the same study (clusters_bench.sh).
//
//	go run ./internal/scripts/bench/clusterstudy STUDY_DIR
package main

import (
	"fmt"
	"os"
	"syscall"
	"time"

	"plumb/stability"
	"plumb/sweep"
)

func cpu() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		panic(err)
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func main() {
	if len(os.Args) != 2 {
		fmt.Fprintln(os.Stderr, "usage: clusterstudy STUDY_DIR")
		os.Exit(2)
	}
	st, err := sweep.Open(os.Args[1])
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	type runData struct {
		setting string
		l       *sweep.Layout
	}
	var runs []runData
	for _, r := range st.Planned {
		l, err := st.Layout(r.ID)
		if err != nil {
			continue // not finished
		}
		runs = append(runs, runData{r.Setting.ID, l})
	}
	n := st.Info.Input.N
	c0, w0 := cpu(), time.Now()
	bySetting := map[string][]stability.RunClusters{}
	var order []string
	var labels []string
	clusters := 0
	for _, r := range runs {
		mc, err := stability.MapClusters(r.l.Y, stability.MapClusterConfig{})
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		clusters += mc.K
		if _, ok := bySetting[r.setting]; !ok {
			order = append(order, r.setting)
		}
		bySetting[r.setting] = append(bySetting[r.setting], stability.RunClusters{Rows: r.l.Point, Labels: mc.Labels}, stability.RunClusters{Rows: r.l.Point, Labels: mc.Groups})
		if r.l.Labels != nil && labels == nil {
			labels = make([]string, n)
			for m, p := range r.l.Point {
				labels[p] = r.l.Labels[m]
			}
		}
	}
	c1, w1 := cpu(), time.Now()
	flagged := 0
	for _, id := range order {
		both := bySetting[id]
		var lab, grp []stability.RunClusters
		for i := 0; i < len(both); i += 2 {
			lab = append(lab, both[i])
			grp = append(grp, both[i+1])
		}
		if _, err := stability.ClusterStability(lab, n, 0, labels); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		ps, err := stability.CoAssignment(grp, n, 0)
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		flagged += ps.NumFlagged
		if labels != nil {
			if _, err := stability.LabelStability(grp, n, labels, ps); err != nil {
				fmt.Fprintln(os.Stderr, err)
				os.Exit(1)
			}
		}
	}
	c2, w2 := cpu(), time.Now()
	fmt.Printf("runs %d settings %d n %d clusters/run %.1f flagged/setting %.1f\n", len(runs), len(order), n,
		float64(clusters)/float64(len(runs)), float64(flagged)/float64(len(order)))
	fmt.Printf("clustering: cpu %.2f s wall %.2f s\n", (c1 - c0).Seconds(), w1.Sub(w0).Seconds())
	fmt.Printf("readings:   cpu %.2f s wall %.2f s\n", (c2 - c1).Seconds(), w2.Sub(w1).Seconds())
	fmt.Printf("total:      cpu %.2f s wall %.2f s\n", (c2 - c0).Seconds(), w2.Sub(w0).Seconds())
}
