package figures

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"hash/crc32"
	"image"
	"image/color"
	"io"
	"slices"

	"github.com/klauspost/compress/zlib"
)

// PaletteSize is the number of colours a PNG figure keeps (see
// Quantize). The figures are flat colours, lines and text on white; the
// other colours are the few pixels of anti-aliased edges, so 64 look the
// same as the thousand or so that drawing leaves, at a third of the bytes
// of an RGBA image (measured on the validation store's figures: 75 KB →
// 28 KB).
const PaletteSize = 64

// PNG compression levels of RenderPNG: zlib levels 1 (fastest) to 9
// (smallest).
const (
	// PNGFast is the level Render writes: on the validation store's
	// figures within 10 % of PNGSmallest's bytes at a twentieth of its
	// time.
	PNGFast = 6
	// PNGSmallest is the smallest output, for pages that embed many
	// figures.
	PNGSmallest = zlib.BestCompression
)

// Quantize maps img to a palette of its size most used colours (size ≤
// 256; ties broken by colour value, so that the result does not depend on
// map order), every other colour replaced by the nearest palette colour
// (color.Palette.Index: least squared distance in RGBA; no dithering). An
// image of at most size colours keeps them all exactly.
//
// Drawn figures are mostly long runs of one colour, so colours are counted
// and looked up once per run of equal pixels, not once per pixel.
func Quantize(img *image.RGBA, size int) *image.Paletted {
	size = min(max(size, 1), 256)
	r := img.Bounds()
	w, h := r.Dx(), r.Dy()
	rowOf := func(y int) []byte { return img.Pix[y*img.Stride : y*img.Stride+4*w] }
	counts := map[uint32]int{}
	var prev uint32
	run := 0
	for y := 0; y < h; y++ {
		row := rowOf(y)
		for x := 0; x < len(row); x += 4 {
			c := binary.BigEndian.Uint32(row[x:])
			if c == prev && run > 0 {
				run++
				continue
			}
			if run > 0 {
				counts[prev] += run
			}
			prev, run = c, 1
		}
	}
	if run > 0 {
		counts[prev] += run
	}
	keys := make([]uint32, 0, len(counts))
	for k := range counts {
		keys = append(keys, k)
	}
	slices.SortFunc(keys, func(a, b uint32) int {
		if counts[a] != counts[b] {
			return counts[b] - counts[a]
		}
		if a < b {
			return -1
		}
		return 1
	})
	rgba := func(k uint32) color.RGBA { return color.RGBA{uint8(k >> 24), uint8(k >> 16), uint8(k >> 8), uint8(k)} }
	pal := make(color.Palette, min(len(keys), size))
	for i := range pal {
		pal[i] = rgba(keys[i])
	}
	index := make(map[uint32]uint8, len(keys))
	for i, k := range keys {
		if i < len(pal) {
			index[k] = uint8(i)
		} else {
			index[k] = uint8(pal.Index(rgba(k)))
		}
	}
	dst := image.NewPaletted(image.Rect(0, 0, w, h), pal)
	var last uint32
	var lastIdx uint8
	have := false
	for y := 0; y < h; y++ {
		row, out := rowOf(y), dst.Pix[y*dst.Stride:y*dst.Stride+w]
		for x := range out {
			c := binary.BigEndian.Uint32(row[4*x:])
			if c != last || !have {
				last, lastIdx, have = c, index[c], true
			}
			out[x] = lastIdx
		}
	}
	return dst
}

// writePalettePNG writes p as an 8-bit indexed-colour PNG (W3C Portable
// Network Graphics, 2nd edition, ISO/IEC 15948: colour type 3, one IDAT of
// unfiltered scanlines compressed by zlib at level, 1 to 9), with a tRNS
// chunk only when a palette colour is not opaque. image/png writes the
// same chunks but only through the standard library's slower deflate.
func writePalettePNG(w io.Writer, p *image.Paletted, level int) error {
	r := p.Bounds()
	if len(p.Palette) == 0 || len(p.Palette) > 256 || r.Empty() {
		return fmt.Errorf("png: %d palette colours for a %dx%d image", len(p.Palette), r.Dx(), r.Dy())
	}
	var body bytes.Buffer
	chunk := func(kind string, data []byte) {
		var n [4]byte
		binary.BigEndian.PutUint32(n[:], uint32(len(data)))
		body.Write(n[:])
		crc := crc32.NewIEEE()
		crc.Write([]byte(kind))
		crc.Write(data)
		body.WriteString(kind)
		body.Write(data)
		binary.BigEndian.PutUint32(n[:], crc.Sum32())
		body.Write(n[:])
	}
	body.WriteString("\x89PNG\r\n\x1a\n")
	ihdr := make([]byte, 13)
	binary.BigEndian.PutUint32(ihdr[0:], uint32(r.Dx()))
	binary.BigEndian.PutUint32(ihdr[4:], uint32(r.Dy()))
	ihdr[8], ihdr[9] = 8, 3 // bit depth 8, colour type 3 (palette); compression, filter, interlace 0
	chunk("IHDR", ihdr)
	plte, trns := make([]byte, 0, 3*len(p.Palette)), make([]byte, 0, len(p.Palette))
	lastAlpha := -1
	for i, c := range p.Palette {
		n := color.NRGBAModel.Convert(c).(color.NRGBA)
		plte = append(plte, n.R, n.G, n.B)
		trns = append(trns, n.A)
		if n.A != 0xff {
			lastAlpha = i
		}
	}
	chunk("PLTE", plte)
	if lastAlpha >= 0 {
		chunk("tRNS", trns[:lastAlpha+1])
	}
	var idat bytes.Buffer
	zw, err := zlib.NewWriterLevel(&idat, level)
	if err != nil {
		return fmt.Errorf("png: %w", err)
	}
	filter := []byte{0} // filter type None for every scanline
	for y := r.Min.Y; y < r.Max.Y; y++ {
		i := p.PixOffset(r.Min.X, y)
		zw.Write(filter)
		zw.Write(p.Pix[i : i+r.Dx()])
	}
	if err := zw.Close(); err != nil {
		return fmt.Errorf("png: %w", err)
	}
	chunk("IDAT", idat.Bytes())
	chunk("IEND", nil)
	_, err = w.Write(body.Bytes())
	return err
}
