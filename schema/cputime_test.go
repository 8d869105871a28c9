package schema

import (
	"runtime/debug"
	"syscall"
	"testing"
	"time"
)

// processCPU returns the processor time (user and system) the process has
// used so far. Benchmarks report it per operation beside the wall time,
// because on a shared, loaded machine the wall time mostly measures the
// other processes.
func processCPU() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// reportCPU reports the process CPU time per operation since start (a
// processCPU value) as the metric cpu-ns/op.
func reportCPU(b *testing.B, start time.Duration) {
	b.ReportMetric(float64(processCPU()-start)/float64(b.N), "cpu-ns/op")
}

// ingestGC sets the collector as sondeclim ingest does (a collection when
// the heap has tripled, never beyond 768 MiB; cmd/sondeclim tuneGC) for
// the rest of the benchmark.
func ingestGC(b *testing.B) {
	old := debug.SetGCPercent(200)
	oldLimit := debug.SetMemoryLimit(768 << 20)
	b.Cleanup(func() {
		debug.SetGCPercent(old)
		debug.SetMemoryLimit(oldLimit)
	})
}
