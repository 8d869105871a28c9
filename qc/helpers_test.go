package qc

import (
	"bytes"
	"compress/gzip"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/sondeclim/sondeclim/internal/realdata"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/archivev2"
	"github.com/sondeclim/sondeclim/sounding"
)

// validationDir returns ../shared/validation/archive-v2, or skips the test.
func validationDir(tb testing.TB) string { return realdata.Dir(tb, "archive-v2") }

// readAll drains an archive-v2 reader; parse errors fail the test.
func readAll(tb testing.TB, r io.Reader, name string) []*sounding.Sounding {
	tb.Helper()
	rd := archivev2.NewReader(r, name, "")
	var ss []*sounding.Sounding
	for {
		s, err := rd.Next()
		if err == io.EOF {
			return ss
		}
		var pe *ingest.ParseError
		if errors.As(err, &pe) {
			tb.Fatalf("unexpected parse error: %v", pe)
		}
		if err != nil {
			tb.Fatal(err)
		}
		ss = append(ss, s)
	}
}

// sterling reads the Sterling, Virginia 2016 station file (zip member).
func sterling(tb testing.TB) []*sounding.Sounding {
	tb.Helper()
	text := realdata.Text(tb, "archive-v2", "USM00072403-data-beg2016.txt.zip")
	return readAll(tb, bytes.NewReader(text), "USM00072403-data.txt")
}

// wien reads the Wien Hohe Warte 2015 station file (gzip).
func wien(tb testing.TB) []*sounding.Sounding {
	tb.Helper()
	f, err := os.Open(filepath.Join(validationDir(tb), "AUM00011035-data.txt.gz"))
	if err != nil {
		tb.Fatal(err)
	}
	defer f.Close()
	gz, err := gzip.NewReader(f)
	if err != nil {
		tb.Fatal(err)
	}
	return readAll(tb, gz, "AUM00011035-data.txt")
}

// clone returns a deep copy of s (levels are values).
func clone(s *sounding.Sounding) *sounding.Sounding {
	c := *s
	c.Levels = append([]sounding.Level(nil), s.Levels...)
	return &c
}

// sameFloat compares with NaN equal to NaN.
func sameFloat(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }
