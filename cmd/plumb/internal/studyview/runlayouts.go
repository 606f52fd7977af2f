package studyview

import (
	"fmt"
	"math"

	"plumb/align"
	"plumb/sweep"
)

// loadRunLayouts reads the layout of every finished run of every setting
// with a consensus and rotates it onto that consensus (ordinary Procrustes
// without scaling, on the points the run placed), for the page's view of a
// setting's runs. Cost: one layout read and one O(n) alignment per run.
func loadRunLayouts(s *sweep.Study, st *View) error {
	index := map[string]int{}
	for i := range st.Settings {
		index[st.Settings[i].ID] = i
	}
	n := len(st.IDs)
	for _, r := range s.Rows {
		if r.Status != sweep.StatusDone {
			continue
		}
		i, ok := index[r.SettingID]
		if !ok || len(st.Settings[i].Consensus) != 2*n {
			continue
		}
		l, err := s.Layout(r.RunID)
		if err != nil {
			return fmt.Errorf("studyview: %w", err)
		}
		xy := make([]float64, 2*n)
		for k := range xy {
			xy[k] = math.NaN()
		}
		for k, p := range l.Point {
			if int(p) < 0 || int(p) >= n {
				return fmt.Errorf("studyview: layout of run %s: point %d outside 0..%d", r.RunID, p, n-1)
			}
			xy[2*p], xy[2*p+1] = l.Y[2*k], l.Y[2*k+1]
		}
		al, err := AlignOnto(st.Settings[i].Consensus, xy)
		if err != nil {
			return fmt.Errorf("studyview: aligning run %s onto its consensus: %w", r.RunID, err)
		}
		st.Settings[i].RunLayouts = append(st.Settings[i].RunLayouts, RunLayout{RunID: r.RunID, Seed: r.Seed, XY: al})
	}
	return nil
}

// AlignOnto rotates and reflects y onto base by ordinary Procrustes without
// scaling, fitted on the points finite in both, and applies the transform
// to every point of y (NaN stays NaN).
func AlignOnto(base, y []float64) ([]float64, error) {
	var a, b []float64
	for p := 0; p+1 < len(y); p += 2 {
		if finite(y[p]) && finite(y[p+1]) && finite(base[p]) && finite(base[p+1]) {
			a = append(a, base[p], base[p+1])
			b = append(b, y[p], y[p+1])
		}
	}
	_, t, err := align.Procrustes(a, b, false)
	if err != nil {
		return nil, err
	}
	return t.Apply(y), nil
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
