package figures

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"testing"
)

// invented draws a white field with a dark line, a band of n distinct
// blue-greys standing for anti-aliased edges and a red block (scaffolding: the expected values follow from the construction).
func invented(w, h, n int) *image.RGBA {
	img := image.NewRGBA(image.Rect(0, 0, w, h))
	white, ink, red := color.RGBA{255, 255, 255, 255}, color.RGBA{0x22, 0x2b, 0x36, 255}, color.RGBA{0xc0, 0x20, 0x20, 255}
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			c := white
			switch {
			case y == h/2:
				c = ink
			case y == 10 && x < n:
				g := uint8(x * 255 / n)
				c = color.RGBA{g, g, uint8(255 - int(g)/2), 255}
			case x >= w-20 && y >= h-20:
				c = red
			}
			img.SetRGBA(x, y, c)
		}
	}
	return img
}

// TestPalettePNGDecodes writes images with image/png's decoder as the
// outside reference (the W3C PNG specification's colour type 3): an image
// of few colours comes back pixel for pixel; one of many keeps the most
// used exactly and maps every other to a palette colour no farther from
// it than the nearest of the kept ones.
func TestPalettePNGDecodes(t *testing.T) {
	few := invented(300, 80, 20) // white, ink, red and 20 greys
	var buf bytes.Buffer
	if err := writePalettePNG(&buf, Quantize(few, PaletteSize), PNGFast); err != nil {
		t.Fatal(err)
	}
	got, err := png.Decode(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	p, ok := got.(*image.Paletted)
	if !ok {
		t.Fatalf("decoded %T, want a paletted image", got)
	}
	if p.Bounds() != few.Bounds() {
		t.Fatalf("bounds %v, want %v", p.Bounds(), few.Bounds())
	}
	for y := 0; y < 80; y++ {
		for x := 0; x < 300; x++ {
			if c := color.RGBAModel.Convert(p.At(x, y)); c != few.RGBAAt(x, y) {
				t.Fatalf("pixel %d,%d = %v, want %v", x, y, c, few.RGBAAt(x, y))
			}
		}
	}

	many := invented(400, 100, 300)
	q := Quantize(many, PaletteSize)
	if len(q.Palette) != PaletteSize {
		t.Fatalf("%d colours, want %d", len(q.Palette), PaletteSize)
	}
	buf.Reset()
	if err := writePalettePNG(&buf, q, PNGSmallest); err != nil {
		t.Fatal(err)
	}
	got, err = png.Decode(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	dist := func(a, b color.RGBA) int {
		dr, dg, db := int(a.R)-int(b.R), int(a.G)-int(b.G), int(a.B)-int(b.B)
		return dr*dr + dg*dg + db*db
	}
	for _, pt := range []image.Point{{0, 0}, {7, 50}, {399, 99}} {
		if c := color.RGBAModel.Convert(got.At(pt.X, pt.Y)); c != many.RGBAAt(pt.X, pt.Y) {
			t.Errorf("flat colour at %v became %v", pt, c)
		}
	}
	for x := 0; x < 300; x++ {
		orig := many.RGBAAt(x, 10)
		c := color.RGBAModel.Convert(got.At(x, 10)).(color.RGBA)
		best := -1
		for _, k := range q.Palette {
			if d := dist(orig, k.(color.RGBA)); best < 0 || d < best {
				best = d
			}
		}
		if dist(orig, c) > best {
			t.Fatalf("grey %v at x=%d became %v, not the nearest palette colour", orig, x, c)
		}
	}
}

// TestPalettePNGTransparency: a palette colour with alpha gets a tRNS
// entry, so the reference decoder returns its alpha (W3C PNG, tRNS for
// colour type 3); the premultiplied colour is written unpremultiplied.
func TestPalettePNGTransparency(t *testing.T) {
	img := image.NewRGBA(image.Rect(0, 0, 4, 1))
	half := color.RGBA{0x40, 0x20, 0x00, 0x80} // premultiplied: unpremultiplied ≈ (0x7f, 0x3f, 0x00)
	img.SetRGBA(0, 0, color.RGBA{255, 255, 255, 255})
	img.SetRGBA(1, 0, half)
	img.SetRGBA(2, 0, half)
	var buf bytes.Buffer
	if err := writePalettePNG(&buf, Quantize(img, PaletteSize), PNGFast); err != nil {
		t.Fatal(err)
	}
	got, err := png.Decode(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	c := color.NRGBAModel.Convert(got.At(1, 0)).(color.NRGBA)
	if c.A != 0x80 || c.R < 0x7e || c.R > 0x80 || c.G < 0x3e || c.G > 0x40 || c.B != 0 {
		t.Errorf("translucent pixel decoded as %v", c)
	}
	if c := color.NRGBAModel.Convert(got.At(3, 0)).(color.NRGBA); c.A != 0 {
		t.Errorf("transparent pixel decoded as %v", c)
	}
	if err := writePalettePNG(&buf, image.NewPaletted(image.Rect(0, 0, 2, 2), nil), PNGFast); err == nil {
		t.Error("empty palette accepted")
	}
}
