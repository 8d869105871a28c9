package input

import (
	"archive/zip"
	"bytes"
	stdflate "compress/flate"
	"errors"
	"hash/crc32"
	"io"
	"os"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
)

// stdInflate is the reference for Inflate: the standard library's RFC 1951
// decoder (compress/flate).
func stdInflate(src []byte) ([]byte, error) {
	return io.ReadAll(stdflate.NewReader(bytes.NewReader(src)))
}

// sameAsStdInflate fails unless Inflate of src, told the size and CRC-32
// of what the reference decodes, gives those bytes, or refuses input the
// reference refuses too (or, with mayRefuse, input it may refuse).
func sameAsStdInflate(t *testing.T, where string, src []byte, mayRefuse bool) {
	t.Helper()
	want, werr := stdInflate(src)
	got, gerr := Inflate(make([]byte, 0, len(want)), src, uint64(len(want)), crc32.ChecksumIEEE(want))
	switch {
	case gerr == nil && werr != nil:
		t.Errorf("%s: Inflate decoded %d bytes, the reference refuses: %v", where, len(got), werr)
	case gerr == nil && !bytes.Equal(got, want):
		t.Errorf("%s: Inflate gave %d bytes differing from the reference's %d", where, len(got), len(want))
	case gerr != nil && werr == nil && !mayRefuse:
		t.Errorf("%s: Inflate refused what the reference decodes (%d bytes): %v", where, len(want), gerr)
	}
}

// TestInflateRealZip: the member of the archive's own zip file of Sterling
// 2016 (../shared/validation/archive-v2, PROVENANCE.md), its compressed
// bytes taken raw, decodes to what the standard library's archive/zip
// reader gives, with the size and CRC-32 of its directory entry; one byte
// less room, another size, another CRC-32 and every cut copy (at 16 places
// and at each of the last 24 bytes) are refused, without panicking.
func TestInflateRealZip(t *testing.T) {
	path := filepath.Join(realdata.Dir(t, "archive-v2"), "USM00072403-data-beg2016.txt.zip")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	zr, err := zip.NewReader(bytes.NewReader(data), int64(len(data)))
	if err != nil {
		t.Fatal(err)
	}
	if len(zr.File) != 1 || zr.File[0].Method != zip.Deflate {
		t.Fatalf("%s: %d members; want one, deflated", path, len(zr.File))
	}
	zf := zr.File[0]
	rc, err := zf.Open()
	if err != nil {
		t.Fatal(err)
	}
	want, err := io.ReadAll(rc)
	if err != nil {
		t.Fatal(err)
	}
	raw, err := zf.OpenRaw()
	if err != nil {
		t.Fatal(err)
	}
	src, err := io.ReadAll(raw)
	if err != nil {
		t.Fatal(err)
	}
	size, crc := zf.UncompressedSize64, zf.CRC32
	if size != uint64(len(want)) || size < 6<<20 {
		t.Fatalf("directory states %d bytes, the reader gave %d; want the ~7 MB of text", size, len(want))
	}
	got, err := Inflate(make([]byte, 0, size), src, size, crc)
	if err != nil || !bytes.Equal(got, want) {
		t.Fatalf("Inflate: %d bytes, %v; want the reader's %d bytes", len(got), err, len(want))
	}
	refused := func(what string, dst, src []byte, size uint64, crc uint32) {
		t.Helper()
		if _, err := Inflate(dst, src, size, crc); !errors.Is(err, ErrGunzip) {
			t.Errorf("%s: err %v, want ErrGunzip", what, err)
		}
	}
	refused("one byte less room", make([]byte, 0, size-1), src, size, crc)
	refused("size one less", make([]byte, 0, size), src, size-1, crc)
	refused("size one more", make([]byte, 0, size+1), src, size+1, crc)
	refused("another CRC-32", make([]byte, 0, size), src, size, crc^1)
	cuts := []int{}
	for i := 1; i <= 16; i++ {
		cuts = append(cuts, len(src)*i/17)
	}
	for i := 1; i <= 24; i++ {
		cuts = append(cuts, len(src)-i)
	}
	for _, n := range cuts {
		refused("cut", make([]byte, 0, size), src[:n], size, crc)
	}
}

// TestInflateStdlibLevels: text compressed by the standard library's
// encoder at every level (stored blocks at level 0, fixed and dynamic
// Huffman codes above, Huffman only at -2) decodes to itself.
func TestInflateStdlibLevels(t *testing.T) {
	texts := [][]byte{
		nil,
		[]byte("#USM00072403 2016 01 01 00 2300  1170 ncdc-gts ncdc-gts  389700  -774767\n"),
		bytes.Repeat([]byte("21 -9999  85000B  1457B  -27B  60B  50   330    51\n"), 5000),
	}
	for i, text := range texts {
		for lv := -2; lv <= 9; lv++ {
			var b bytes.Buffer
			zw, err := stdflate.NewWriter(&b, lv)
			if err != nil {
				t.Fatal(err)
			}
			zw.Write(text)
			zw.Close()
			got, err := Inflate(make([]byte, 0, len(text)), b.Bytes(), uint64(len(text)), crc32.ChecksumIEEE(text))
			if err != nil || !bytes.Equal(got, text) {
				t.Errorf("text %d, level %d: %d bytes, %v; want the %d bytes compressed", i, lv, len(got), err, len(text))
			}
		}
	}
}

// FuzzInflate: Inflate never decodes what the standard library's decoder
// refuses, never gives other bytes, and decodes every stream that
// library's encoder writes.
func FuzzInflate(f *testing.F) {
	f.Add([]byte("#USM00072403 2016 01 01 00 2300  1170 ncdc-gts\n21 -9999 101000B 150\n"), uint8(1), uint16(0), uint8(0))
	f.Add(bytes.Repeat([]byte("abcabcabd"), 1000), uint8(9), uint16(7), uint8(0x55))
	f.Fuzz(func(t *testing.T, text []byte, level uint8, at uint16, flip uint8) {
		var b bytes.Buffer
		zw, err := stdflate.NewWriter(&b, int(level%12)-2)
		if err != nil {
			t.Fatal(err)
		}
		zw.Write(text)
		zw.Close()
		raw := b.Bytes()
		sameAsStdInflate(t, "fuzz", raw, false)
		if flip != 0 && len(raw) > 0 {
			bad := bytes.Clone(raw)
			bad[int(at)%len(bad)] ^= flip
			sameAsStdInflate(t, "fuzz damaged", bad, true)
		}
		sameAsStdInflate(t, "fuzz raw", text, true)
	})
}
