package report

import (
	"bytes"
	"fmt"
	"image"
	"image/png"
	"math"
	"strings"
)

// rgb is an opaque sRGB colour.
type rgb struct{ R, G, B uint8 }

func (c rgb) hex() string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }

func hexColor(s string) rgb {
	var c rgb
	if _, err := fmt.Sscanf(s, "#%02x%02x%02x", &c.R, &c.G, &c.B); err != nil {
		panic("report: bad colour " + s)
	}
	return c
}

var (
	black = rgb{0x22, 0x22, 0x22}
	grey  = rgb{0x88, 0x88, 0x88}
	light = rgb{0xdd, 0xdd, 0xdd}
	white = rgb{0xff, 0xff, 0xff}
)

// canvas records shapes in drawing order; svg and png render the same list.
// Coordinates are SVG pixels with y growing downwards.
type canvas struct {
	w, h   float64
	title  string
	shapes []any
}

type rectShape struct {
	x, y, w, h float64
	fill       rgb
	stroke     *rgb
	tip        string
}

type circleShape struct {
	x, y, r float64
	fill    rgb
	alpha   float64
	ring    bool // stroke only
}

type lineShape struct {
	pts   []float64 // x0,y0,x1,y1,…
	color rgb
	width float64
	alpha float64
}

type textShape struct {
	x, y   float64
	s      string
	size   float64
	anchor string // "start", "middle", "end"
	color  rgb
	bold   bool
	rotate float64 // degrees, about (x, y)
}

func newCanvas(w, h float64, title string) *canvas { return &canvas{w: w, h: h, title: title} }

func (c *canvas) rect(x, y, w, h float64, fill rgb, stroke *rgb, tip string) {
	c.shapes = append(c.shapes, rectShape{x, y, w, h, fill, stroke, tip})
}
func (c *canvas) circle(x, y, r float64, fill rgb, alpha float64) {
	c.shapes = append(c.shapes, circleShape{x, y, r, fill, alpha, false})
}
func (c *canvas) ring(x, y, r float64, col rgb) {
	c.shapes = append(c.shapes, circleShape{x, y, r, col, 1, true})
}
func (c *canvas) line(col rgb, width, alpha float64, pts ...float64) {
	c.shapes = append(c.shapes, lineShape{append([]float64(nil), pts...), col, width, alpha})
}
func (c *canvas) text(x, y float64, s string, size float64, anchor string, col rgb) {
	c.shapes = append(c.shapes, textShape{x, y, s, size, anchor, col, false, 0})
}
func (c *canvas) bold(x, y float64, s string, size float64, anchor string) {
	c.shapes = append(c.shapes, textShape{x, y, s, size, anchor, black, true, 0})
}

func esc(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch r {
		case '&':
			b.WriteString("&amp;")
		case '<':
			b.WriteString("&lt;")
		case '>':
			b.WriteString("&gt;")
		case '"':
			b.WriteString("&quot;")
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

func f1(x float64) string { return trimZeros(fmt.Sprintf("%.1f", x)) }

func trimZeros(s string) string {
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if s == "-0" {
		s = "0"
	}
	return s
}

// svg renders the canvas as a standalone SVG document (no external
// references; text in the generic sans-serif family).
func (c *canvas) svg() []byte {
	var b bytes.Buffer
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%s" height="%s" viewBox="0 0 %s %s" role="img" aria-label="%s" font-family="sans-serif">`+"\n",
		f1(c.w), f1(c.h), f1(c.w), f1(c.h), esc(c.title))
	fmt.Fprintf(&b, "<title>%s</title>\n", esc(c.title))
	fmt.Fprintf(&b, `<rect x="0" y="0" width="%s" height="%s" fill="#ffffff"/>`+"\n", f1(c.w), f1(c.h))
	for _, s := range c.shapes {
		switch s := s.(type) {
		case rectShape:
			stroke := ""
			if s.stroke != nil {
				stroke = fmt.Sprintf(` stroke="%s" stroke-width="1"`, s.stroke.hex())
			}
			if s.tip != "" {
				fmt.Fprintf(&b, `<rect x="%s" y="%s" width="%s" height="%s" fill="%s"%s><title>%s</title></rect>`+"\n",
					f1(s.x), f1(s.y), f1(s.w), f1(s.h), s.fill.hex(), stroke, esc(s.tip))
			} else {
				fmt.Fprintf(&b, `<rect x="%s" y="%s" width="%s" height="%s" fill="%s"%s/>`+"\n",
					f1(s.x), f1(s.y), f1(s.w), f1(s.h), s.fill.hex(), stroke)
			}
		case circleShape:
			if s.ring {
				fmt.Fprintf(&b, `<circle cx="%s" cy="%s" r="%s" fill="none" stroke="%s" stroke-width="1"/>`+"\n",
					f1(s.x), f1(s.y), f1(s.r), s.fill.hex())
				continue
			}
			op := ""
			if s.alpha < 1 {
				op = fmt.Sprintf(` fill-opacity="%.2f"`, s.alpha)
			}
			fmt.Fprintf(&b, `<circle cx="%s" cy="%s" r="%s" fill="%s"%s/>`+"\n", f1(s.x), f1(s.y), f1(s.r), s.fill.hex(), op)
		case lineShape:
			var pts []string
			for i := 0; i+1 < len(s.pts); i += 2 {
				pts = append(pts, f1(s.pts[i])+","+f1(s.pts[i+1]))
			}
			op := ""
			if s.alpha < 1 {
				op = fmt.Sprintf(` stroke-opacity="%.2f"`, s.alpha)
			}
			fmt.Fprintf(&b, `<polyline points="%s" fill="none" stroke="%s" stroke-width="%s"%s/>`+"\n",
				strings.Join(pts, " "), s.color.hex(), f1(s.width), op)
		case textShape:
			attrs := ""
			if s.bold {
				attrs += ` font-weight="bold"`
			}
			if s.rotate != 0 {
				attrs += fmt.Sprintf(` transform="rotate(%s %s %s)"`, f1(s.rotate), f1(s.x), f1(s.y))
			}
			fmt.Fprintf(&b, `<text x="%s" y="%s" font-size="%s" text-anchor="%s" fill="%s"%s>%s</text>`+"\n",
				f1(s.x), f1(s.y), f1(s.size), s.anchor, s.color.hex(), attrs, esc(s.s))
		}
	}
	b.WriteString("</svg>\n")
	return b.Bytes()
}

// pngScale is how many PNG pixels one SVG pixel becomes.
const pngScale = 2

// png rasterises the shapes with simple coverage-based anti-aliasing;
// text is drawn with the 5×7 bitmap font of font.go.
func (c *canvas) png() ([]byte, error) {
	w, h := int(math.Ceil(c.w*pngScale)), int(math.Ceil(c.h*pngScale))
	// The bitmap font is monospaced and can run wider than the SVG's
	// proportional text: widen the image to fit every label.
	for _, s := range c.shapes {
		if t, ok := s.(textShape); ok && t.rotate == 0 {
			right := int(math.Round(t.x*pngScale)) + textWidth(t.s, t.size)
			switch t.anchor {
			case "middle":
				right -= textWidth(t.s, t.size) / 2
			case "end":
				right -= textWidth(t.s, t.size)
			}
			w = max(w, right+2*pngScale)
		}
	}
	img := image.NewNRGBA(image.Rect(0, 0, w, h))
	for i := range img.Pix {
		img.Pix[i] = 0xff
	}
	blend := func(x, y int, col rgb, a float64) {
		if x < 0 || y < 0 || x >= w || y >= h || a <= 0 {
			return
		}
		if a > 1 {
			a = 1
		}
		o := img.PixOffset(x, y)
		p := img.Pix[o : o+3 : o+3]
		p[0] = uint8(math.Round(float64(p[0])*(1-a) + float64(col.R)*a))
		p[1] = uint8(math.Round(float64(p[1])*(1-a) + float64(col.G)*a))
		p[2] = uint8(math.Round(float64(p[2])*(1-a) + float64(col.B)*a))
	}
	for _, s := range c.shapes {
		switch s := s.(type) {
		case rectShape:
			x0, y0 := int(math.Round(s.x*pngScale)), int(math.Round(s.y*pngScale))
			x1, y1 := int(math.Round((s.x+s.w)*pngScale)), int(math.Round((s.y+s.h)*pngScale))
			for y := y0; y < y1; y++ {
				for x := x0; x < x1; x++ {
					col := s.fill
					if s.stroke != nil && (x < x0+pngScale || x >= x1-pngScale || y < y0+pngScale || y >= y1-pngScale) {
						col = *s.stroke
					}
					blend(x, y, col, 1)
				}
			}
		case circleShape:
			cx, cy, r := s.x*pngScale, s.y*pngScale, s.r*pngScale
			for y := int(cy - r - 1); y <= int(cy+r+1); y++ {
				for x := int(cx - r - 1); x <= int(cx+r+1); x++ {
					d := math.Hypot(float64(x)+0.5-cx, float64(y)+0.5-cy)
					var cov float64
					if s.ring {
						cov = clamp01(pngScale/2.0 + 0.5 - math.Abs(d-r))
					} else {
						cov = clamp01(r - d + 0.5)
					}
					blend(x, y, s.fill, cov*s.alpha)
				}
			}
		case textShape:
			drawText(s, blend)
		case lineShape:
			hw := s.width * pngScale / 2
			for i := 0; i+3 < len(s.pts); i += 2 {
				ax, ay := s.pts[i]*pngScale, s.pts[i+1]*pngScale
				bx, by := s.pts[i+2]*pngScale, s.pts[i+3]*pngScale
				minX, maxX := int(math.Min(ax, bx)-hw-1), int(math.Max(ax, bx)+hw+1)
				minY, maxY := int(math.Min(ay, by)-hw-1), int(math.Max(ay, by)+hw+1)
				for y := minY; y <= maxY; y++ {
					for x := minX; x <= maxX; x++ {
						d := segDist(float64(x)+0.5, float64(y)+0.5, ax, ay, bx, by)
						cov := clamp01(hw - d + 0.5)
						if cov > 0 {
							blend(x, y, s.color, cov*s.alpha)
						}
					}
				}
			}
		}
	}
	var buf bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.DefaultCompression}
	if err := enc.Encode(&buf, img); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func clamp01(x float64) float64 { return math.Max(0, math.Min(1, x)) }

// segDist is the distance from (px, py) to the segment a–b.
func segDist(px, py, ax, ay, bx, by float64) float64 {
	dx, dy := bx-ax, by-ay
	l2 := dx*dx + dy*dy
	t := 0.0
	if l2 > 0 {
		t = clamp01(((px-ax)*dx + (py-ay)*dy) / l2)
	}
	return math.Hypot(px-(ax+t*dx), py-(ay+t*dy))
}

// drawText draws a text shape with the bitmap font; rotated text (−90°)
// reads upwards as in the SVG.
func drawText(t textShape, blend func(x, y int, col rgb, a float64)) {
	sc := glyphScale(t.size)
	w := textWidth(t.s, t.size)
	x0 := int(math.Round(t.x * pngScale))
	y0 := int(math.Round(t.y * pngScale))
	off := 0
	switch t.anchor {
	case "middle":
		off = -w / 2
	case "end":
		off = -w
	}
	k := 0
	for _, r := range t.s {
		rows := glyph(r)
		drop := 0
		if descenders[r] {
			drop = 2
		}
		for gy, row := range rows {
			for gx := 0; gx < 5; gx++ {
				if row[gx] != '#' {
					continue
				}
				// Cell position along the text (u) and from its top (v),
				// relative to the anchor on the baseline.
				u := off + (6*k+gx)*sc
				v := (gy + drop - 7) * sc
				reps := 1
				if t.bold {
					reps = 2
				}
				for b := 0; b < reps; b++ {
					for dy := 0; dy < sc; dy++ {
						for dx := 0; dx < sc; dx++ {
							px, py := x0+u+dx+b, y0+v+dy
							if t.rotate != 0 {
								px, py = x0+v+dy, y0-(u+dx+b)
							}
							blend(px, py, t.color, 1)
						}
					}
				}
			}
		}
		k++
	}
}
