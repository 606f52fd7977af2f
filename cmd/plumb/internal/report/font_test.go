package report

import (
	"bytes"
	"image/png"
	"testing"
)

// Text drawn into a PNG sets pixels inside its box and none outside it,
// and the image widens when a label would not fit.
func TestPNGText(t *testing.T) {
	c := newCanvas(40, 20, "t")
	c.text(2, 15, "perplexity 30 (IQR 0.01)", 11, "start", black)
	b, err := c.png()
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	want := 2*pngScale + textWidth("perplexity 30 (IQR 0.01)", 11)
	if img.Bounds().Dx() < want {
		t.Errorf("width %d, want at least %d to fit the label", img.Bounds().Dx(), want)
	}
	dark := 0
	for y := 0; y < img.Bounds().Dy(); y++ {
		for x := 0; x < img.Bounds().Dx(); x++ {
			r, _, _, _ := img.At(x, y).RGBA()
			if r < 0x8000 {
				dark++
				if y >= 15*pngScale+2*glyphScale(11) || y < 15*pngScale-7*glyphScale(11) { // two rows of descender
					t.Fatalf("ink at (%d, %d), outside the text line", x, y)
				}
			}
		}
	}
	if dark < 100 {
		t.Errorf("only %d dark pixels: text not drawn", dark)
	}
}

func TestEveryGlyphDistinct(t *testing.T) {
	seen := map[string]rune{}
	for r, g := range glyphs {
		if r == '–' || r == '−' || r == '-' || r == 'θ' || r == 'O' || r == '0' {
			continue // dashes share one glyph; θ and O, 0 are close by design
		}
		if o, dup := seen[g]; dup {
			t.Errorf("glyphs %q and %q are identical", r, o)
		}
		seen[g] = r
	}
}
