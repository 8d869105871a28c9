package archivev2

import (
	"bytes"
	"compress/gzip"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
)

// FuzzReader checks that any input ends in io.EOF without panicking, that
// every other error is an *ingest.ParseError, that every sounding
// agrees with its header's level count, and that the reader gives the same
// soundings and errors with the general level parser alone as with the
// fast path (sameReading).
func FuzzReader(f *testing.F) {
	f.Add([]byte(hdrA + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrB + "\n" + lvSfc + "\n"))
	f.Add([]byte(lvSfc + "\n" + hdrB + "\r\n" + lvSfc))
	// A byte-order mark, CR-only line ends, a line of text first.
	f.Add([]byte("\xef\xbb\xbfa note\r" + hdrA + "\r" + lvSfc + "\r" + lvStd + "\r\xef\xbb\xbf" + hdrB + "\r\r\n" + lvSfc))
	if dir, _ := findValidation(); dir != "" {
		for _, name := range []string{"SWM00002527-data-hour99.txt", "USM00070026-data-truncated.txt",
			"USM00074794-data-1950-portion.txt", "AUM00011035-data.txt.gz"} {
			b, err := os.ReadFile(filepath.Join(dir, name))
			if err != nil {
				f.Fatal(err)
			}
			if strings.HasSuffix(name, ".gz") {
				zr, err := gzip.NewReader(bytes.NewReader(b))
				if err != nil {
					f.Fatal(err)
				}
				b, _ = io.ReadAll(io.LimitReader(zr, 4096))
			}
			f.Add(b[:min(len(b), 4096)])
		}
		f.Add(sterlingBytes(f)[:4096])
	}
	f.Fuzz(func(t *testing.T, in []byte) {
		sameReading(t, "fuzz", in)
		rd := NewReader(bytes.NewReader(in), "fuzz", "")
		// Each call consumes at least one line, so the number of calls is
		// bounded by the number of lines (a CR of its own ends one too)
		// plus the final io.EOF.
		limit := bytes.Count(in, []byte{'\n'}) + bytes.Count(in, []byte{'\r'}) + 2
		for i := 0; ; i++ {
			if i > limit {
				t.Fatalf("no io.EOF after %d calls", i)
			}
			s, err := rd.Next()
			if err == io.EOF {
				return
			}
			var pe *ingest.ParseError
			if err != nil {
				if !errors.As(err, &pe) || pe.Line < 1 {
					t.Fatalf("error %v (%T) is not a ParseError with a line", err, err)
				}
				if len(err.Error()) > 1000 {
					t.Fatalf("message of %d bytes quotes too much input", len(err.Error()))
				}
				continue
			}
			if s == nil || len(s.Levels) != s.DeclaredLevels {
				t.Fatalf("sounding %+v does not match its header", s)
			}
		}
	})
}

// BenchmarkReader reads the unzipped Sterling file (7.0 MB, PROVENANCE.md)
// from memory.
func BenchmarkReader(b *testing.B) {
	data := sterlingBytes(b)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		rd := NewReader(bytes.NewReader(data), "bench", "")
		n := 0
		for {
			_, err := rd.Next()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			n++
		}
		if n != 662 {
			b.Fatalf("%d soundings", n)
		}
	}
}
