package engine

import (
	"archive/zip"
	"bytes"
	"compress/gzip"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
)

// TestWholeDecoding: a compressed input decoded in one call (wholeGzip,
// wholeZip), its text held in memory or written to the staging folder,
// gives the partitions, skipped lines and input digest that the decoding
// path gives through the stream decoders (archive/zip and a gzip reader),
// and inputs those calls do not take (a gzip file of two members, a zip
// of two members) still go the stream's way, spilling midway when the
// budget runs out. The zip input is the archive's own file as distributed
// (../shared/validation/archive-v2/USM00072403-data-beg2016.txt.zip,
// PROVENANCE.md); the others hold Barrow cut short (one sounding
// rejected), Omaha 1950 and Wien, real files of the same folder.
func TestWholeDecoding(t *testing.T) {
	read := func(name string) []byte { return realdata.Text(t, "archive-v2", name) }
	part1 := append(read("USM00070026-data-truncated.txt"), read("USM00074794-data-1950-portion.txt")...)
	part2 := read("AUM00011035-data.txt.gz")
	gz := func(parts ...[]byte) []byte {
		var b bytes.Buffer
		for _, p := range parts { // one member each (RFC 1952 §2.2)
			zw := gzip.NewWriter(&b)
			zw.Write(p)
			zw.Close()
		}
		return b.Bytes()
	}
	zipOf := func(parts ...[]byte) []byte {
		var b bytes.Buffer
		zw := zip.NewWriter(&b)
		for i, p := range parts {
			w, err := zw.Create([]string{"a.txt", "b.txt"}[i])
			if err != nil {
				t.Fatal(err)
			}
			w.Write(p)
		}
		if err := zw.Close(); err != nil {
			t.Fatal(err)
		}
		return b.Bytes()
	}
	sterling, err := os.ReadFile(filepath.Join(realdata.Dir(t, "archive-v2"), "USM00072403-data-beg2016.txt.zip"))
	if err != nil {
		t.Fatal(err)
	}
	run := func(in string, opt Options) runOutcome { return ingestOutcome(t, []string{in}, opt) }
	const midway = 1<<20 + 1000 // a first MiB in memory, then the rest on disk
	for _, c := range []struct {
		name  string
		data  []byte
		whole bool // decoded in one call
		parts int  // station-years
		skips int
	}{
		{"sterling.txt.zip", sterling, true, 1, 0},
		{"one.txt.gz", gz(append(bytes.Clone(part1), part2...)), true, 3, 1},
		{"one.zip", zipOf(append(bytes.Clone(part1), part2...)), true, 3, 1},
		// The trailer states the small last member's size, under the
		// compressed size: no size hint, so the stream's way.
		{"two.txt.gz", gz(part2, part1), false, 3, 1},
		{"two.zip", zipOf(part1, part2), false, 3, 1},
	} {
		in := filepath.Join(t.TempDir(), c.name)
		if err := os.WriteFile(in, c.data, 0o644); err != nil {
			t.Fatal(err)
		}
		want := run(in, Options{Workers: 2, decodeAll: true})
		if len(want.hashes) != c.parts || len(want.skips) != c.skips || len(want.inputs) != 1 {
			t.Fatalf("%s, decoding path: %d partitions, %d inputs, skips %v; want %d and %d skips", c.name,
				len(want.hashes), len(want.inputs), want.skips, c.parts, c.skips)
		}
		for _, o := range []struct {
			name   string
			budget int64
			onDisk bool
		}{{"memory", 1 << 30, false}, {"disk", -1, true}, {"midway", midway, true}} {
			got := run(in, Options{Workers: 2, StagingMemoryBytes: o.budget})
			what := c.name + ", " + o.name
			if !reflect.DeepEqual(got.hashes, want.hashes) || !reflect.DeepEqual(got.skips, want.skips) ||
				!reflect.DeepEqual(got.inputs, want.inputs) {
				t.Errorf("%s: partitions, skips or input digest differ from the decoding path:\n%v %v %v\n%v %v %v", what,
					got.hashes, got.skips, got.inputs, want.hashes, want.skips, want.inputs)
			}
			if got.sum.SoundingsRead != want.sum.SoundingsRead {
				t.Errorf("%s: %d soundings read, decoding path %d", what, got.sum.SoundingsRead, want.sum.SoundingsRead)
			}
			if w := map[bool]int{true: 1}[c.whole]; got.sum.decodedWhole != w {
				t.Errorf("%s: %d inputs decoded in one call, want %d", what, got.sum.decodedWhole, w)
			}
			if disk := map[bool]int{true: 1}[o.onDisk]; got.sum.stagedOnDisk != disk || got.sum.stagedInMemory != 1-disk {
				t.Errorf("%s: %d inputs held in memory and %d on disk, want %d and %d", what,
					got.sum.stagedInMemory, got.sum.stagedOnDisk, 1-disk, disk)
			}
			if got.sum.heldAtEnd != 0 {
				t.Errorf("%s: %d bytes of the staging memory budget still charged after the build", what, got.sum.heldAtEnd)
			}
		}
	}
}

// TestWholeZipDamaged: a zip input whose directory lies about its member
// (another CRC-32, a larger or smaller uncompressed size) or marks it
// encrypted is not decoded
// in one call; it goes the stream's way, whose reader (archive/zip)
// reports it, and the outcome, partitions and skips, is the decoding
// path's. The member is the real Wien text (../shared/validation).
func TestWholeZipDamaged(t *testing.T) {
	text := realdata.Text(t, "archive-v2", "AUM00011035-data.txt.gz")
	var b bytes.Buffer
	zw := zip.NewWriter(&b)
	w, err := zw.Create("wien.txt")
	if err != nil {
		t.Fatal(err)
	}
	w.Write(text)
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	good := b.Bytes()
	// The central directory header (PKWARE APPNOTE.TXT §4.3.12): CRC-32 at
	// offset 16, compressed size at 20, uncompressed size at 24.
	cd := bytes.LastIndex(good, []byte("PK\x01\x02"))
	if cd < 0 {
		t.Fatal("no central directory header")
	}
	patch := func(off int, delta uint32) []byte {
		bad := bytes.Clone(good)
		v := uint32(bad[cd+off]) | uint32(bad[cd+off+1])<<8 | uint32(bad[cd+off+2])<<16 | uint32(bad[cd+off+3])<<24
		v += delta
		bad[cd+off], bad[cd+off+1], bad[cd+off+2], bad[cd+off+3] = byte(v), byte(v>>8), byte(v>>16), byte(v>>24)
		return bad
	}
	for _, c := range []struct {
		name     string
		data     []byte
		reported bool // archive/zip reports it
	}{
		{"crc", patch(16, 1), true},
		{"larger", patch(24, 1000), true},
		{"smaller", patch(24, ^uint32(999)), true},
		// General purpose flag bit 0, encrypted (§4.4.4), at offset 8:
		// archive/zip ignores it and reads the (unencrypted) member.
		{"encrypted", patch(8, 1), false},
	} {
		in := filepath.Join(t.TempDir(), c.name+".zip")
		if err := os.WriteFile(in, c.data, 0o644); err != nil {
			t.Fatal(err)
		}
		outcome := func(opt Options) (map[string]string, []Skip, *Summary) {
			o := ingestOutcome(t, []string{in}, opt)
			return o.hashes, o.skips, o.sum
		}
		wantH, wantS, _ := outcome(Options{Workers: 1, decodeAll: true})
		if c.reported != (len(wantS) > 0) {
			t.Errorf("%s: the decoding path reports %v; want a report %v", c.name, wantS, c.reported)
		}
		for _, budget := range []int64{0, -1} {
			h, s, sum := outcome(Options{Workers: 1, StagingMemoryBytes: budget})
			if sum.decodedWhole != 0 {
				t.Errorf("%s, budget %d: decoded in one call", c.name, budget)
			}
			if !reflect.DeepEqual(h, wantH) || !reflect.DeepEqual(s, wantS) {
				t.Errorf("%s, budget %d: partitions %v, skips %v; decoding path %v, %v", c.name, budget, h, s, wantH, wantS)
			}
		}
	}
}

// TestRoomFor: the text buffers of the reading goroutines grow only while
// their budget holds the growth, an eighth beyond the size asked for when
// it can, and a buffer large enough is reused without a charge (worked by
// hand, a budget of 200 bytes: 80 asked, 90 taken; 85 fits; 160 asked,
// 180 taken in all; 21 more refused; 19 taken without the eighth).
func TestRoomFor(t *testing.T) {
	budget := &memBudget{limit: 200}
	var a, b readBuffers
	if !a.roomFor(budget, 80) || cap(a.text) != 90 || budget.used.Load() != 90 {
		t.Fatalf("80 bytes: cap %d, used %d; want 90 and 90", cap(a.text), budget.used.Load())
	}
	if !a.roomFor(budget, 85) || budget.used.Load() != 90 {
		t.Errorf("85 bytes in a 90-byte buffer charged: used %d", budget.used.Load())
	}
	if !a.roomFor(budget, 160) || cap(a.text) != 180 || budget.used.Load() != 180 {
		t.Errorf("growing to 160: cap %d, used %d; want 180 and 180", cap(a.text), budget.used.Load())
	}
	if b.roomFor(budget, 21) || budget.used.Load() != 180 {
		t.Errorf("21 more bytes past the budget: taken, used %d", budget.used.Load())
	}
	if !b.roomFor(budget, 19) || cap(b.text) != 19 || budget.used.Load() != 199 {
		t.Errorf("19 bytes, no room for an eighth more: cap %d, used %d; want 19 and 199", cap(b.text), budget.used.Load())
	}
	if b.roomFor(budget, 0) {
		t.Error("room for an unknown size (0)")
	}
}
