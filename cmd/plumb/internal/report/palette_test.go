package report

import (
	"fmt"
	"math"
	"testing"
)

func TestLabKnownValues(t *testing.T) {
	// White is L*=100, a*=b*=0 and black L*=0 by definition of CIELAB (CIE
	// 15:2004); sRGB red is about (53.2, 80.1, 67.2) (from memory, the
	// commonly quoted value).
	cases := []struct {
		c       rgb
		l, a, b float64
		tol     float64
	}{
		{rgb{255, 255, 255}, 100, 0, 0, 0.05},
		{rgb{0, 0, 0}, 0, 0, 0, 1e-9},
		{rgb{255, 0, 0}, 53.2, 80.1, 67.2, 0.5},
	}
	for _, tc := range cases {
		l, a, b := lab(tc.c)
		if math.Abs(l-tc.l) > tc.tol || math.Abs(a-tc.a) > tc.tol || math.Abs(b-tc.b) > tc.tol {
			t.Errorf("lab(%v): got (%.2f, %.2f, %.2f) want (%.1f, %.1f, %.1f)", tc.c, l, a, b, tc.l, tc.a, tc.b)
		}
	}
}

// The palette's design claim (palette.go): 20 colours that every pair
// keeps at least 12 units of CIE 1976 ΔE*ab apart under normal vision and
// under the protanopia, deuteranopia and tritanopia simulations of Machado,
// Oliveira & Fernandes (2009, severity 1.0), and at least 25 from the grey
// of "other". The thresholds are our choice: ΔE*ab about 2.3 is a just
// noticeable difference for patches side by side (Sharma 2003, from
// memory); small marks on a map need several times that. Every colour
// lies between L* 35 and 75 so that it stands out on white and its hue can
// still be seen.
func TestPaletteSeparation(t *testing.T) {
	if len(categorical) != 20 {
		t.Fatalf("palette has %d colours, want 20", len(categorical))
	}
	worst := math.Inf(1)
	for i := range categorical {
		for j := i + 1; j < len(categorical); j++ {
			d := worstDeltaE(categorical[i], categorical[j])
			worst = math.Min(worst, d)
			if d < 12 {
				t.Errorf("%s vs %s: smallest ΔE*ab over normal and simulated vision %.1f < 12", categorical[i].hex(), categorical[j].hex(), d)
			}
		}
		if d := worstDeltaE(categorical[i], otherColor); d < 25 {
			t.Errorf("%s vs other grey %s: ΔE*ab %.1f < 25", categorical[i].hex(), otherColor.hex(), d)
		}
		if l, _, _ := lab(categorical[i]); l < 35 || l > 75 {
			t.Errorf("%s: L* %.1f outside [35, 75]", categorical[i].hex(), l)
		}
	}
	t.Logf("smallest pairwise ΔE*ab over the four views: %.1f", worst)
}

// The simulation matrices keep white white: each row sums to 1 (a
// property of Machado et al.'s matrices, which are normalised so that the
// achromatic axis is preserved), which guards the recalled values against
// a typing slip.
func TestCVDMatricesKeepWhite(t *testing.T) {
	for k, m := range cvdMatrices {
		for r := 0; r < 3; r++ {
			if s := m[3*r] + m[3*r+1] + m[3*r+2]; math.Abs(s-1) > 1e-5 {
				t.Errorf("matrix %d row %d sums to %.6f want 1", k, r, s)
			}
		}
	}
	// A check that can fail: the same test on a pair known to collapse for
	// red–green deficiencies (pure red vs pure green of equal lightness
	// after simulation) must come out far below the palette's margin.
	if d := worstDeltaE(hexColor("#d00000"), hexColor("#6a8a00")); d > 12 {
		t.Errorf("red vs olive green: worst ΔE*ab %.1f, want below 12 (the simulation should merge them)", d)
	}
}

// Labels beyond the palette: the 19 largest keep a colour of their own,
// the rest share "other".
func TestLabelColoursBeyondPalette(t *testing.T) {
	for _, n := range []int{1, 7, 20, 21, 35} {
		var labels []string
		for i := 0; i < n; i++ {
			for k := 0; k <= n-i; k++ { // label i has n-i+1 points: larger first
				labels = append(labels, fmt.Sprintf("L%02d", i))
			}
		}
		order, mk := labelColours(labels)
		distinct := map[rgb]bool{}
		others := 0
		for _, l := range order {
			if mk[l].col == otherColor {
				others++
			} else {
				distinct[mk[l].col] = true
			}
		}
		wantOwn := n
		if n > len(categorical) {
			wantOwn = len(categorical) - 1
		}
		if len(distinct) != wantOwn || others != n-wantOwn {
			t.Errorf("%d labels: got %d own colours and %d other, want %d and %d", n, len(distinct), others, wantOwn, n-wantOwn)
		}
		if n > len(categorical) && mk["L00"].col != categorical[0] {
			t.Errorf("%d labels: the largest label should get the first colour", n)
		}
	}
}

func TestRampMonotone(t *testing.T) {
	prev := math.Inf(1)
	for i := 0; i <= 100; i++ {
		l, _, _ := lab(ramp(float64(i) / 100))
		if l >= prev {
			t.Fatalf("ramp lightness not falling at t=%.2f: %.2f after %.2f", float64(i)/100, l, prev)
		}
		prev = l
	}
	if l0, _, _ := lab(ramp(0)); l0-prev < 70 {
		t.Errorf("ramp lightness span %.1f < 70", l0-prev)
	}
}

// The per-point ramp of the maps also falls monotonically in lightness, so
// it reads in greyscale and "darker = less stable" holds everywhere.
func TestWarnRampMonotone(t *testing.T) {
	prev := math.Inf(1)
	for i := 0; i <= 100; i++ {
		l, _, _ := lab(warnRamp(float64(i) / 100))
		if l >= prev {
			t.Fatalf("per-point ramp lightness not falling at t=%.2f: %.2f after %.2f", float64(i)/100, l, prev)
		}
		prev = l
	}
}
