package report

import (
	"bytes"
	"image"
	"image/png"
	"math"

	"github.com/sondeclim/sondeclim/queries/figures"
)

// Figure resolutions and palettes of the page. A figure is shown 960 CSS
// pixels wide (a 10 inch figure at 96 per inch); fullDPI draws it at 1.5
// device pixels per CSS pixel, sharp on high-density screens, compactDPI
// at one, for reports of many stations where size matters more.
const (
	fullDPI    = 144
	compactDPI = 96
	// paletteSize is the number of colours a figure keeps, and
	// compactPalette at compactDPI (measured on the figures of an
	// invented station at 96 dpi: 64 colours 16 KB, 32 colours 14 KB,
	// 16 colours 11 KB, and text edges visibly coarser below 32).
	paletteSize    = 64
	compactPalette = 32
)

// sectionImages draws the figures of one station from d (see
// figures.LoadStationData, with the calendar) as palette PNGs: all of
// them, or with compact only the monthly mixing-height figure at
// compactDPI with compactPalette colours.
func sectionImages(d figures.StationData, compact bool) ([]Image, error) {
	figs := d.Figures()
	dpi, colours := float64(fullDPI), paletteSize
	if compact {
		figs, dpi, colours = figs[:1], compactDPI, compactPalette
	}
	var out []Image
	for _, f := range figs {
		b, err := palettePNG(f.Image(dpi), colours)
		if err != nil {
			return nil, err
		}
		out = append(out, Image{Title: f.Title, Name: f.Name, PNG: b, Width: int(math.Round(f.Width.Points() * 96 / 72))})
	}
	return out, nil
}

// palettePNG encodes src as a PNG with a palette of its n most used
// colours (figures.Quantize: others to the nearest, no dithering) at
// image/png's best compression: the page's figures are written once and
// may be embedded, so bytes matter more than the few milliseconds.
func palettePNG(src *image.RGBA, n int) ([]byte, error) {
	var out bytes.Buffer
	if err := (&png.Encoder{CompressionLevel: png.BestCompression}).Encode(&out, figures.Quantize(src, n)); err != nil {
		return nil, err
	}
	return out.Bytes(), nil
}
