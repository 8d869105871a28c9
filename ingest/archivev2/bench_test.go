package archivev2

import (
	"bytes"
	"io"
	"testing"

	"github.com/sondeclim/sondeclim/internal/benchcpu"
)

// sterlingLevels is the number of data records of the real Sterling 2016
// file (PROVENANCE.md, Sterling row: 131,306 levels).
const sterlingLevels = 131306

// BenchmarkReadSterling decodes the real Sterling 2016 file from memory,
// every sounding and level, as the ingest does for each station-year; the
// ns/level figure compares with the ingest's CPU time per level.
func BenchmarkReadSterling(b *testing.B) {
	benchReadSterling(b, func(text []byte) *Reader {
		return NewReader(bytes.NewReader(text), "sterling", "")
	})
}

// BenchmarkReadSterlingMem is BenchmarkReadSterling through
// NewReaderBytes, the reader the ingest uses for text held in memory
// (plain files and inflated copies), whose lines are cut where they lie.
func BenchmarkReadSterlingMem(b *testing.B) {
	benchReadSterling(b, func(text []byte) *Reader {
		return NewReaderBytes(text, "sterling", "")
	})
}

// benchReadSterling reads the Sterling file to its end with a reader from
// open at each turn, and fails unless it yields the file's level count.
func benchReadSterling(b *testing.B, open func([]byte) *Reader) {
	text := sterlingBytes(b)
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	cpu0 := benchcpu.Used()
	for b.Loop() {
		rd := open(text)
		n := 0
		for {
			s, err := rd.Next()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			n += len(s.Levels)
		}
		if n != sterlingLevels {
			b.Fatalf("%d levels, want %d (PROVENANCE.md)", n, sterlingLevels)
		}
	}
	benchcpu.PerLevel(b, cpu0, sterlingLevels)
}

// BenchmarkIndexSterling indexes the real Sterling 2016 file by
// station-year, the first pass the ingest makes over an archive-v2 input.
func BenchmarkIndexSterling(b *testing.B) {
	text := sterlingBytes(b)
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	cpu0 := benchcpu.Used()
	for b.Loop() {
		headers := 0
		err := Index(bytes.NewReader(text), func(sg Segment) error {
			headers += sg.Headers
			return nil
		})
		if err != nil {
			b.Fatal(err)
		}
		if headers == 0 {
			b.Fatal("no headers indexed")
		}
	}
	benchcpu.PerLevel(b, cpu0, sterlingLevels)
}
