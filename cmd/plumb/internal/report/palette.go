package report

import "math"

// categorical is the palette for labels, in the order colours are handed
// out (the largest label gets the first). It was made by greedy max–min
// selection (Glasbey et al. 2007) over sRGB colours, measuring each pair by
// the smallest CIE 1976 ΔE*ab it keeps under normal vision and under the
// protanopia, deuteranopia and tritanopia simulations of Machado, Oliveira
// & Fernandes (2009); testdata/palette/main.go regenerates it and
// TestPaletteSeparation checks its margins. With more than
// len(categorical) labels, the largest len(categorical)−1 keep their
// colours and the rest share otherColor, shown as "other" (labelColours).
var categorical = []rgb{
	hexColor("#1e50a0"), // fixed first colour
	hexColor("#ff6400"), // margin when added: 105.7
	hexColor("#875550"), // margin when added: 52.9
	hexColor("#64c3f0"), // margin when added: 43.0
	hexColor("#8c00ff"), // margin when added: 37.1
	hexColor("#f0a582"), // margin when added: 34.2
	hexColor("#c85aff"), // margin when added: 28.1
	hexColor("#c30000"), // margin when added: 27.3
	hexColor("#695a7d"), // margin when added: 25.7
	hexColor("#1e87be"), // margin when added: 21.0
	hexColor("#be694b"), // margin when added: 20.4
	hexColor("#78c846"), // margin when added: 19.6
	hexColor("#911ed2"), // margin when added: 17.6
	hexColor("#0f731e"), // margin when added: 15.5
	hexColor("#87a0f5"), // margin when added: 14.8
	hexColor("#7364cd"), // margin when added: 14.1
	hexColor("#c80082"), // margin when added: 12.9
	hexColor("#e60a64"), // margin when added: 12.9
	hexColor("#6982a5"), // margin when added: 12.8
	hexColor("#b4873c"), // margin when added: 12.4
}

// otherColor is shared by the labels beyond the palette ("other" in the
// legend): a neutral grey, at least 25 ΔE*ab from every palette colour in
// all four views.
var otherColor = hexColor("#b4b4b4")

// cvdMatrices are the simulation matrices of Machado, Oliveira & Fernandes
// (2009) at severity 1.0 for protanopia, deuteranopia and tritanopia,
// applied to linear sRGB, row-major (values from memory of the paper's
// table).
var cvdMatrices = [3][9]float64{
	{0.152286, 1.052583, -0.204868, 0.114503, 0.786281, 0.099216, -0.003882, -0.048116, 1.051998},
	{0.367322, 0.860646, -0.227968, 0.280085, 0.672501, 0.047413, -0.011820, 0.042940, 0.968881},
	{1.255528, -0.076749, -0.178779, -0.078411, 0.930809, 0.147602, 0.004733, 0.691367, 0.303900},
}

// views returns the colour's CIELAB under normal vision and under the
// three simulated deficiencies (protan, deutan, tritan).
func views(c rgb) [4][3]float64 {
	r, g, b := linear(c.R), linear(c.G), linear(c.B)
	var v [4][3]float64
	v[0] = labLinear(r, g, b)
	for k, m := range cvdMatrices {
		v[k+1] = labLinear(m[0]*r+m[1]*g+m[2]*b, m[3]*r+m[4]*g+m[5]*b, m[6]*r+m[7]*g+m[8]*b)
	}
	return v
}

// worstDeltaE is the smallest CIE 1976 ΔE*ab between two colours over the
// four views of views.
func worstDeltaE(a, b rgb) float64 {
	va, vb := views(a), views(b)
	d := math.Inf(1)
	for k := range va {
		d = math.Min(d, math.Sqrt(sq(va[k][0]-vb[k][0])+sq(va[k][1]-vb[k][1])+sq(va[k][2]-vb[k][2])))
	}
	return d
}

func sq(x float64) float64 { return x * x }

// rampStops are the anchors of the continuous ramp, light to dark; the
// ramp is linear in sRGB between them and its CIELAB lightness falls
// monotonically (TestRampMonotone).
var rampStops = []rgb{
	hexColor("#fbf5c8"),
	hexColor("#b9e0a8"),
	hexColor("#58b8b0"),
	hexColor("#2a7bb0"),
	hexColor("#263f8c"),
	hexColor("#1c1c4a"),
}

// ramp maps t in [0, 1] to a colour; NaN gives light grey.
func ramp(t float64) rgb {
	if math.IsNaN(t) {
		return light
	}
	return rampOf(rampStops, t)
}

// lab converts an sRGB colour to CIELAB (D65 white), per CIE 15:2004 and
// IEC 61966-2-1 (the sRGB transfer curve).
func lab(c rgb) (l, a, b float64) {
	v := labLinear(linear(c.R), linear(c.G), linear(c.B))
	return v[0], v[1], v[2]
}

// linear undoes the sRGB transfer curve (IEC 61966-2-1).
func linear(v uint8) float64 {
	x := float64(v) / 255
	if x <= 0.04045 {
		return x / 12.92
	}
	return math.Pow((x+0.055)/1.055, 2.4)
}

// labLinear converts linear sRGB (clamped to [0, 1]) to CIELAB.
func labLinear(r, g, bl float64) [3]float64 {
	r, g, bl = clamp01(r), clamp01(g), clamp01(bl)
	x := (0.4124*r + 0.3576*g + 0.1805*bl) / 0.95047
	y := 0.2126*r + 0.7152*g + 0.0722*bl
	z := (0.0193*r + 0.1192*g + 0.9505*bl) / 1.08883
	f := func(t float64) float64 {
		if t > 216.0/24389 {
			return math.Cbrt(t)
		}
		return (24389.0/27*t + 16) / 116
	}
	fx, fy, fz := f(x), f(y), f(z)
	return [3]float64{116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)}
}

// textOn returns black or white, whichever reads better on the background.
func textOn(bg rgb) rgb {
	if l, _, _ := lab(bg); l < 55 {
		return white
	}
	return black
}

// warnStops are the anchors of the per-point ramp of the page's maps:
// light grey for stable points (they recede) to dark red for unstable ones
// (they stand out); CIELAB lightness falls monotonically
// (TestRampMonotone).
var warnStops = []rgb{
	hexColor("#d4d4d4"),
	hexColor("#f2b36b"),
	hexColor("#e0652a"),
	hexColor("#b02418"),
	hexColor("#5c0a0a"),
}
