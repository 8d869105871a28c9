package report

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"testing"
)

// TestPalettePNG encodes an invented image (scaffolding: the expected
// values follow from the construction): a white field with a dark line,
// and a band of 300 distinct greys standing for anti-aliased edges. The
// result keeps the size, at most paletteSize colours, the white and the
// line exactly, and maps each grey to a palette colour no farther from it
// than white or the line.
func TestPalettePNG(t *testing.T) {
	const w, h = 400, 100
	src := image.NewRGBA(image.Rect(0, 0, w, h))
	white, ink := color.RGBA{255, 255, 255, 255}, color.RGBA{0x22, 0x2b, 0x36, 255}
	for y := 0; y < h; y++ {
		for x := 0; x < w; x++ {
			c := white
			switch {
			case y == 50:
				c = ink
			case y == 10 && x < 300:
				g := uint8(x * 255 / 300)
				c = color.RGBA{g, g, uint8(255 - int(g)/2), 255}
			}
			src.SetRGBA(x, y, c)
		}
	}
	out, err := palettePNG(src, paletteSize)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(out))
	if err != nil {
		t.Fatal(err)
	}
	p, ok := img.(*image.Paletted)
	if !ok {
		t.Fatalf("result is %T, want a paletted image", img)
	}
	if p.Bounds() != src.Bounds() || len(p.Palette) > paletteSize {
		t.Fatalf("bounds %v, %d colours", p.Bounds(), len(p.Palette))
	}
	if got := color.RGBAModel.Convert(p.At(0, 0)); got != white {
		t.Errorf("white became %v", got)
	}
	if got := color.RGBAModel.Convert(p.At(7, 50)); got != ink {
		t.Errorf("the line became %v", got)
	}
	dist := func(a, b color.RGBA) int {
		dr, dg, db := int(a.R)-int(b.R), int(a.G)-int(b.G), int(a.B)-int(b.B)
		return dr*dr + dg*dg + db*db
	}
	for x := 0; x < 300; x++ {
		orig := src.RGBAAt(x, 10)
		got := color.RGBAModel.Convert(p.At(x, 10)).(color.RGBA)
		if d := dist(orig, got); d > dist(orig, white) || d > dist(orig, ink) {
			t.Errorf("grey %v at x=%d became %v, farther than white or the line", orig, x, got)
			break
		}
	}
}

// BenchmarkPalettePNG measures the palette encoding of a figure-sized image.
func BenchmarkPalettePNG(b *testing.B) {
	src := image.NewRGBA(image.Rect(0, 0, 1440, 792))
	for i := range src.Pix {
		src.Pix[i] = 255
	}
	for x := 100; x < 1300; x++ {
		for y := 100 + x%300; y < 700; y += 7 {
			src.SetRGBA(x, y, color.RGBA{uint8(x), uint8(y), 0x80, 255})
		}
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := palettePNG(src, paletteSize); err != nil {
			b.Fatal(err)
		}
	}
}
