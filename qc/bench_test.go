package qc

import (
	"syscall"
	"testing"
	"time"
)

// BenchmarkCheckSterling runs every check on each sounding of the real
// Sterling 2016 file (PROVENANCE.md), as the ingest does; ns/level
// compares with the ingest's CPU time per level.
func BenchmarkCheckSterling(b *testing.B) {
	ss := sterling(b)
	levels := 0
	for _, s := range ss {
		levels += len(s.Levels)
	}
	cfg := DefaultConfig()
	b.ReportAllocs()
	cpu0 := cpuTime()
	for b.Loop() {
		for _, s := range ss {
			if r := Check(s, cfg); r.Status == "" {
				b.Fatal("no status")
			}
		}
	}
	reportPerLevel(b, cpu0, levels)
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
	cpu0 := cpuTime()
	for b.Loop() {
		for i, s := range ss {
			if c := Apply(s, reps[i], false); len(c.Levels) != len(s.Levels) {
				b.Fatal("levels lost")
			}
		}
	}
	reportPerLevel(b, cpu0, levels)
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
