package archivev2

import (
	"bytes"
	"io"
	"syscall"
	"testing"
	"time"
)

// sterlingLevels is the number of data records of the real Sterling 2016
// file (PROVENANCE.md, Sterling row: 131,306 levels).
const sterlingLevels = 131306

// BenchmarkReadSterling decodes the real Sterling 2016 file from memory,
// every sounding and level, as the ingest does for each station-year; the
// ns/level figure compares with the ingest's CPU time per level.
func BenchmarkReadSterling(b *testing.B) {
	text := sterlingBytes(b)
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	cpu0 := cpuTime()
	for b.Loop() {
		rd := NewReader(bytes.NewReader(text), "sterling", "")
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
	reportPerLevel(b, cpu0, sterlingLevels)
}

// BenchmarkIndexSterling indexes the real Sterling 2016 file by
// station-year, the first pass the ingest makes over an archive-v2 input.
func BenchmarkIndexSterling(b *testing.B) {
	text := sterlingBytes(b)
	b.SetBytes(int64(len(text)))
	b.ReportAllocs()
	cpu0 := cpuTime()
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
	reportPerLevel(b, cpu0, sterlingLevels)
}

// cpuTime returns the CPU time (user and system) the process has used.
// On a loaded machine it measures the work better than the wall clock.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// reportPerLevel reports the wall and CPU time per level of b's loop
// (cpu0: cpuTime before it), over levels levels per iteration.
func reportPerLevel(b *testing.B, cpu0 time.Duration, levels int) {
	n := float64(b.N) * float64(levels)
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/n, "ns/level")
	b.ReportMetric(float64((cpuTime()-cpu0).Nanoseconds())/n, "cpu-ns/level")
}
