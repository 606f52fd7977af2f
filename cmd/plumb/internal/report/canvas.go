package report

import (
	"bytes"
	"encoding/xml"
	"fmt"
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
	// sw is the stroke width in points (0: 0.5).
	sw float64
}

func (r rectShape) strokeWidth() float64 {
	if r.sw > 0 {
		return r.sw
	}
	return 0.5
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
	dash  []float64 // on, off lengths in points; nil for a solid line
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
	c.shapes = append(c.shapes, rectShape{x, y, w, h, fill, stroke, tip, 0})
}

// outline draws a rectangle's frame only, sw points wide.
func (c *canvas) outline(x, y, w, h float64, col rgb, sw float64) {
	c.shapes = append(c.shapes, lineShape{[]float64{x, y, x + w, y, x + w, y + h, x, y + h, x, y}, col, sw, 1, nil})
}

// dashed draws a dashed polyline.
func (c *canvas) dashed(col rgb, width float64, dash []float64, pts ...float64) {
	c.shapes = append(c.shapes, lineShape{append([]float64(nil), pts...), col, width, 1, dash})
}

// rotated draws text turned by deg degrees (clockwise, as in SVG) about
// (x, y).
func (c *canvas) rotated(x, y float64, s string, size float64, anchor string, col rgb, deg float64) {
	c.shapes = append(c.shapes, textShape{x, y, s, size, anchor, col, false, deg})
}
func (c *canvas) circle(x, y, r float64, fill rgb, alpha float64) {
	c.shapes = append(c.shapes, circleShape{x, y, r, fill, alpha, false})
}
func (c *canvas) ring(x, y, r float64, col rgb) {
	c.shapes = append(c.shapes, circleShape{x, y, r, col, 1, true})
}
func (c *canvas) line(col rgb, width, alpha float64, pts ...float64) {
	c.shapes = append(c.shapes, lineShape{append([]float64(nil), pts...), col, width, alpha, nil})
}
func (c *canvas) text(x, y float64, s string, size float64, anchor string, col rgb) {
	c.shapes = append(c.shapes, textShape{x, y, s, size, anchor, col, false, 0})
}
func (c *canvas) bold(x, y float64, s string, size float64, anchor string) {
	c.shapes = append(c.shapes, textShape{x, y, s, size, anchor, black, true, 0})
}

// esc escapes text for SVG content and attribute values (encoding/xml's
// escaper: & < > " ' and control characters).
func esc(s string) string {
	var b strings.Builder
	if err := xml.EscapeText(&b, []byte(s)); err != nil {
		panic("report: " + err.Error()) // a strings.Builder never fails
	}
	return b.String()
}

func f1(x float64) string { return trimZeros(fmt.Sprintf("%.1f", x)) }

// f2 writes a coordinate in points to 0.01 pt.
func f2(x float64) string { return trimZeros(fmt.Sprintf("%.2f", x)) }

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
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%spt" height="%spt" viewBox="0 0 %s %s" role="img" aria-label="%s" font-family="'Liberation Sans', Arial, Helvetica, sans-serif">`+"\n",
		f1(c.w), f1(c.h), f1(c.w), f1(c.h), esc(c.title))
	fmt.Fprintf(&b, "<title>%s</title>\n", esc(c.title))
	fmt.Fprintf(&b, `<rect x="0" y="0" width="%s" height="%s" fill="#ffffff"/>`+"\n", f1(c.w), f1(c.h))
	for _, s := range c.shapes {
		switch s := s.(type) {
		case rectShape:
			stroke := ""
			if s.stroke != nil {
				stroke = fmt.Sprintf(` stroke="%s" stroke-width="%s"`, s.stroke.hex(), f2(s.strokeWidth()))
			}
			if s.tip != "" {
				fmt.Fprintf(&b, `<rect x="%s" y="%s" width="%s" height="%s" fill="%s"%s><title>%s</title></rect>`+"\n",
					f2(s.x), f2(s.y), f2(s.w), f2(s.h), s.fill.hex(), stroke, esc(s.tip))
			} else {
				fmt.Fprintf(&b, `<rect x="%s" y="%s" width="%s" height="%s" fill="%s"%s/>`+"\n",
					f2(s.x), f2(s.y), f2(s.w), f2(s.h), s.fill.hex(), stroke)
			}
		case circleShape:
			if s.ring {
				fmt.Fprintf(&b, `<circle cx="%s" cy="%s" r="%s" fill="none" stroke="%s" stroke-width="0.6"/>`+"\n",
					f2(s.x), f2(s.y), f2(s.r), s.fill.hex())
				continue
			}
			op := ""
			if s.alpha < 1 {
				op = fmt.Sprintf(` fill-opacity="%.2f"`, s.alpha)
			}
			fmt.Fprintf(&b, `<circle cx="%s" cy="%s" r="%s" fill="%s"%s/>`+"\n", f2(s.x), f2(s.y), f2(s.r), s.fill.hex(), op)
		case lineShape:
			var pts []string
			for i := 0; i+1 < len(s.pts); i += 2 {
				pts = append(pts, f2(s.pts[i])+","+f2(s.pts[i+1]))
			}
			op := ""
			if s.alpha < 1 {
				op = fmt.Sprintf(` stroke-opacity="%.2f"`, s.alpha)
			}
			if len(s.dash) > 0 {
				var ds []string
				for _, d := range s.dash {
					ds = append(ds, f2(d))
				}
				op += ` stroke-dasharray="` + strings.Join(ds, " ") + `"`
			}
			fmt.Fprintf(&b, `<polyline points="%s" fill="none" stroke="%s" stroke-width="%s"%s/>`+"\n",
				strings.Join(pts, " "), s.color.hex(), f2(s.width), op)
		case textShape:
			attrs := ""
			if s.bold {
				attrs += ` font-weight="bold"`
			}
			if s.rotate != 0 {
				attrs += fmt.Sprintf(` transform="rotate(%s %s %s)"`, f1(s.rotate), f1(s.x), f1(s.y))
			}
			fmt.Fprintf(&b, `<text x="%s" y="%s" font-size="%s" text-anchor="%s" fill="%s"%s>%s</text>`+"\n",
				f2(s.x), f2(s.y), f2(s.size), s.anchor, s.color.hex(), attrs, esc(s.s))
		}
	}
	b.WriteString("</svg>\n")
	return b.Bytes()
}

// pngScale is how many PNG pixels one SVG pixel becomes.
func clamp01(x float64) float64 { return math.Max(0, math.Min(1, x)) }
