package bufr

import (
	"bytes"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/internal/realdata"
)

// FuzzReader feeds arbitrary bytes to the reader: it must never panic,
// every error must be a *ingest.ParseError (the input here cannot fail to
// read), every sounding must have a station, a time and levels, and the
// reader must end. Seeds: the real sample files (first 12 KiB of each),
// the descent of testdata and the hand-built messages of synth_test.go.
//
//	go test ./ingest/bufr -run '^$' -fuzz FuzzReader -fuzztime 5m -fuzzminimizetime 200x
//
// (-fuzzminimizetime keeps the engine from spending a minute shrinking
// every new 12 KiB input.)
func FuzzReader(f *testing.F) {
	if dir, err := filepath.Abs("../../../shared/validation/bufr"); err == nil {
		for _, name := range sampleFiles {
			if b, err := os.ReadFile(filepath.Join(dir, name)); err == nil {
				f.Add(b[:min(len(b), 12<<10)])
			}
		}
	}
	if b, err := os.ReadFile(filepath.Join("testdata", "descent-94461.bufr")); err == nil {
		f.Add(b) // the descent (3 09 056), see descent_test.go
	}
	var w bitWriter
	w.put(10, 7)
	w.put(0, 6)
	w.put(27315, 16)
	w.put(3, 6)
	w.put(1, 3)
	w.put(7, 3)
	f.Add(edition4([]uint16{FXY(0, 1, 1), FXY(0, 12, 101)}, 2, true, w.b))
	f.Add(edition4([]uint16{FXY(3, 9, 52)}, 1, false, make([]byte, 64)))
	f.Add(edition4([]uint16{FXY(2, 4, 4), FXY(0, 31, 21), FXY(1, 1, 0), FXY(0, 31, 1), FXY(0, 12, 101), FXY(2, 22, 0), FXY(1, 1, 0), FXY(0, 31, 2), FXY(0, 31, 31), FXY(2, 23, 0), FXY(2, 23, 255)}, 1, false, make([]byte, 40)))
	f.Fuzz(func(t *testing.T, b []byte) {
		r := NewReader(bytes.NewReader(b), "fuzz", "")
		// At most one error per byte and 65535 subsets per message.
		for range (len(b) + 10) * 65536 {
			s, err := r.Next()
			if err == io.EOF {
				return
			}
			if err != nil {
				var pe *ingest.ParseError
				if !errors.As(err, &pe) {
					t.Fatalf("error %v is not a ParseError", err)
				}
				if pe.Offset < 0 || pe.Offset > int64(len(b)) {
					t.Fatalf("offset %d outside the input of %d bytes", pe.Offset, len(b))
				}
				continue
			}
			if s.StationID == "" || s.LaunchTime.IsZero() || len(s.Levels) == 0 {
				t.Fatalf("sounding without station, time or levels: %+v", s)
			}
			for _, l := range s.Levels {
				if math.IsNaN(l.PressurePa) && math.IsNaN(l.HeightM) {
					t.Fatalf("level without pressure or height")
				}
			}
		}
		t.Fatalf("reader did not end")
	})
}

// TestSampleFilesWhole reads each real sample file through the Reader
// without any rejection (the counts are the messages bufr_count of
// Debian's ecCodes tools gives, PROVENANCE.md).
func TestSampleFilesWhole(t *testing.T) {
	want := map[string]int{"IUSK73_AMMC_040000.bufr": 1, "IUSK73_AMMC_182300.bufr": 1, "eccodes-python-temp.bufr": 3,
		"pdbufr-temp-420.bufr": 420, "pdbufr-temp_hires.bufr": 1, "uegabe.bufr": 1}
	for _, name := range sampleFiles {
		got := readAll(t, name, realdata.Text(t, "bufr", name))
		if len(got) != want[name] {
			t.Errorf("%s: %d soundings, want %d", name, len(got), want[name])
		}
	}
}
