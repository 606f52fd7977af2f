package report

import (
	"math"
	"strings"
	"testing"

	"plumb/cmd/plumb/internal/studyview"
)

// Panels are comparable: if every setting's consensus is a rotated,
// reflected, scaled and shifted copy of the reference, alignment brings
// each back onto the reference exactly (Procrustes property, Schönemann
// 1966).
func TestAlignedConsensusRecoversCopies(t *testing.T) {
	st := syntheticStudy()
	ref := st.Settings[0].Consensus
	for i := 1; i < len(st.Settings); i++ {
		th, s := 0.3*float64(i), 1+float64(i)
		c := make([]float64, len(ref))
		for p := 0; p < len(ref)/2; p++ {
			x, y := ref[2*p], ref[2*p+1]
			if i%2 == 1 {
				y = -y
			}
			c[2*p] = s*(math.Cos(th)*x-math.Sin(th)*y) + 5
			c[2*p+1] = s*(math.Sin(th)*x+math.Cos(th)*y) - 3
		}
		st.Settings[i].Consensus = c
	}
	al, err := alignedConsensus(st, 0)
	if err != nil {
		t.Fatal(err)
	}
	for i := range al {
		for k := range ref {
			if math.Abs(al[i][k]-ref[k]) > 1e-9 {
				t.Fatalf("setting %d coordinate %d: got %g want %g", i, k, al[i][k], ref[k])
			}
		}
	}
}

// With a third varied parameter the heatmaps get one facet per value.
func TestHeatmapFacets(t *testing.T) {
	st := syntheticStudy()
	st.Grid = append(st.Grid, studyview.Param{Name: "init", Values: []string{"pca", "random"}})
	var more []studyview.Setting
	for _, s := range st.Settings {
		for _, in := range []string{"pca", "random"} {
			c := s
			c.ID = s.ID + "-" + in
			c.Params = append(append([]studyview.Field(nil), s.Params...), studyview.Field{Name: "init", Value: in})
			more = append(more, c)
		}
	}
	st.Settings = more
	f, err := heatmapFigure(st, headline[3], "")
	if err != nil {
		t.Fatal(err)
	}
	svg := string(f.SVG)
	for _, want := range []string{">init pca<", ">init random<", ">lr auto<", ">lr 200<", ">perplexity<"} {
		if !strings.Contains(svg, want) {
			t.Errorf("heatmap lacks %q", want)
		}
	}
	// 3 perplexities × 2 learning rates × 2 facets = 12 cells, each with a
	// tooltip naming its setting.
	if n := strings.Count(svg, "<title>perplexity "); n != 12 {
		t.Errorf("got %d cells want 12", n)
	}
}
