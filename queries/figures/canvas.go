package figures

import (
	"image"
	"image/color"
	"image/draw"
	"math"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"
)

// pngCanvas is the raster canvas of gonum plot with a faster way to draw
// upright text. vgimg places every glyph through a general affine
// resampling (bilinear), even when the text is neither rotated nor scaled;
// that was a quarter of a figure's drawing. When the canvas transform is a
// whole-pixel translation, pngCanvas composites each glyph's coverage mask
// straight onto the image (image/draw, Over), which at such positions gives
// the same pixels; rotated or scaled text (the y-axis labels) goes through
// vgimg as before.
type pngCanvas struct {
	*vgimg.Canvas
	img   *image.RGBA
	state canvasState
	saved []canvasState
	// direct counts the strings drawn without vgimg (for tests).
	direct int
}

// canvasState is the part of the drawing state pngCanvas follows: the
// colour and the transform, if it is a translation, in pixels.
type canvasState struct {
	col      color.Color
	dx, dy   float64 // translation in pixels, y up
	moreThan bool    // rotated or scaled: text goes through vgimg
}

// newPNGCanvas returns a white canvas of w × h at dpi dots per inch.
func newPNGCanvas(w, h vg.Length, dpi int) *pngCanvas {
	c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(dpi), vgimg.UseBackgroundColor(color.White))
	img, _ := c.Image().(*image.RGBA) // nil (never, with vgimg's own image): all text through vgimg
	return &pngCanvas{Canvas: c, img: img, state: canvasState{col: color.Black, moreThan: img == nil}}
}

func (c *pngCanvas) SetColor(col color.Color) {
	if col == nil {
		col = color.Black
	}
	c.state.col = col
	c.Canvas.SetColor(col)
}

func (c *pngCanvas) Translate(pt vg.Point) {
	c.state.dx += pt.X.Dots(c.DPI())
	c.state.dy += pt.Y.Dots(c.DPI())
	c.Canvas.Translate(pt)
}

func (c *pngCanvas) Rotate(t float64) {
	if t != 0 {
		c.state.moreThan = true
	}
	c.Canvas.Rotate(t)
}

func (c *pngCanvas) Scale(x, y float64) {
	if x != 1 || y != 1 {
		c.state.moreThan = true
	}
	c.Canvas.Scale(x, y)
}

func (c *pngCanvas) Push() {
	c.saved = append(c.saved, c.state)
	c.Canvas.Push()
}

func (c *pngCanvas) Pop() {
	if n := len(c.saved); n > 0 {
		c.state, c.saved = c.saved[n-1], c.saved[:n-1]
	}
	c.Canvas.Pop()
}

// FillString draws text with its baseline starting at pt, as
// vgimg.Canvas.FillString does.
func (c *pngCanvas) FillString(f font.Face, pt vg.Point, text string) {
	s := c.state
	if s.moreThan || s.dx != math.Trunc(s.dx) || s.dy != math.Trunc(s.dy) {
		c.Canvas.FillString(f, pt, text)
		return
	}
	if f.Font.Size == 0 {
		return
	}
	face := f.FontFace(c.DPI())
	defer face.Close()
	_, h := c.Size()
	x := pt.X.Dots(c.DPI()) + s.dx
	y := h.Dots(c.DPI()) - pt.Y.Dots(c.DPI()) - s.dy // pixel rows run down
	drawGlyphs(c.img, image.NewUniform(s.col), face, x, y, text)
	c.direct++
}

// drawGlyphs composites the glyphs of text onto dst in src's colour, the
// pen starting at x, y in pixels (y down), advancing and kerning as
// golang.org/x/image/font.Drawer does; a rune the face lacks is skipped.
// The type parameters stand for that package's face, point and 26.6
// fixed-point types, inferred from the face, so the project needs no
// import of its own for them.
func drawGlyphs[F interface {
	Glyph(dot P, r rune) (image.Rectangle, image.Image, image.Point, A, bool)
	Kern(r0, r1 rune) A
}, P ~struct{ X, Y A }, A ~int32](dst *image.RGBA, src image.Image, face F, x, y float64, text string) {
	dx, dy := A(math.Round(x*64)), A(math.Round(y*64))
	prev := rune(-1)
	for _, r := range text {
		if prev >= 0 {
			dx += face.Kern(prev, r)
		}
		dr, mask, maskp, advance, ok := face.Glyph(P{X: dx, Y: dy}, r)
		if !ok {
			continue
		}
		draw.DrawMask(dst, dr, src, image.Point{}, mask, maskp, draw.Over)
		dx += advance
		prev = r
	}
}
