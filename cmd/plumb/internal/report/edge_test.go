package report

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"plumb/cmd/plumb/internal/studyview"
	"plumb/stability"
)

// Same study in, same bytes out: the page carries no clock time and every
// loop runs in a fixed order.
func TestWriteDeterministic(t *testing.T) {
	a, b := t.TempDir(), t.TempDir()
	if _, err := Write(syntheticStudy(), a, Options{}); err != nil {
		t.Fatal(err)
	}
	if _, err := Write(syntheticStudy(), b, Options{}); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"index.html", "methods.md", "figures/layouts.png", "figures/layouts.pdf", "figures/heatmap-kl.svg", "figures/kl-traces.pdf", "figures/stability.png"} {
		x, _ := os.ReadFile(filepath.Join(a, f))
		y, _ := os.ReadFile(filepath.Join(b, f))
		if len(x) == 0 || !bytes.Equal(x, y) {
			t.Errorf("%s differs between two writes of the same study", f)
		}
	}
}

func TestWriteEdgeCases(t *testing.T) {
	cases := []struct {
		name   string
		edit   func(*studyview.View)
		want   []string
		chosen string
	}{
		{
			name: "no labels: colour by spread",
			edit: func(s *studyview.View) { s.Labels = nil; s.Input.LabelColumn = "" },
			want: []string{"Colour shows each point&#39;s spread across seeds: light grey = stable"},
		},
		{
			name: "a setting without finished runs",
			edit: func(s *studyview.View) {
				x := &s.Settings[0]
				x.RunsDone, x.Consensus, x.Spread, x.Unstable = 0, nil, nil, nil
				nan := stability.MedianIQR{Median: math.NaN(), IQR: math.NaN()}
				x.Disparity, x.Jaccard, x.Trustworthiness, x.KL = nan, nan, nan, nan
			},
			want: []string{"no finished runs", "<code>s-5-auto</code>: no finished run"},
		},
		{
			name: "single setting, single seed: picked on faithfulness alone",
			edit: func(s *studyview.View) {
				s.Settings = s.Settings[:1]
				s.Settings[0].RunsDone = 1
				s.Settings[0].Disparity = stability.MedianIQR{Median: math.NaN(), IQR: math.NaN()}
				s.Settings[0].Arrangements = 0
				s.Grid = []studyview.Param{{Name: "perplexity", Values: []string{"5"}}}
				s.Seeds = s.Seeds[:1]
			},
			want: []string{"Stability not measured</strong> for this setting (1 finished run)", "no runner-up"},
		},
		{
			name: "no faithfulness score: no recommendation",
			edit: func(s *studyview.View) {
				for i := range s.Settings {
					s.Settings[i].RNXAUC = stability.MedianIQR{Median: math.NaN(), IQR: math.NaN()}
				}
			},
			want: []string{"No recommendation: no setting has a finished run with a defined faithfulness score"},
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			st := syntheticStudy()
			tc.edit(st)
			out, err := Write(st, t.TempDir(), Options{})
			if err != nil {
				t.Fatal(err)
			}
			page, _ := os.ReadFile(out.Index)
			for _, w := range tc.want {
				if !strings.Contains(string(page), w) {
					t.Errorf("page lacks %q", w)
				}
			}
		})
	}
}

// Many settings and points: panels wrap, points are subsampled for
// drawing, and the caption says so.
func TestWriteLargeStudy(t *testing.T) {
	st := syntheticStudy()
	big := 3 * maxPanelPoints / 2
	for len(st.IDs) < big {
		st.IDs = append(st.IDs, "x"+st.IDs[len(st.IDs)%120])
		st.Labels = append(st.Labels, st.Labels[len(st.Labels)%120])
	}
	for i := range st.Settings {
		s := &st.Settings[i]
		for len(s.Spread) < big {
			k := len(s.Spread) % 120
			s.Consensus = append(s.Consensus, s.Consensus[2*k]+0.01, s.Consensus[2*k+1])
			s.Spread = append(s.Spread, s.Spread[k])
			s.Unstable = append(s.Unstable, s.Unstable[k])
		}
	}
	st.Input.N = big
	out, err := Write(st, t.TempDir(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if c := out.Figures[0].Caption; !strings.Contains(c, "3000 of 4500 points drawn") {
		t.Errorf("caption: %s", c)
	}
	if n := bytes.Count(out.Figures[0].SVG, []byte("<circle")); n > len(st.Settings)*maxPanelPoints+20 {
		t.Errorf("layouts SVG has %d circles, want at most %d per panel", n, maxPanelPoints)
	}
}
