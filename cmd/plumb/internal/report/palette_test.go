package report

import (
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

// The palette's design claim (package doc): every pair differs by ≥ 15 in
// (L*, b*) alone — what survives when the red–green axis a* is lost, the
// commonest colour vision deficiency (common practice to reason this way; no
// full simulation) — and by ≥ 40 in full CIELAB ΔE*ab (1976). Thresholds are
// our choice: ΔE around 2 is a just noticeable difference (from memory).
func TestPaletteSeparation(t *testing.T) {
	for i := range categorical {
		for j := i + 1; j < len(categorical); j++ {
			l1, a1, b1 := lab(categorical[i])
			l2, a2, b2 := lab(categorical[j])
			lb := math.Hypot(l1-l2, b1-b2)
			de := math.Sqrt((l1-l2)*(l1-l2) + (a1-a2)*(a1-a2) + (b1-b2)*(b1-b2))
			if lb < 15 {
				t.Errorf("%s vs %s: (L*, b*) distance %.1f < 15", categorical[i].hex(), categorical[j].hex(), lb)
			}
			if de < 40 {
				t.Errorf("%s vs %s: ΔE %.1f < 40", categorical[i].hex(), categorical[j].hex(), de)
			}
		}
		// Points are drawn on white: keep every colour at L* ≤ 75 (our
		// choice) so it stands out from the background.
		if l, _, _ := lab(categorical[i]); l > 75 {
			t.Errorf("%s: L* %.1f too light for white paper", categorical[i].hex(), l)
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
