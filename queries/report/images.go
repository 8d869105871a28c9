package report

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"math"
	"slices"

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
// colours (n ≤ 256), each other colour replaced by the nearest of them
// (no dithering). The figures are flat colours, lines and text on white,
// whose other colours are the few pixels of anti-aliased edges, so the
// image looks the same at about a third of the size of a full-colour PNG
// (measured on the demo's figures: 73 KB → 25 KB).
func palettePNG(src *image.RGBA, n int) ([]byte, error) {
	r := src.Bounds()
	pixel := func(p []uint8) uint32 { return uint32(p[0])<<24 | uint32(p[1])<<16 | uint32(p[2])<<8 | uint32(p[3]) }
	// Runs of one colour are the rule (white field, flat boxes), so a
	// pixel equal to the one before skips the map.
	counts := map[uint32]int{}
	for y := 0; y < r.Dy(); y++ {
		row := src.Pix[y*src.Stride : y*src.Stride+4*r.Dx()]
		last, run := pixel(row), 0
		for x := 0; x+3 < len(row); x += 4 {
			if c := pixel(row[x : x+4]); c != last {
				counts[last] += run
				last, run = c, 0
			}
			run++
		}
		counts[last] += run
	}
	keys := make([]uint32, 0, len(counts))
	for k := range counts {
		keys = append(keys, k)
	}
	// Most used first; equal counts by colour value, so that the result
	// does not depend on map order.
	slices.SortFunc(keys, func(a, b uint32) int {
		if counts[a] != counts[b] {
			return counts[b] - counts[a]
		}
		if a < b {
			return -1
		}
		return 1
	})
	n = min(len(keys), n, 256)
	pal := make(color.Palette, n)
	for i, k := range keys[:n] {
		pal[i] = color.RGBA{uint8(k >> 24), uint8(k >> 16), uint8(k >> 8), uint8(k)}
	}
	index := make(map[uint32]uint8, len(keys))
	for _, k := range keys {
		index[k] = uint8(pal.Index(color.RGBA{uint8(k >> 24), uint8(k >> 16), uint8(k >> 8), uint8(k)}))
	}
	dst := image.NewPaletted(r, pal)
	for y := 0; y < r.Dy(); y++ {
		row := src.Pix[y*src.Stride : y*src.Stride+4*r.Dx()]
		out := dst.Pix[y*dst.Stride : y*dst.Stride+r.Dx()]
		last := pixel(row) + 1 // differs from the first pixel
		var li uint8
		for x := range out {
			if c := pixel(row[4*x : 4*x+4]); c != last {
				last, li = c, index[c]
			}
			out[x] = li
		}
	}
	var out bytes.Buffer
	if err := (&png.Encoder{CompressionLevel: png.BestCompression}).Encode(&out, dst); err != nil {
		return nil, err
	}
	return out.Bytes(), nil
}
