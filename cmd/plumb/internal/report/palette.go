package report

import "math"

// categorical is our palette for labels, in the order colours are handed
// out: deep blue, amber, sky, brick, green, pink, dark grey. See the package
// doc for how it was chosen; TestPaletteSeparation checks the claims.
var categorical = []rgb{
	hexColor("#1b4f9c"),
	hexColor("#e69500"),
	hexColor("#5ab4e5"),
	hexColor("#9c2a1b"),
	hexColor("#2e8b57"),
	hexColor("#d36fb0"),
	hexColor("#505050"),
}

// otherColor is used for labels beyond the palette's seven (shown as
// "other" in the legend).
var otherColor = hexColor("#c4c4c4")

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
	t = clamp01(t)
	pos := t * float64(len(rampStops)-1)
	i := int(pos)
	if i >= len(rampStops)-1 {
		return rampStops[len(rampStops)-1]
	}
	f := pos - float64(i)
	a, b := rampStops[i], rampStops[i+1]
	mix := func(x, y uint8) uint8 { return uint8(math.Round(float64(x)*(1-f) + float64(y)*f)) }
	return rgb{mix(a.R, b.R), mix(a.G, b.G), mix(a.B, b.B)}
}

// lab converts an sRGB colour to CIELAB (D65 white), per CIE 15:2004 and
// IEC 61966-2-1 (the sRGB transfer curve).
func lab(c rgb) (l, a, b float64) {
	lin := func(v uint8) float64 {
		x := float64(v) / 255
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	r, g, bl := lin(c.R), lin(c.G), lin(c.B)
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
	return 116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)
}

// textOn returns black or white, whichever reads better on the background.
func textOn(bg rgb) rgb {
	if l, _, _ := lab(bg); l < 55 {
		return white
	}
	return black
}
