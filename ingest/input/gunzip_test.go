package input

import (
	"bufio"
	"bytes"
	stdgzip "compress/gzip"
	"encoding/binary"
	"hash/crc32"
	"io"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"github.com/klauspost/compress/gzip"

	"github.com/sondeclim/sondeclim/internal/benchcpu"
	"github.com/sondeclim/sondeclim/internal/realdata"
)

// streamGunzip is the reference: the gzip reader Each uses (klauspost's,
// a port of the standard library's RFC 1952/1951 decoder).
func streamGunzip(src []byte) ([]byte, error) {
	zr, err := gzip.NewReader(bytes.NewReader(src))
	if err != nil {
		return nil, err
	}
	return io.ReadAll(zr)
}

// sameAsStream fails unless Gunzip of src gives what the reference gives,
// or refuses it; refusing is allowed only when mayRefuse (input the
// reference may take but Gunzip need not).
func sameAsStream(t *testing.T, where string, src []byte, mayRefuse bool) {
	t.Helper()
	want, werr := streamGunzip(src)
	got, gerr := Gunzip(make([]byte, 0, len(want)+64), src, 1<<40)
	switch {
	case gerr == nil && werr != nil:
		t.Errorf("%s: Gunzip decoded %d bytes, the reference refuses: %v", where, len(got), werr)
	case gerr == nil && !bytes.Equal(got, want):
		t.Errorf("%s: Gunzip gave %d bytes differing from the reference's %d", where, len(got), len(want))
	case gerr != nil && werr == nil && !mayRefuse:
		t.Errorf("%s: Gunzip refused what the reference decodes (%d bytes)", where, len(want))
	}
}

func compressAll(t testing.TB, text []byte) map[string][]byte {
	out := map[string][]byte{}
	for _, lv := range []int{-2, 0, 1, 2, 3, 4, 5, 6, 7, 8, 9} {
		var b bytes.Buffer
		zw, err := gzip.NewWriterLevel(&b, lv)
		if err != nil {
			t.Fatal(err)
		}
		zw.Write(text)
		zw.Close()
		out["klauspost level "+string(rune('0'+lv+2))] = b.Bytes()
		b = bytes.Buffer{}
		sw, err := stdgzip.NewWriterLevel(&b, lv)
		if err != nil {
			t.Fatal(err)
		}
		sw.Write(text)
		sw.Close()
		out["stdlib level "+string(rune('0'+lv+2))] = b.Bytes()
	}
	return out
}

// BenchmarkGunzip decodes the real Sterling text (a compare copy, see
// ../shared/peer/compare.sh) compressed by the gzip tool at levels 1 (what
// compare.sh writes) and 6 (its default), with Gunzip and, for scale, the
// stream reader, reporting MB/s of output by wall time and, less
// disturbed by other load, by the process's processor time (cpu-MB/s).
// It skips without the compare input or the gzip tool.
func BenchmarkGunzip(b *testing.B) {
	src, err := os.ReadFile("/tmp/cmp/in/USM00072410-data.txt.gz")
	if err != nil {
		b.Skip(err)
	}
	text, err := streamGunzip(src)
	if err != nil {
		b.Fatal(err)
	}
	dst := make([]byte, 0, len(text))
	for _, level := range []string{"-1", "-6"} {
		cmd := exec.Command("gzip", level)
		cmd.Stdin = bytes.NewReader(text)
		gz, err := cmd.Output()
		if err != nil {
			b.Skip("gzip tool: ", err)
		}
		b.Run("Gunzip/gzip"+level, func(b *testing.B) {
			b.SetBytes(int64(len(text)))
			cpu := benchcpu.Used()
			for b.Loop() {
				got, err := Gunzip(dst[:0], gz, 1<<40)
				if err != nil || len(got) != len(text) {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(len(text))*float64(b.N)/(benchcpu.Used()-cpu).Seconds()/1e6, "cpu-MB/s")
		})
		b.Run("stream/gzip"+level, func(b *testing.B) {
			b.SetBytes(int64(len(text)))
			for b.Loop() {
				zr, _ := gzip.NewReader(bufio.NewReaderSize(bytes.NewReader(gz), 64<<10))
				n, _ := io.ReadFull(zr, dst[:cap(dst)])
				if n != len(text) {
					b.Fatal(n)
				}
			}
		})
	}
}

// TestGunzipMatchesStream: Gunzip gives exactly what Each's gzip reader
// gives (klauspost's port of the standard library's decoder, the
// reference here) for every real gzip and zip-deflated file of
// ../shared/validation, for invented and real text compressed by both
// libraries at every level (stored, Huffman-only, fast and best), for
// concatenated members, for headers with a name, a comment, extra data
// and a header CRC, and never decodes what the reference refuses:
// damaged copies (bytes flipped, cut short, trailing bytes, a wrong CRC
// or size) are refused, or decoded to the reference's bytes.
func TestGunzipMatchesStream(t *testing.T) {
	dir := realdata.Dir(t, "archive-v2")
	wien, err := os.ReadFile(filepath.Join(dir, "AUM00011035-data.txt.gz"))
	if err != nil {
		t.Fatal(err)
	}
	sameAsStream(t, "Wien (real gzip file)", wien, false)
	text, err := streamGunzip(wien)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	noise := make([]byte, 200000)
	for i := range noise {
		noise[i] = byte(rng.IntN(256))
	}
	runs := bytes.Repeat([]byte("a"), 70000)
	texts := map[string][]byte{"Wien text": text, "noise": noise, "runs of one byte": runs,
		"empty": nil, "one byte": []byte("x"), "mixed": append(append(bytes.Clone(text[:30000]), noise[:5000]...), runs[:3000]...)}
	for name, tx := range texts {
		for how, gz := range compressAll(t, tx) {
			where := name + ", " + how
			sameAsStream(t, where, gz, false)
			// Damage: flipped bytes, cut short, bytes after the end.
			for k := 0; k < 40 && len(gz) > 20; k++ {
				bad := bytes.Clone(gz)
				i := 10 + rng.IntN(len(bad)-10)
				bad[i] ^= byte(1 + rng.IntN(255))
				sameAsStream(t, where+", damaged", bad, true)
			}
			for _, cut := range []int{1, 4, 8, 9, len(gz) / 2, len(gz) - 11} {
				if cut > 0 && cut < len(gz) {
					sameAsStream(t, where+", cut", gz[:len(gz)-cut], true)
				}
			}
			sameAsStream(t, where+", trailing byte", append(bytes.Clone(gz), 0), true)
			sameAsStream(t, where+", two members", append(bytes.Clone(gz), gz...), false)
		}
	}
	// Header fields.
	for _, h := range []gzip.Header{{Name: "sterling.txt"}, {Comment: "a comment"}, {Extra: []byte("xyz")},
		{Name: string(bytes.Repeat([]byte("n"), 511))}, {Name: string(bytes.Repeat([]byte("n"), 512))}} {
		var b bytes.Buffer
		zw := gzip.NewWriter(&b)
		zw.Header = h
		zw.Write(text[:10000])
		zw.Close()
		sameAsStream(t, "header "+h.Comment+string(h.Extra), b.Bytes(), false)
		// The same with a header CRC (FHCRC), right and wrong.
		raw := b.Bytes()
		n, err := gzipHeader(raw)
		if err != nil {
			if len(h.Name) < 512 {
				t.Errorf("header %+v refused", h)
			}
			continue
		}
		withCRC := append(bytes.Clone(raw[:n]), 0, 0)
		withCRC[3] |= gzFHCRC
		crc := crc32.ChecksumIEEE(withCRC[:n])
		binary.LittleEndian.PutUint16(withCRC[n:], uint16(crc))
		withCRC = append(withCRC, raw[n:]...)
		sameAsStream(t, "header CRC", withCRC, false)
		withCRC[n] ^= 1
		sameAsStream(t, "wrong header CRC", withCRC, true)
	}
	// A second member whose first code refers back into the first
	// member's output (RFC 1952 members are independent): refused, even
	// with a CRC and size that match the bytes it would give. Written
	// by hand as a fixed-code block (RFC 1951 §3.2.6): length 3 (code
	// 257, 0000001), distance 1 (code 0, 00000), end of block (0000000).
	var bits, nbits uint64
	put := func(v uint64, n uint, msbFirst bool) {
		for i := uint(0); i < n; i++ {
			bit := v >> i & 1
			if msbFirst {
				bit = v >> (n - 1 - i) & 1
			}
			bits |= bit << nbits
			nbits++
		}
	}
	put(1, 1, false) // BFINAL
	put(1, 2, false) // BTYPE 01
	put(1, 7, true)
	put(0, 5, true)
	put(0, 7, true)
	member := []byte{0x1f, 0x8b, 8, 0, 0, 0, 0, 0, 0, 0xff}
	for i := uint64(0); i < (nbits+7)/8; i++ {
		member = append(member, byte(bits>>(8*i)))
	}
	member = binary.LittleEndian.AppendUint32(member, crc32.ChecksumIEEE([]byte("ccc")))
	member = binary.LittleEndian.AppendUint32(member, 3)
	var first bytes.Buffer
	zw := gzip.NewWriter(&first)
	zw.Write([]byte("abc"))
	zw.Close()
	sameAsStream(t, "back-reference across members", append(first.Bytes(), member...), true)
	if _, err := Gunzip(make([]byte, 0, 100), append(first.Bytes(), member...), 1<<40); err == nil {
		t.Error("back-reference across members decoded")
	}

	// Room and limit.
	gz := compressAll(t, text)["klauspost level 3"]
	if _, err := Gunzip(make([]byte, 0, len(text)-1), gz, 1<<40); err == nil {
		t.Error("output larger than the room given was decoded")
	}
	if _, err := Gunzip(make([]byte, 0, len(text)), gz, int64(len(text))-1); err == nil {
		t.Error("output over the limit was decoded")
	}
	if got, err := Gunzip(make([]byte, 0, len(text)), gz, int64(len(text))); err != nil || !bytes.Equal(got, text) {
		t.Errorf("output of exactly the limit and room: %v", err)
	}
}

// FuzzGunzip: Gunzip never decodes what the reference refuses, never
// gives other bytes, and decodes every stream the libraries write.
func FuzzGunzip(f *testing.F) {
	f.Add([]byte("#USM00072403 2016 01 01 00 2300  1170 ncdc-gts\n21 -9999 101000B 150\n"), uint8(1), uint16(0), uint8(0))
	f.Add(bytes.Repeat([]byte("abcabcabd"), 1000), uint8(9), uint16(7), uint8(0x55))
	f.Fuzz(func(t *testing.T, text []byte, level uint8, at uint16, flip uint8) {
		lv := int(level%12) - 2
		var b bytes.Buffer
		zw, _ := gzip.NewWriterLevel(&b, lv)
		zw.Write(text)
		zw.Close()
		gz := b.Bytes()
		sameAsStream(t, "fuzz", gz, false)
		if flip != 0 && len(gz) > 0 {
			bad := bytes.Clone(gz)
			bad[int(at)%len(bad)] ^= flip
			sameAsStream(t, "fuzz damaged", bad, true)
		}
		sameAsStream(t, "fuzz raw", text, true)
	})
}

// TestGunzipRealTextEdges: on the real Sterling text (the archive's own
// file, ../shared/validation) compressed by the standard library at levels
// 1 and 6, Gunzip gives the standard library's decoded bytes with room for
// exactly the text (the last bytes then go through the careful loop, not
// the fast one), refuses one byte less room, and refuses every cut copy
// (cut at 16 places spread over the file and at each of the last 24
// bytes, where the fast loop hands over to the careful one), without
// panicking. The real Wien gzip file is cut at every one of its last 100
// bytes and at 50 places over the whole.
func TestGunzipRealTextEdges(t *testing.T) {
	text := realdata.Text(t, "archive-v2", "USM00072403-data-beg2016.txt.zip")
	wien, err := os.ReadFile(filepath.Join(realdata.Dir(t, "archive-v2"), "AUM00011035-data.txt.gz"))
	if err != nil {
		t.Fatal(err)
	}
	refuses := func(where string, gz []byte, room int) {
		t.Helper()
		if got, err := Gunzip(make([]byte, 0, room), gz, 1<<40); err == nil {
			t.Errorf("%s: decoded %d bytes", where, len(got))
		}
	}
	cuts := func(where string, gz []byte, spread, last int) {
		t.Helper()
		for k := 1; k <= spread; k++ {
			refuses(where+", cut", gz[:len(gz)*k/(spread+1)], len(text)+1024)
		}
		for k := 1; k <= last && k < len(gz); k++ {
			refuses(where+", cut near the end", gz[:len(gz)-k], len(text)+1024)
		}
	}
	for _, lv := range []int{1, 6} {
		var b bytes.Buffer
		zw, _ := stdgzip.NewWriterLevel(&b, lv)
		zw.Write(text)
		zw.Close()
		gz := b.Bytes()
		zr, err := stdgzip.NewReader(bytes.NewReader(gz))
		if err != nil {
			t.Fatal(err)
		}
		want, err := io.ReadAll(zr)
		if err != nil || !bytes.Equal(want, text) {
			t.Fatalf("standard library round trip: %v", err)
		}
		where := "Sterling, standard library level " + string(rune('0'+lv))
		if got, err := Gunzip(make([]byte, 0, len(want)), gz, 1<<40); err != nil || !bytes.Equal(got, want) {
			t.Errorf("%s: Gunzip gave %d bytes (%v), not the standard library's %d", where, len(got), err, len(want))
		}
		refuses(where+", one byte less room", gz, len(want)-1)
		cuts(where, gz, 16, 24)
	}
	zr, err := stdgzip.NewReader(bytes.NewReader(wien))
	if err != nil {
		t.Fatal(err)
	}
	want, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	if got, err := Gunzip(make([]byte, 0, len(want)), wien, 1<<40); err != nil || !bytes.Equal(got, want) {
		t.Errorf("Wien: Gunzip gave %d bytes (%v), not the standard library's %d", len(got), err, len(want))
	}
	cuts("Wien", wien, 50, 100)
}
