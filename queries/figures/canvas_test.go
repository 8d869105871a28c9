package figures

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"testing"

	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// TestCanvasTextAsVgimg draws each figure of the benchmark station on
// gonum plot's own raster canvas (the reference: it resamples every glyph)
// and on pngCanvas, which composites upright glyphs directly. The two
// images must agree pixel for pixel up to rounding: no channel more than
// 2 of 255 apart.
func TestCanvasTextAsVgimg(t *testing.T) {
	for _, f := range benchStation().Figures() {
		ref := vgimg.NewWith(vgimg.UseWH(f.Width, f.Height), vgimg.UseDPI(pngDPI), vgimg.UseBackgroundColor(color.White))
		f.draw(draw.New(ref))
		fast := newPNGCanvas(f.Width, f.Height, pngDPI)
		f.draw(draw.New(fast))
		a, b := ref.Image().(*image.RGBA), fast.img
		if a.Bounds() != b.Bounds() {
			t.Fatalf("%s: bounds %v and %v", f.Name, a.Bounds(), b.Bounds())
		}
		worst, where, differ := 0, image.Point{}, 0
		for y := 0; y < a.Bounds().Dy(); y++ {
			for x := 0; x < a.Bounds().Dx(); x++ {
				i, off := a.PixOffset(x, y), 0
				for k := 0; k < 4; k++ {
					off = max(off, absDiff(a.Pix[i+k], b.Pix[i+k]))
				}
				if off > 0 {
					differ++
				}
				if off > worst {
					worst, where = off, image.Pt(x, y)
				}
			}
		}
		t.Logf("%s: %d pixels differ, worst %d at %v; %d strings drawn directly", f.Name, differ, worst, where, fast.direct)
		if worst > 2 {
			t.Errorf("%s: a channel differs by %d at %v", f.Name, worst, where)
		}
		if fast.direct < 10 {
			t.Errorf("%s: only %d strings drawn directly", f.Name, fast.direct)
		}
	}
}

// TestRenderPNGLooksTheSame compares each figure as written (RenderPNG:
// 64 colours, decoded by image/png) with gonum plot's own full-colour
// drawing: the palette may only move anti-aliased edge pixels, so fewer
// than 0.5 % of the pixels may be more than 48 of 255 off in a channel
// (measured on the validation store's figures: at most 0.14 % beyond 32).
func TestRenderPNGLooksTheSame(t *testing.T) {
	for _, f := range benchStation().Figures() {
		ref := vgimg.NewWith(vgimg.UseWH(f.Width, f.Height), vgimg.UseDPI(pngDPI), vgimg.UseBackgroundColor(color.White))
		f.draw(draw.New(ref))
		want := ref.Image().(*image.RGBA)
		var buf bytes.Buffer
		if err := f.RenderPNG(&buf, PNGFast); err != nil {
			t.Fatal(err)
		}
		got, err := png.Decode(&buf)
		if err != nil {
			t.Fatal(err)
		}
		if got.Bounds() != want.Bounds() {
			t.Fatalf("%s: bounds %v, want %v", f.Name, got.Bounds(), want.Bounds())
		}
		far := 0
		for y := 0; y < want.Bounds().Dy(); y++ {
			for x := 0; x < want.Bounds().Dx(); x++ {
				a, b := want.RGBAAt(x, y), color.RGBAModel.Convert(got.At(x, y)).(color.RGBA)
				d := max(absDiff(a.R, b.R), absDiff(a.G, b.G), absDiff(a.B, b.B))
				if d > 48 {
					far++
				}
			}
		}
		n := want.Bounds().Dx() * want.Bounds().Dy()
		t.Logf("%s: %.3f %% of pixels more than 48 off", f.Name, 100*float64(far)/float64(n))
		if far*200 > n {
			t.Errorf("%s: %d of %d pixels more than 48 off", f.Name, far, n)
		}
	}
}

func absDiff(a, b uint8) int { return max(int(a)-int(b), int(b)-int(a)) }
