package schema

import (
	"bufio"
	"io"
	"runtime"
	"sync"
)

// keeper holds values of T for reuse, at most one per processor
// (GOMAXPROCS, as many as can write files at once): a free list, which a
// collection does not empty as it does a sync.Pool. The writer's working
// memory went back to the allocator at nearly every collection of an
// ingest run and was allocated anew for the next file (some 100 MB of a
// run of 20 station-years). The zero keeper with fresh set is ready to
// use; it is safe for concurrent use.
type keeper[T any] struct {
	mu    sync.Mutex
	free  []T
	fresh func() T // makes a value when none is free
}

// get returns a free value, or a fresh one.
func (k *keeper[T]) get() T {
	k.mu.Lock()
	if n := len(k.free); n > 0 {
		v := k.free[n-1]
		var zero T
		k.free[n-1] = zero
		k.free = k.free[:n-1]
		k.mu.Unlock()
		return v
	}
	k.mu.Unlock()
	return k.fresh()
}

// put gives v back, or to the collector when the keeper holds its limit.
func (k *keeper[T]) put(v T) {
	k.mu.Lock()
	if len(k.free) < runtime.GOMAXPROCS(0) {
		k.free = append(k.free, v)
	}
	k.mu.Unlock()
}

// fileWriters are the buffered writers of the files written, reused from
// one file to the next: each is 1 MiB, and an ingest writes seven files
// per station-year.
var fileWriters = keeper[*bufio.Writer]{fresh: func() *bufio.Writer { return bufio.NewWriterSize(nil, 1<<20) }}

func getFileWriter(w io.Writer) *bufio.Writer {
	bw := fileWriters.get()
	bw.Reset(w)
	return bw
}

func putFileWriter(bw *bufio.Writer) {
	bw.Reset(nil)
	fileWriters.put(bw)
}
