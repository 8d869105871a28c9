package schema

import (
	"runtime/debug"
	"testing"
)

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
