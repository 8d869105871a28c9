package qc

import (
	"testing"

	"github.com/sondeclim/sondeclim/sounding"

	"github.com/sondeclim/sondeclim/internal/benchcpu"
)

// BenchmarkCheckSterling runs every check on each sounding of the real
// Sterling 2016 file (PROVENANCE.md), as the ingest does; ns/level
// compares with the ingest's CPU time per level.
func BenchmarkCheckSterling(b *testing.B) {
	ss := sterling(b)
	levels := benchcpu.Levels(ss)
	cfg := DefaultConfig()
	b.ReportAllocs()
	cpu0 := benchcpu.Used()
	for b.Loop() {
		for _, s := range ss {
			if r := Check(s, cfg); r.Status == "" {
				b.Fatal("no status")
			}
		}
	}
	benchcpu.PerLevel(b, cpu0, levels)
}

// BenchmarkApplySterling applies each Sterling sounding's report, the
// copy the analysis reads.
func BenchmarkApplySterling(b *testing.B) {
	ss := sterling(b)
	cfg := DefaultConfig()
	reps := make([]Report, len(ss))
	levels := 0
	for i, s := range ss {
		reps[i] = Check(s, cfg)
		levels += len(s.Levels)
	}
	b.ReportAllocs()
	cpu0 := benchcpu.Used()
	for b.Loop() {
		for i, s := range ss {
			if c := Apply(s, reps[i], false); len(c.Levels) != len(s.Levels) {
				b.Fatal("levels lost")
			}
		}
	}
	benchcpu.PerLevel(b, cpu0, levels)
}

// BenchmarkApplyIntoSterling is BenchmarkApplySterling with one reused
// copy, as the engine applies reports.
func BenchmarkApplyIntoSterling(b *testing.B) {
	ss := sterling(b)
	cfg := DefaultConfig()
	reps := make([]Report, len(ss))
	for i, s := range ss {
		reps[i] = Check(s, cfg)
	}
	levels := benchcpu.Levels(ss)
	dst := new(sounding.Sounding)
	b.ReportAllocs()
	cpu0 := benchcpu.Used()
	for b.Loop() {
		for i, s := range ss {
			if c := ApplyInto(dst, s, reps[i], false); len(c.Levels) != len(s.Levels) {
				b.Fatal("levels lost")
			}
		}
	}
	benchcpu.PerLevel(b, cpu0, levels)
}
