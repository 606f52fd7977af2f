package report

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"strings"
	"sync"
	"time"

	"codeberg.org/go-pdf/fpdf"
	xfont "golang.org/x/image/font"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/font/liberation"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgpdf"
)

// Figures are laid out in points (1/72 inch) and written three ways from
// one list of shapes: SVG by our own writer (labels as text in the
// Liberation Sans face, cell tooltips as <title>), PDF through gonum's
// vgpdf (vector, fonts embedded) and PNG through gonum's vgimg at pngDPI.
// Text is set in Liberation Sans (metric-compatible with Arial and
// Helvetica), shipped with gonum's plot module, so the PNG and PDF look
// the same on every machine.
const (
	// fullWidth is a two-column journal figure (7 in, 178 mm); colWidth a
	// one-column figure (3.4 in, 86 mm).
	fullWidth = 504.0
	colWidth  = 246.0
	// Text sizes in points: body text of a figure, titles, and the
	// smallest text (tick labels). Journals commonly ask for 6–8 pt at
	// print size (common practice, no single source).
	textSize  = 7.0
	titleSize = 8.0
	tickSize  = 6.0
	// pngDPI is the PNG's resolution: 300 dpi, what journals commonly ask
	// for halftones (common practice).
	pngDPI = 300
)

var (
	fontOnce  sync.Once
	fontCache *font.Cache
)

// face returns Liberation Sans (bold if asked) at the size in points.
func face(size float64, bold bool) font.Face {
	fontOnce.Do(func() { fontCache = font.NewCache(liberation.Collection()) })
	f := font.Font{Typeface: "Liberation", Variant: "Sans", Size: vg.Length(size)}
	if bold {
		f.Weight = xfont.WeightBold
	}
	return fontCache.Lookup(f, vg.Length(size))
}

// textWidth is the advance width in points of s set in Liberation Sans.
func textWidth(s string, size float64, bold bool) float64 {
	f := face(size, bold)
	return float64(f.Width(s))
}

// pdfText keeps what vgpdf can set: its fonts use the Windows-1252 code
// page, so any other character is drawn as "?" (the SVG keeps the text as
// it is).
func pdfText(s string) string {
	ok := func(r rune) bool {
		if r < 0x80 || (r >= 0xa0 && r <= 0xff) {
			return true
		}
		return strings.ContainsRune("€‚ƒ„…†‡ˆ‰Š‹ŒŽ‘’“”•–—˜™š›œžŸ", r)
	}
	return strings.Map(func(r rune) rune {
		if ok(r) {
			return r
		}
		return '?'
	}, s)
}

func (c rgb) nrgba(alpha float64) color.NRGBA {
	return color.NRGBA{c.R, c.G, c.B, uint8(math.Round(255 * clamp01(alpha)))}
}

// drawTo replays the shapes onto a gonum vg canvas (y grows upwards there).
func (c *canvas) drawTo(dc vg.Canvas, forPDF bool) {
	pt := func(x, y float64) vg.Point { return vg.Point{X: vg.Length(x), Y: vg.Length(c.h - y)} }
	for _, s := range c.shapes {
		switch s := s.(type) {
		case rectShape:
			var p vg.Path
			p.Move(pt(s.x, s.y))
			p.Line(pt(s.x+s.w, s.y))
			p.Line(pt(s.x+s.w, s.y+s.h))
			p.Line(pt(s.x, s.y+s.h))
			p.Close()
			dc.SetColor(s.fill.nrgba(1))
			dc.Fill(p)
			if s.stroke != nil {
				dc.SetColor(s.stroke.nrgba(1))
				dc.SetLineWidth(vg.Length(s.strokeWidth()))
				dc.SetLineDash(nil, 0)
				dc.Stroke(p)
			}
		case circleShape:
			var p vg.Path
			p.Move(pt(s.x+s.r, s.y))
			p.Arc(pt(s.x, s.y), vg.Length(s.r), 0, 2*math.Pi)
			p.Close()
			if s.ring {
				dc.SetColor(s.fill.nrgba(1))
				dc.SetLineWidth(0.6)
				dc.SetLineDash(nil, 0)
				dc.Stroke(p)
			} else {
				dc.SetColor(s.fill.nrgba(s.alpha))
				dc.Fill(p)
			}
		case lineShape:
			if len(s.pts) < 4 {
				continue
			}
			var p vg.Path
			p.Move(pt(s.pts[0], s.pts[1]))
			for i := 2; i+1 < len(s.pts); i += 2 {
				p.Line(pt(s.pts[i], s.pts[i+1]))
			}
			dc.SetColor(s.color.nrgba(s.alpha))
			dc.SetLineWidth(vg.Length(s.width))
			if len(s.dash) > 0 {
				d := make([]vg.Length, len(s.dash))
				for i, v := range s.dash {
					d[i] = vg.Length(v)
				}
				dc.SetLineDash(d, 0)
			} else {
				dc.SetLineDash(nil, 0)
			}
			dc.Stroke(p)
		case textShape:
			f := face(s.size, s.bold)
			txt := s.s
			if forPDF {
				txt = pdfText(txt)
				if s.bold {
					// vgpdf registers a font under its name and then asks
					// for it with style "B", which fpdf files under another
					// key; naming the bold face as a variant of its own
					// with normal weight keeps the two in step.
					f.Font.Variant, f.Font.Weight = "SansBold", xfont.WeightNormal
				}
			}
			w := float64(f.Width(txt))
			dx := 0.0
			switch s.anchor {
			case "middle":
				dx = -w / 2
			case "end":
				dx = -w
			}
			dc.SetColor(s.color.nrgba(1))
			dc.Push()
			dc.Translate(pt(s.x, s.y))
			if s.rotate != 0 {
				dc.Rotate(-s.rotate * math.Pi / 180)
			}
			dc.FillString(f, vg.Point{X: vg.Length(dx)}, txt)
			dc.Pop()
		}
	}
}

// pdfMu guards fpdf's process-wide default dates, which vgpdf.New reads.
var pdfMu sync.Mutex

// pdfEpoch is the creation and modification date written into every PDF:
// fixed, so that the same study gives the same bytes (fpdf would write the
// time of writing).
var pdfEpoch = time.Date(2000, 1, 1, 0, 0, 0, 0, time.UTC)

// pdf renders the canvas as a one-page vector PDF with embedded fonts.
func (c *canvas) pdf() ([]byte, error) {
	pdfMu.Lock()
	fpdf.SetDefaultCreationDate(pdfEpoch)
	fpdf.SetDefaultModificationDate(pdfEpoch)
	fpdf.SetDefaultCatalogSort(true)
	dc := vgpdf.New(vg.Length(c.w), vg.Length(c.h))
	pdfMu.Unlock()
	if err := c.paint(dc, true); err != nil {
		return nil, err
	}
	var b bytes.Buffer
	if _, err := dc.WriteTo(&b); err != nil {
		return nil, fmt.Errorf("pdf: %w", err)
	}
	return b.Bytes(), nil
}

// png renders the canvas at pngDPI on a white background.
func (c *canvas) png() ([]byte, error) {
	dc := vgimg.NewWith(vgimg.UseWH(vg.Length(c.w), vg.Length(c.h)), vgimg.UseDPI(pngDPI), vgimg.UseBackgroundColor(color.White))
	if err := c.paint(dc, false); err != nil {
		return nil, err
	}
	var b bytes.Buffer
	if _, err := (vgimg.PngCanvas{Canvas: dc}).WriteTo(&b); err != nil {
		return nil, fmt.Errorf("png: %w", err)
	}
	return b.Bytes(), nil
}

// paint replays the shapes, turning a panic inside a vg backend (they
// panic on fonts they cannot load) into an error.
func (c *canvas) paint(dc vg.Canvas, forPDF bool) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("drawing %q: %v", c.title, r)
		}
	}()
	c.drawTo(dc, forPDF)
	return nil
}
