// Package benchcpu is for benchmarks only: it reports the processor time a
// benchmark used beside its wall time. On a shared, loaded machine the wall
// clock mostly measures the other processes; the process's own user and
// system time measures the work.
package benchcpu

import (
	"syscall"
	"testing"
	"time"

	"github.com/sondeclim/sondeclim/sounding"
)

// Used returns the processor time (user and system) the process has used
// so far, or 0 if the system does not say.
func Used() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// PerLevel reports the wall and processor time per level of b's loop as the
// metrics ns/level and cpu-ns/level; start is Used before the loop and
// levels the number of levels one iteration handles.
func PerLevel(b *testing.B, start time.Duration, levels int) {
	n := float64(b.N) * float64(levels)
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/n, "ns/level")
	b.ReportMetric(float64((Used()-start).Nanoseconds())/n, "cpu-ns/level")
}

// PerOp reports the processor time per iteration since start (a Used
// value) as the metric cpu-ns/op.
func PerOp(b *testing.B, start time.Duration) {
	b.ReportMetric(float64(Used()-start)/float64(b.N), "cpu-ns/op")
}

// Levels returns the number of levels in ss, the per-iteration count
// PerLevel divides by when a benchmark handles every sounding of a file.
func Levels(ss []*sounding.Sounding) int {
	n := 0
	for _, s := range ss {
		n += len(s.Levels)
	}
	return n
}
