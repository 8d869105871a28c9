package temp

import (
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// FuzzReader feeds arbitrary bytes to the reader: it must never panic and
// must end with io.EOF. Seeds: the real files of validation/temp (one
// bulletin each from the stream) and the METHODS §9 message.
func FuzzReader(f *testing.F) {
	f.Add([]byte(methodsPartA + "\n" + methodsPartB))
	dir, err := os.Getwd()
	if err == nil {
		v := filepath.Join(dir, "..", "..", "..", "shared", "validation", "temp")
		if b, err := os.ReadFile(filepath.Join(v, "83746-2023-02-23-00Z.txt")); err == nil {
			f.Add(b)
		}
		if b, err := os.ReadFile(filepath.Join(v, "bulletins-2022-07-13-00Z.wmo")); err == nil {
			for i, part := range strings.Split(string(b), "\x03") {
				if i%20 == 0 {
					f.Add([]byte(part))
				}
			}
		}
	}
	// A byte-order mark, CR-only line ends, text between reports.
	f.Add([]byte("\xef\xbb\xbfa note\r" + strings.ReplaceAll(methodsPartA, "\n", "\r") + "\rZCZC 123\rmore text=\r"))
	f.Fuzz(func(t *testing.T, data []byte) {
		rd := NewReader(strings.NewReader(string(data)), "fuzz", Options{Reference: time.Date(2022, 7, 13, 0, 0, 0, 0, time.UTC)})
		for i := 0; ; i++ {
			s, err := rd.Next()
			if err == io.EOF {
				return
			}
			if i > len(data)+1 {
				t.Fatal("more items than input bytes")
			}
			if err == nil && len(s.Levels) == 0 {
				t.Fatal("sounding without levels")
			}
			if err != nil && len(err.Error()) > 1000 {
				t.Fatalf("message of %d bytes quotes too much input", len(err.Error()))
			}
		}
	})
}

// BenchmarkReader decodes the 2022-07-13 bulletin stream (validation/temp).
func BenchmarkReader(b *testing.B) {
	dir := sharedDir(b)
	data, err := os.ReadFile(filepath.Join(dir, "bulletins-2022-07-13-00Z.wmo"))
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		rd := NewReader(strings.NewReader(string(data)), "bulletins-2022-07-13-00Z.wmo", Options{})
		for {
			if _, err := rd.Next(); err == io.EOF {
				break
			}
		}
	}
}
