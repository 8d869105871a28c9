package engine

import (
	"bytes"
	"compress/gzip"
	"context"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/schema/store"
)

// TestStagingMemorySpill: decompressed archive-v2 text held in memory, staged on disk,
// or held until the budget runs out and then spilled in the middle of a
// decompressed copy gives the same partitions and the same skipped lines
// as the decoding path, and every byte of the budget is given back once
// the station-years are built. Real files of ../shared/validation
// (PROVENANCE.md): Barrow cut short and Göteborg with hour 99 as a plain
// file, Omaha 1950 portion and Wien gzipped.
func TestStagingMemorySpill(t *testing.T) {
	read := func(name string) []byte { return realdata.Text(t, "archive-v2", name) }
	first := append(read("USM00070026-data-truncated.txt"), read("SWM00002527-data-hour99.txt")...) // plain
	second := append(read("USM00074794-data-1950-portion.txt"), read("AUM00011035-data.txt.gz")...)
	if len(second) < 3<<20/2 {
		t.Fatalf("second input %d bytes: too short to spill past a 1 MiB allocation", len(second))
	}
	in := t.TempDir()
	if err := os.WriteFile(filepath.Join(in, "a-plain.txt"), first, 0o644); err != nil {
		t.Fatal(err)
	}
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(second)
	zw.Close()
	if err := os.WriteFile(filepath.Join(in, "b-second.txt.gz"), gz.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	run := func(opt Options) runOutcome { return ingestOutcome(t, []string{in}, opt) }
	want := run(Options{Workers: 2, decodeAll: true})
	if len(want.hashes) != 4 || len(want.skips) != 1 {
		t.Fatalf("decoding path: %d partitions, skips %v; want the 4 station-years and Barrow's cut sounding", len(want.hashes), want.skips)
	}
	for _, c := range []struct {
		name            string
		opt             Options
		inMemory, spill int
	}{
		{"disk only", Options{Workers: 2, StagingMemoryBytes: -1}, 0, 2},
		// A plain file is always read from itself.
		{"memory only", Options{Workers: 2, StagingMemoryBytes: 1 << 30}, 1, 1},
		// The gzip file states more text than the budget holds, so it is
		// decoded whole and written to disk (wholeGzip); a spill in the
		// middle of a stream is TestWholeDecoding's two-member inputs.
		{"spilled midway", Options{Workers: 2, StagingMemoryBytes: 1<<20 + 1000}, 0, 2},
		{"default", Options{Workers: 2}, 1, 1},
	} {
		got := run(c.opt)
		if !reflect.DeepEqual(got.hashes, want.hashes) || !reflect.DeepEqual(got.skips, want.skips) {
			t.Errorf("%s: partitions or skips differ from the decoding path:\n%v %v\n%v %v", c.name, got.hashes, got.skips, want.hashes, want.skips)
		}
		if got.sum.SoundingsRead != want.sum.SoundingsRead {
			t.Errorf("%s: %d soundings read, decoding path %d", c.name, got.sum.SoundingsRead, want.sum.SoundingsRead)
		}
		if got.sum.stagedInMemory != c.inMemory || got.sum.stagedOnDisk != c.spill {
			t.Errorf("%s: %d inputs held in memory and %d staged on disk, want %d and %d", c.name,
				got.sum.stagedInMemory, got.sum.stagedOnDisk, c.inMemory, c.spill)
		}
		if got.sum.heldAtEnd != 0 {
			t.Errorf("%s: %d bytes of the staging memory budget still charged after the build", c.name, got.sum.heldAtEnd)
		}
	}
}

// TestGzipSizeHint: the hint is the trailer's ISIZE (RFC 1952 §2.3.1),
// checked against the length of what was compressed; an implausible
// trailer (smaller than the file, larger than the limit) gives no hint.
func TestGzipSizeHint(t *testing.T) {
	text := bytes.Repeat([]byte("#USM00072403 2016 01 01 00 2300  1170 ncdc-gts ncdc-gts  404622 -1102144\n"), 3000)
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(text)
	zw.Close()
	path := filepath.Join(t.TempDir(), "a.gz")
	if err := os.WriteFile(path, gz.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	size := int64(gz.Len())
	if got := gzipSizeHint(f, size, 1<<30); got != int64(len(text)) {
		t.Errorf("hint %d, want the compressed text's %d bytes", got, len(text))
	}
	if got := gzipSizeHint(f, size, int64(len(text))-1); got != 0 {
		t.Errorf("hint %d over the limit, want 0", got)
	}
	if got := gzipSizeHint(f, int64(len(text))+1, 1<<30); got != 0 {
		t.Errorf("hint %d below the file's size, want 0", got)
	}
}

// TestMemBudget: take charges only what fits; give returns it; a nil
// budget holds nothing. (Unit scaffolding.)
func TestMemBudget(t *testing.T) {
	b := &memBudget{limit: 10}
	if !b.take(6) || b.take(5) || !b.take(4) || b.take(1) {
		t.Fatalf("takes of 6, 5, 4, 1 from 10: used %d", b.used.Load())
	}
	b.give(10)
	if b.used.Load() != 0 || !b.take(10) {
		t.Errorf("after giving back: used %d", b.used.Load())
	}
	var none *memBudget
	if none.take(1) {
		t.Error("a nil budget took bytes")
	}
}

// TestStagingCopySpill: a copy that outgrows its budget in the middle is
// written to its file whole (what it held in memory first), its budget
// given back; one that fits stays in memory with its capacity charged.
// (Unit scaffolding: the bytes are invented.)
func TestStagingCopySpill(t *testing.T) {
	text := bytes.Repeat([]byte("0123456789abcdef"), 3<<16) // 3 MiB
	write := func(c *stagingCopy) {
		for p := text; len(p) > 0; p = p[min(len(p), 40000):] {
			if _, err := c.Write(p[:min(len(p), 40000)]); err != nil {
				t.Fatal(err)
			}
		}
	}
	path := filepath.Join(t.TempDir(), "copy.txt")
	b := &memBudget{limit: 1<<20 + 5}
	c := newStagingCopy(b, path, 0)
	write(c)
	mem, held, err := c.finish()
	if err != nil || mem != nil || held != 0 || b.used.Load() != 0 {
		t.Fatalf("spilled copy: mem %d bytes, held %d, budget used %d, err %v", len(mem), held, b.used.Load(), err)
	}
	if got, err := os.ReadFile(path); err != nil || !bytes.Equal(got, text) {
		t.Errorf("spilled file: %d bytes (err %v), want the %d written", len(got), err, len(text))
	}
	b = &memBudget{limit: 8 << 20}
	c = newStagingCopy(b, filepath.Join(t.TempDir(), "never.txt"), 1000)
	write(c)
	mem, held, err = c.finish()
	if err != nil || !bytes.Equal(mem, text) || held != int64(cap(mem)) || b.used.Load() != held {
		t.Errorf("held copy: %d bytes, held %d of capacity %d, budget used %d, err %v", len(mem), held, cap(mem), b.used.Load(), err)
	}
}

// TestStagingMemoryIncremental: incremental runs over gzip inputs held in
// memory. A new input sharing a station-year with one ingested before
// makes the unchanged one be read again for that station-year only, and
// the store equals one built from all inputs at once; an unchanged input
// is skipped unread; a moved one is recognised by its digest and rebuilds
// nothing. Real files of ../shared/validation (PROVENANCE.md): Wien (a
// second input holds the first half of its soundings again) and Omaha's
// 1950 portion.
func TestStagingMemoryIncremental(t *testing.T) {
	wien := realdata.Text(t, "archive-v2", "AUM00011035-data.txt.gz")
	half := bytes.Index(wien[len(wien)/2:], []byte("\n#")) + len(wien)/2 + 1
	gzFile := func(dir, name string, text []byte) string {
		var b bytes.Buffer
		zw := gzip.NewWriter(&b)
		zw.Write(text)
		zw.Close()
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	in := t.TempDir()
	a := gzFile(in, "a.txt.gz", wien)
	b := gzFile(in, "b.txt.gz", realdata.Text(t, "archive-v2", "USM00074794-data-1950-portion.txt"))
	c := gzFile(t.TempDir(), "c.txt.gz", wien[:half])
	partitions := func(dir string) map[string]string {
		m, err := store.ReadManifest(dir, store.Shard{})
		if err != nil {
			t.Fatal(err)
		}
		out := map[string]string{}
		for k, p := range m.Partitions {
			out[k] = p.ContentHash
		}
		return out
	}
	ingest := func(dir string, files ...string) *Summary {
		sum, err := Run(context.Background(), dir, files, Options{Workers: 2})
		if err != nil {
			t.Fatal(err)
		}
		if sum.heldAtEnd != 0 {
			t.Errorf("%d bytes of the staging memory budget still charged", sum.heldAtEnd)
		}
		return sum
	}
	whole := t.TempDir()
	ingest(whole, a, b, c)
	inc := t.TempDir()
	ingest(inc, a, b)
	sum := ingest(inc, a, b, c)
	if sum.InputsUnchanged != 2 || sum.stagedInMemory != 2 || sum.DuplicatesMerged == 0 {
		t.Errorf("adding c: %d inputs unchanged (want a and b), %d copies held in memory (want c, and a again for its "+
			"station-years), %d duplicates merged (want c's copies of a's soundings)", sum.InputsUnchanged, sum.stagedInMemory, sum.DuplicatesMerged)
	}
	if got, want := partitions(inc), partitions(whole); !reflect.DeepEqual(got, want) || len(want) == 0 {
		t.Errorf("incremental store differs from the whole one:\n%v\n%v", got, want)
	}
	moved := filepath.Join(t.TempDir(), "b-moved.txt.gz")
	if err := os.Rename(b, moved); err != nil {
		t.Fatal(err)
	}
	before := partitions(inc)
	sum = ingest(inc, a, moved, c)
	if sum.InputsUnchanged != 2 || len(sum.Notes) != 1 || sum.Notes[0].Reason != "input_moved" || sum.PartitionsWritten != 0 {
		t.Errorf("moved b: %d unchanged, notes %v, %d partitions written; want a and c unchanged, one input_moved note, none written",
			sum.InputsUnchanged, sum.Notes, sum.PartitionsWritten)
	}
	if got := partitions(inc); !reflect.DeepEqual(got, before) {
		t.Errorf("moving an input changed the partitions:\n%v\n%v", got, before)
	}
}
