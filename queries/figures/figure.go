package figures

import (
	"bytes"
	"context"
	"fmt"
	"image"
	"image/color"
	imagedraw "image/draw"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"

	"golang.org/x/sync/errgroup"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Formats lists the image formats Render writes.
var Formats = []string{"png", "svg"}

// pngDPI is the resolution of PNG output: 144 dots per inch, so that a
// 10 × 5.5 inch figure is 1440 × 792 pixels and stays sharp on high-density
// screens.
const pngDPI = 144

// Figure is one image: a name to file it under, a size and the drawing.
type Figure struct {
	// Name is the file stem, e.g. "USM00072403-mixing-height-monthly";
	// it holds only letters, digits, '-' and '_'.
	Name string
	// Title is the figure's heading as drawn, for captions.
	Title string
	// Width and Height are the page size.
	Width, Height vg.Length

	draw func(c draw.Canvas)
	// captioned is the figure's plot and parts when it is drawn with
	// withCaption (tests check their layout); nil otherwise.
	captioned *captioned
}

// Render writes the figure in format "png" or "svg". A PNG is an indexed-
// colour image of at most PaletteSize colours at level PNGFast (see
// RenderPNG). An unknown format is an error and nothing is written.
func (f *Figure) Render(w io.Writer, format string) error {
	switch format {
	case "png":
		return f.RenderPNG(w, PNGFast)
	case "svg":
		cv := vgsvg.New(f.Width, f.Height)
		dc := draw.New(cv)
		// The SVG canvas has no background of its own.
		dc.FillPolygon(color.White, []vg.Point{{X: 0, Y: 0}, {X: f.Width, Y: 0}, {X: f.Width, Y: f.Height}, {X: 0, Y: f.Height}})
		f.draw(dc)
		var buf bytes.Buffer
		if _, err := cv.WriteTo(&buf); err != nil {
			return fmt.Errorf("render %s as svg: %w", f.Name, err)
		}
		_, err := w.Write(buf.Bytes())
		return err
	default:
		return fmt.Errorf("unknown image format %q (png or svg)", format)
	}
}

// RenderPNG writes the figure as a PNG at pngDPI with at most PaletteSize
// colours (Quantize), compressed at zlib level (PNGFast, PNGSmallest, or
// 1 to 9).
func (f *Figure) RenderPNG(w io.Writer, level int) error {
	cv := newPNGCanvas(f.Width, f.Height, pngDPI)
	f.draw(draw.New(cv))
	if cv.img == nil {
		return fmt.Errorf("render %s as png: canvas is %T, not RGBA", f.Name, cv.Image())
	}
	if err := writePalettePNG(w, Quantize(cv.img, PaletteSize), level); err != nil {
		return fmt.Errorf("render %s: %w", f.Name, err)
	}
	return nil
}

// Image draws the figure at dpi dots per inch (Render's PNGs use 144)
// on white and returns the pixels, for a caller that encodes them itself
// (the report's palette PNGs), so that no PNG is encoded and decoded on
// the way.
func (f *Figure) Image(dpi float64) *image.RGBA {
	cv := newPNGCanvas(f.Width, f.Height, int(dpi))
	f.draw(draw.New(cv))
	if cv.img != nil {
		return cv.img
	}
	img := cv.Image()
	rgba := image.NewRGBA(img.Bounds())
	imagedraw.Draw(rgba, rgba.Bounds(), img, img.Bounds().Min, imagedraw.Src)
	return rgba
}

// Colours of the figures. Hours take hourColors in order of nominal hour;
// eight are distinct, enough for 3-hourly launches.
var (
	ink         = color.RGBA{0x22, 0x2b, 0x36, 0xff}
	gridInk     = color.RGBA{0xd5, 0xdb, 0xe1, 0xff}
	thetaInk    = color.RGBA{0x8c, 0x2d, 0x19, 0xff}
	moistureInk = color.RGBA{0x1c, 0x6e, 0x5a, 0xff}
	// Shading of layers in the single-sounding figure (premultiplied alpha).
	surfaceInversionFill  = color.NRGBA{0xc9, 0x7b, 0x1e, 0x60}
	elevatedInversionFill = color.NRGBA{0xe3, 0xb5, 0x4a, 0x50}
	mixedLayerFill        = color.NRGBA{0x4f, 0x8f, 0xc0, 0x48}
	hourColors            = []color.Color{
		color.RGBA{0x2f, 0x4b, 0x7c, 0xff}, // first hour (00 UTC at most stations)
		color.RGBA{0xd0, 0x6f, 0x2a, 0xff}, // second hour (12 UTC)
		color.RGBA{0x6a, 0x8f, 0x3a, 0xff},
		color.RGBA{0x8e, 0x5a, 0x9b, 0xff},
		color.RGBA{0x7a, 0x7a, 0x7a, 0xff},
		color.RGBA{0x1f, 0x8a, 0x8a, 0xff}, // a station with more hours than five (3-hourly launches)
		color.RGBA{0xa8, 0x32, 0x4a, 0xff},
		color.RGBA{0xc9, 0xa2, 0x27, 0xff},
	}
	seasonColors = map[string]color.Color{
		"DJF": color.RGBA{0x3b, 0x6e, 0xa5, 0xff},
		"MAM": color.RGBA{0x5c, 0x9a, 0x4b, 0xff},
		"JJA": color.RGBA{0xd0, 0x8c, 0x2a, 0xff},
		"SON": color.RGBA{0x9b, 0x4f, 0x3c, 0xff},
	}
)

// hourColor returns the colour of the i-th nominal hour shown.
func hourColor(i int) color.Color { return hourColors[i%len(hourColors)] }

// newPlot returns a plot in the house style: light grid, dark ink.
func newPlot(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	// Every canvas starts white (Render), so the plot does not paint its
	// own background: on a PNG that fill was a third of the drawing time.
	p.BackgroundColor = nil
	p.Title.Text = title
	p.Title.TextStyle.Font.Size = vg.Points(12)
	p.Title.Padding = vg.Points(6)
	p.X.Label.Text, p.Y.Label.Text = xLabel, yLabel
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font.Size = vg.Points(10.5)
		a.Label.TextStyle.Color = ink
		a.Tick.Label.Font.Size = vg.Points(9)
		a.Tick.Label.Color = ink
		a.Color, a.Tick.Color = ink, ink
	}
	p.Legend.TextStyle.Font.Size = vg.Points(9)
	p.Add(&grid{})
	return p
}

// grid draws light horizontal and vertical lines at the major ticks.
type grid struct{ vertical bool }

func (g *grid) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	sty := draw.LineStyle{Color: gridInk, Width: vg.Points(0.5)}
	for _, t := range p.Y.Tick.Marker.Ticks(p.Y.Min, p.Y.Max) {
		if t.IsMinor() || t.Value < p.Y.Min || t.Value > p.Y.Max {
			continue
		}
		c.StrokeLine2(sty, c.Min.X, trY(t.Value), c.Max.X, trY(t.Value))
	}
	if !g.vertical {
		return
	}
	for _, t := range p.X.Tick.Marker.Ticks(p.X.Min, p.X.Max) {
		if t.IsMinor() || t.Value < p.X.Min || t.Value > p.X.Max {
			continue
		}
		c.StrokeLine2(sty, trX(t.Value), c.Min.Y, trX(t.Value), c.Max.Y)
	}
}

// rect is an axis-aligned rectangle in data coordinates, filled and
// optionally outlined.
type rect struct {
	X0, X1, Y0, Y1 float64
	Fill           color.Color
	Line           color.Color // nil: no outline
}

// segment is a straight line in data coordinates.
type segment struct {
	X0, Y0, X1, Y1 float64
	Color          color.Color
	Width          vg.Length
	Dashes         []vg.Length
}

// shapes is a plotter of rectangles and line segments in data coordinates.
// Rectangles are drawn first, then segments, each in slice order; both are
// clipped to the data area.
type shapes struct {
	Rects    []rect
	Segments []segment
	Labels   []label
}

// labelPt is the font size of a label, points.
const labelPt = 7.5

// label is a short text centred just above a point in data coordinates.
type label struct {
	X, Y float64
	Text string
}

func (s *shapes) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	for _, r := range s.Rects {
		pts := []vg.Point{{X: trX(r.X0), Y: trY(r.Y0)}, {X: trX(r.X1), Y: trY(r.Y0)},
			{X: trX(r.X1), Y: trY(r.Y1)}, {X: trX(r.X0), Y: trY(r.Y1)}}
		if r.Fill != nil {
			c.FillPolygon(r.Fill, c.ClipPolygonXY(pts))
		}
		if r.Line != nil {
			ring := append(pts, pts[0])
			c.StrokeLines(draw.LineStyle{Color: r.Line, Width: vg.Points(0.8)}, c.ClipLinesXY(ring)...)
		}
	}
	for _, g := range s.Segments {
		sty := draw.LineStyle{Color: g.Color, Width: g.Width, Dashes: g.Dashes}
		c.StrokeLines(sty, c.ClipLinesXY([]vg.Point{{X: trX(g.X0), Y: trY(g.Y0)}, {X: trX(g.X1), Y: trY(g.Y1)}})...)
	}
	sty := centred(textStyle(labelPt))
	for _, l := range s.Labels {
		pt := vg.Point{X: trX(l.X), Y: trY(l.Y) + vg.Points(2)}
		if c.Contains(pt) {
			c.FillText(sty, pt, l.Text)
		}
	}
}

// DataRange reports the extent of the shapes, ignoring NaN coordinates.
func (s *shapes) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, ymin = math.Inf(1), math.Inf(1)
	xmax, ymax = math.Inf(-1), math.Inf(-1)
	add := func(x, y float64) {
		if !math.IsNaN(x) {
			xmin, xmax = math.Min(xmin, x), math.Max(xmax, x)
		}
		if !math.IsNaN(y) {
			ymin, ymax = math.Min(ymin, y), math.Max(ymax, y)
		}
	}
	for _, r := range s.Rects {
		add(r.X0, r.Y0)
		add(r.X1, r.Y1)
	}
	for _, g := range s.Segments {
		add(g.X0, g.Y0)
		add(g.X1, g.Y1)
	}
	if math.IsInf(xmin, 1) {
		return 0, 1, 0, 1
	}
	return xmin, xmax, ymin, ymax
}

// note draws a line of text at a fixed position of the data area, given as
// fractions of its width and height (0,0 = bottom left).
type note struct {
	FX, FY float64
	Text   string
	Style  draw.TextStyle
}

func (n *note) Plot(c draw.Canvas, _ *plot.Plot) {
	x := c.Min.X + vg.Length(n.FX)*(c.Max.X-c.Min.X)
	y := c.Min.Y + vg.Length(n.FY)*(c.Max.Y-c.Min.Y)
	c.FillText(n.Style, vg.Point{X: x, Y: y}, n.Text)
}

// textStyle returns a text style of the given size in points, in ink.
func textStyle(size float64) draw.TextStyle {
	return draw.TextStyle{
		Color:   ink,
		Font:    font.From(plot.DefaultFont, vg.Points(size)),
		Handler: plot.DefaultTextHandler,
	}
}

// percentTicks labels 0 to 100 % in steps of 20, with minor ticks every 10.
func percentTicks() plot.ConstantTicks {
	var t plot.ConstantTicks
	for v := 0; v <= 100; v += 10 {
		lbl := ""
		if v%20 == 0 {
			lbl = fmt.Sprint(v)
		}
		t = append(t, plot.Tick{Value: float64(v), Label: lbl})
	}
	return t
}

// monthTicks labels months 1–12 on a month axis.
func monthTicks() plot.ConstantTicks {
	names := []string{"Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"}
	t := make(plot.ConstantTicks, 12)
	for i, n := range names {
		t[i] = plot.Tick{Value: float64(i + 1), Label: n}
	}
	return t
}

// safeName keeps letters, digits, '-' and '_' of s and replaces anything
// else by '_', for file names.
func safeName(s string) string {
	b := []byte(s)
	for i, c := range b {
		ok := c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '-' || c == '_'
		if !ok {
			b[i] = '_'
		}
	}
	return string(b)
}

// SplitThin divides stations into those with at least minValid valid
// soundings (Station.Valid), which are drawn, and the thin rest, keeping
// their order. minValid ≤ 0 draws every station.
func SplitThin(stations []Station, minValid int) (drawn, thin []Station) {
	for _, st := range stations {
		if st.Valid >= minValid {
			drawn = append(drawn, st)
		} else {
			thin = append(thin, st)
		}
	}
	return drawn, thin
}

// IDs returns the ids of stations, in order.
func IDs(stations []Station) []string {
	ids := make([]string, len(stations))
	for i, st := range stations {
		ids[i] = st.ID
	}
	return ids
}

// WriteFiles renders every figure in each format into dir as NAME.FORMAT,
// at most workers at once (workers < 1 means 1), and returns the paths in
// the order of figs and formats whatever the number of workers. Rendering
// is most of a store-wide run's time and the figures are independent, so
// they are drawn concurrently. The first error stops the run and is
// returned; files written before it stay.
func WriteFiles(ctx context.Context, figs []*Figure, formats []string, dir string, workers int) ([]string, error) {
	for _, f := range formats {
		if !slices.Contains(Formats, f) {
			return nil, fmt.Errorf("unknown image format %q (png or svg)", f)
		}
	}
	paths := make([]string, 0, len(figs)*len(formats))
	for _, f := range figs {
		for _, ext := range formats {
			paths = append(paths, filepath.Join(dir, f.Name+"."+ext))
		}
	}
	g, ctx := errgroup.WithContext(ctx)
	g.SetLimit(max(workers, 1))
	for i, f := range figs {
		for j, ext := range formats {
			path := paths[i*len(formats)+j]
			g.Go(func() error {
				if err := ctx.Err(); err != nil {
					return err
				}
				return writeFile(path, f, ext)
			})
		}
	}
	if err := g.Wait(); err != nil {
		return nil, err
	}
	return paths, nil
}

// writeFile renders f as format into path.
func writeFile(path string, f *Figure, format string) error {
	out, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := f.Render(out, format); err != nil {
		out.Close()
		return err
	}
	return out.Close()
}
