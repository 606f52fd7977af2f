// Command palette regenerates the report's categorical palette (the
// categorical slice in palette.go) by greedy max–min selection in CIELAB
// (Glasbey, van der Heijden, Toh & Gray 2007), where the distance between
// two colours is the smallest CIE 1976 ΔE*ab they keep under normal vision
// and under the simulations of protanopia, deuteranopia and tritanopia of
// Machado, Oliveira & Fernandes (2009, severity 1.0). Candidates are the
// sRGB colours on a grid of step 5 with 40 ≤ L* ≤ 75 (dark enough to stand
// out on white, light enough to tell hues apart), chroma C*ab ≥ 20 (not to
// be confused with the grey of "other") and a distance of at least 25 from
// that grey. The first colour is fixed (a deep blue), then each next
// colour is the candidate farthest from all chosen ones; ties go to the
// lower sRGB value. Run it from the repository root:
//
//	go run ./cmd/plumb/internal/report/testdata/palette
//
// and paste the output into palette.go; TestPaletteSeparation checks the
// margins the output prints.
package main

import (
	"fmt"
	"math"
)

type rgb struct{ R, G, B uint8 }

// Machado, Oliveira & Fernandes (2009), Table of simulation matrices,
// severity 1.0, applied to linear RGB (values from memory of the paper's
// supplementary table; the same numbers are in palette_test.go).
var cvd = [3][9]float64{
	{0.152286, 1.052583, -0.204868, 0.114503, 0.786281, 0.099216, -0.003882, -0.048116, 1.051998},
	{0.367322, 0.860646, -0.227968, 0.280085, 0.672501, 0.047413, -0.011820, 0.042940, 0.968881},
	{1.255528, -0.076749, -0.178779, -0.078411, 0.930809, 0.147602, 0.004733, 0.691367, 0.303900},
}

func lin(v float64) float64 {
	if v <= 0.04045 {
		return v / 12.92
	}
	return math.Pow((v+0.055)/1.055, 2.4)
}

func labLin(r, g, b float64) [3]float64 {
	r, g, b = math.Max(0, math.Min(1, r)), math.Max(0, math.Min(1, g)), math.Max(0, math.Min(1, b))
	x := (0.4124*r + 0.3576*g + 0.1805*b) / 0.95047
	y := 0.2126*r + 0.7152*g + 0.0722*b
	z := (0.0193*r + 0.1192*g + 0.9505*b) / 1.08883
	f := func(t float64) float64 {
		if t > 216.0/24389 {
			return math.Cbrt(t)
		}
		return (24389.0/27*t + 16) / 116
	}
	fx, fy, fz := f(x), f(y), f(z)
	return [3]float64{116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)}
}

// views returns the colour's CIELAB under normal vision and the three
// simulations.
func views(c rgb) [4][3]float64 {
	r, g, b := lin(float64(c.R)/255), lin(float64(c.G)/255), lin(float64(c.B)/255)
	var v [4][3]float64
	v[0] = labLin(r, g, b)
	for k, m := range cvd {
		v[k+1] = labLin(m[0]*r+m[1]*g+m[2]*b, m[3]*r+m[4]*g+m[5]*b, m[6]*r+m[7]*g+m[8]*b)
	}
	return v
}

func dist(a, b [4][3]float64) float64 {
	d := math.Inf(1)
	for k := range a {
		d = math.Min(d, math.Sqrt(sq(a[k][0]-b[k][0])+sq(a[k][1]-b[k][1])+sq(a[k][2]-b[k][2])))
	}
	return d
}

func sq(x float64) float64 { return x * x }

func main() {
	other := views(rgb{0xb4, 0xb4, 0xb4})
	type cand struct {
		c rgb
		v [4][3]float64
	}
	var cs []cand
	for r := 0; r <= 255; r += 5 {
		for g := 0; g <= 255; g += 5 {
			for b := 0; b <= 255; b += 5 {
				c := rgb{uint8(r), uint8(g), uint8(b)}
				v := views(c)
				l, ch := v[0][0], math.Hypot(v[0][1], v[0][2])
				if l < 40 || l > 75 || ch < 20 || dist(v, other) < 25 {
					continue
				}
				cs = append(cs, cand{c, v})
			}
		}
	}
	first := rgb{0x1e, 0x50, 0xa0}
	chosen := []cand{{first, views(first)}}
	fmt.Printf("\thexColor(\"#%02x%02x%02x\"), // fixed first colour\n", first.R, first.G, first.B)
	for len(chosen) < 20 {
		best, bestD := -1, -1.0
		for i, c := range cs {
			d := math.Inf(1)
			for _, p := range chosen {
				d = math.Min(d, dist(c.v, p.v))
			}
			if d > bestD {
				best, bestD = i, d
			}
		}
		chosen = append(chosen, cs[best])
		fmt.Printf("\thexColor(\"#%02x%02x%02x\"), // margin when added: %.1f\n", cs[best].c.R, cs[best].c.G, cs[best].c.B, bestD)
	}
}
