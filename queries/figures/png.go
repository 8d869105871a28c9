package figures

import (
	"bytes"
	"cmp"
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
// the order of the pixels), every other colour replaced by the nearest
// palette colour (color.Palette.Index: least squared distance in RGBA; no
// dithering). An image of at most size colours keeps them all exactly.
//
// Drawn figures are long runs of one colour (about 50,000 runs and 1,000
// colours in a 1440 × 792 figure), so the image is read once into runs of
// equal pixels, each colour is looked up once per run in a small hash
// table, and the palette image is filled run by run.
func Quantize(img *image.RGBA, size int) *image.Paletted {
	size = min(max(size, 1), 256)
	r := img.Bounds()
	w, h := r.Dx(), r.Dy()
	type run struct{ colour, n int32 } // colour: index into seen.colours; n pixels, within one row
	runs := make([]run, 0, 64*h)
	var seen colourTable
	for y := 0; y < h; y++ {
		row := img.Pix[y*img.Stride : y*img.Stride+4*w]
		for x := 0; x < len(row); {
			c := binary.BigEndian.Uint32(row[x:])
			end, cc := x+4, uint64(c)<<32|uint64(c)
			for end+8 <= len(row) && binary.BigEndian.Uint64(row[end:]) == cc {
				end += 8 // two pixels at a time
			}
			for end < len(row) && binary.BigEndian.Uint32(row[end:]) == c {
				end += 4
			}
			i := seen.add(c, (end-x)/4)
			runs = append(runs, run{int32(i), int32((end - x) / 4)})
			x = end
		}
	}
	order := make([]int, len(seen.colours))
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int {
		if ca, cb := seen.counts[a], seen.counts[b]; ca != cb {
			return cb - ca
		}
		return cmp.Compare(seen.colours[a], seen.colours[b])
	})
	rgba := func(k uint32) color.RGBA { return color.RGBA{uint8(k >> 24), uint8(k >> 16), uint8(k >> 8), uint8(k)} }
	pal := make(color.Palette, min(len(order), size))
	for i := range pal {
		pal[i] = rgba(seen.colours[order[i]])
	}
	index := make([]uint8, len(order)) // by colour of seen
	for rank, i := range order {
		if rank < len(pal) {
			index[i] = uint8(rank)
		} else {
			index[i] = uint8(pal.Index(rgba(seen.colours[i])))
		}
	}
	dst := image.NewPaletted(image.Rect(0, 0, w, h), pal) // all index 0, the most used colour
	x, y := 0, 0
	for _, u := range runs {
		if v := index[u.colour]; v != 0 {
			out := dst.Pix[y*dst.Stride+x : y*dst.Stride+x+int(u.n)]
			for i := range out {
				out[i] = v
			}
		}
		if x += int(u.n); x == w {
			x, y = 0, y+1
		}
	}
	return dst
}

// colourTable counts pixels per colour: an open-addressing hash table
// (linear probing, kept at most half full) from a colour to its index in
// colours and counts, in order of first appearance.
type colourTable struct {
	slots   []int32 // index+1 into colours; 0 = empty
	colours []uint32
	counts  []int
}

// add counts n pixels of colour c and returns c's index.
func (t *colourTable) add(c uint32, n int) int {
	if 2*(len(t.colours)+1) > len(t.slots) {
		t.grow()
	}
	mask := uint32(len(t.slots) - 1)
	for s := (c * 0x9e3779b1) >> 7 & mask; ; s = (s + 1) & mask {
		switch i := t.slots[s]; {
		case i == 0:
			t.colours, t.counts = append(t.colours, c), append(t.counts, n)
			t.slots[s] = int32(len(t.colours))
			return len(t.colours) - 1
		case t.colours[i-1] == c:
			t.counts[i-1] += n
			return int(i - 1)
		}
	}
}

// grow doubles the table (1,024 slots at first) and re-enters the colours.
func (t *colourTable) grow() {
	t.slots = make([]int32, max(1024, 2*len(t.slots)))
	mask := uint32(len(t.slots) - 1)
	for i, c := range t.colours {
		s := (c * 0x9e3779b1) >> 7 & mask
		for t.slots[s] != 0 {
			s = (s + 1) & mask
		}
		t.slots[s] = int32(i + 1)
	}
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
	// Scanlines each after a filter-type byte 0 (None), compressed in one
	// write: row by row, the compressor's per-call work doubled its time.
	raw := make([]byte, 0, r.Dy()*(r.Dx()+1))
	for y := r.Min.Y; y < r.Max.Y; y++ {
		i := p.PixOffset(r.Min.X, y)
		raw = append(raw, 0)
		raw = append(raw, p.Pix[i:i+r.Dx()]...)
	}
	if _, err := zw.Write(raw); err != nil {
		return fmt.Errorf("png: %w", err)
	}
	if err := zw.Close(); err != nil {
		return fmt.Errorf("png: %w", err)
	}
	chunk("IDAT", idat.Bytes())
	chunk("IEND", nil)
	_, err = w.Write(body.Bytes())
	return err
}
