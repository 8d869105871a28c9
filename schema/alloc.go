package schema

import (
	"bufio"
	"io"
	"sync"
)

// fileWriters are the buffered writers of the files written, reused from
// one file to the next: each is 1 MiB, and an ingest writes seven files
// per station-year.
var fileWriters = sync.Pool{New: func() any { return bufio.NewWriterSize(nil, 1<<20) }}

func getFileWriter(w io.Writer) *bufio.Writer {
	bw := fileWriters.Get().(*bufio.Writer)
	bw.Reset(w)
	return bw
}

func putFileWriter(bw *bufio.Writer) {
	bw.Reset(nil)
	fileWriters.Put(bw)
}
