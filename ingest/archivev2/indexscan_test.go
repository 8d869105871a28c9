package archivev2

import (
	"bufio"
	"bytes"
	"errors"
	"io"
	"reflect"
	"strings"
	"testing"
	"testing/iotest"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

// Index scans chunks for '#' and line ends instead of reading line by
// line. These tests check it against indexReference, the line-by-line
// Index it replaced (commit b6e3735), which TestIndexRealFiles and
// TestIndexRecovery checked against reading whole files: the same
// segments and the same error for any input, however the reads are cut.
// The reference is b6e3735's code but for one correction, marked in it.

func indexReference(r io.Reader, fn func(Segment) error) error {
	br := bufio.NewReaderSize(ingest.LineEnds(r), 1<<20)
	var (
		off, lineNo int64
		cur         Segment
		have        bool // cur has a key
		started     bool // some good header was seen
	)
	cur.FirstLine = 1
	for {
		start := off
		line, err := br.ReadSlice('\n')
		n := int64(len(line))
		long := false
		if err == bufio.ErrBufferFull {
			// Corrected here: the line's first bytes are kept before
			// reading on (b6e3735 looked at them after the buffer had
			// been refilled, so a header over 1 MiB long was seen as
			// whatever followed it and not counted in Headers).
			line = bytes.Clone(line[:8])
		}
		for err == bufio.ErrBufferFull {
			long = true
			var more []byte
			more, err = br.ReadSlice('\n')
			n += int64(len(more))
		}
		if n == 0 && err == io.EOF {
			break
		}
		if err != nil && err != io.EOF {
			return err
		}
		off += n
		lineNo++
		if line = ingest.TrimBOM(line); len(line) > 0 && line[0] == '#' {
			header := trimEOL(line)
			var id string
			year, head, ok := 0, false, false
			if !long && n <= maxLine {
				if s, perr := parseHeader(header); perr == nil {
					id, year, head, ok = s.StationID, s.NominalTime.Year(), sounding.InYearHead(s.NominalTime), true
				}
			}
			if ok && have && (id != cur.StationID || year != cur.Year || head != cur.Head) {
				cur.Size = start - cur.Offset
				if err := fn(cur); err != nil {
					return err
				}
				cur = Segment{Offset: start, FirstLine: int(lineNo)}
			}
			if ok {
				cur.StationID, cur.Year, cur.Head, have, started = id, year, head, true, true
			}
			cur.Headers++
		}
		if err == io.EOF {
			break
		}
	}
	if !started {
		return ErrNoHeaders
	}
	cur.Size = off - cur.Offset
	return fn(cur)
}

var errInjected = errors.New("injected read error")

// indexBoth fails unless Index and indexReference give the same segments
// and error on in, read whole, a byte at a time, in halves, with the last
// bytes' io.EOF, and cut by a read error after half the input, and
// IndexBytes gives the reference's segments and error for in whole.
func indexBoth(t *testing.T, where string, in []byte) {
	t.Helper()
	run := func(ix func(io.Reader, func(Segment) error) error, r io.Reader) ([]Segment, error) {
		var out []Segment
		err := ix(r, func(sg Segment) error {
			out = append(out, sg)
			if len(out) == 5 {
				return errInjected // an error from fn stops both
			}
			return nil
		})
		return out, err
	}
	readers := map[string]func() io.Reader{
		"whole":   func() io.Reader { return bytes.NewReader(in) },
		"onebyte": func() io.Reader { return iotest.OneByteReader(bytes.NewReader(in)) },
		"half":    func() io.Reader { return iotest.HalfReader(bytes.NewReader(in)) },
		"dataerr": func() io.Reader { return iotest.DataErrReader(bytes.NewReader(in)) },
		"cut": func() io.Reader {
			return io.MultiReader(bytes.NewReader(in[:len(in)/2]), iotest.ErrReader(errInjected))
		},
	}
	// IndexBytes reads the input held in memory.
	fromBytes := func(r io.Reader, fn func(Segment) error) error {
		b, err := io.ReadAll(r)
		if err != nil {
			return err
		}
		return IndexBytes(b, fn)
	}
	for name, mk := range readers {
		if name == "onebyte" && len(in) > 1<<16 {
			continue
		}
		got, gerr := run(Index, mk())
		want, werr := run(indexReference, mk())
		if name == "whole" {
			bgot, berr := run(fromBytes, mk())
			if (berr == nil) != (werr == nil) || berr != nil && !errors.Is(berr, werr) {
				t.Errorf("%s, IndexBytes: error %v, reference %v", where, berr, werr)
			}
			if !reflect.DeepEqual(bgot, want) {
				t.Errorf("%s, IndexBytes: segments\n%+v\nreference\n%+v", where, bgot, want)
			}
		}
		if !errors.Is(gerr, werr) && !(gerr == nil && werr == nil) || (gerr == nil) != (werr == nil) {
			t.Errorf("%s, %s reads: error %v, reference %v", where, name, gerr, werr)
		}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s, %s reads: segments\n%+v\nreference\n%+v", where, name, got, want)
		}
	}
}

// TestIndexMatchesReference: every real archive-v2 station file, and
// invented inputs with byte-order marks whole and partial, '#' inside
// lines, CR-only, CR LF and missing line ends, blank lines, headers longer
// than a Reader accepts and lines longer than a read.
func TestIndexMatchesReference(t *testing.T) {
	for name, text := range realArchiveTexts(t) {
		indexBoth(t, name, text)
	}
	long := strings.Repeat("x", indexChunk+10)
	hdrY := strings.Replace(hdrA, "2020 03 05", "2021 01 02", 1)
	inputs := []string{
		"", "\n", "#", hdrA, hdrA + "\n" + lvSfc + "\n" + lvStd + "\n",
		hdrA + "\r\n" + lvSfc + "\r\n" + lvStd + "\r\n" + hdrY + "\r\n" + lvSfc,
		hdrA + "\r" + lvSfc + "\r" + lvStd + "\r" + hdrY + "\r" + lvSfc + "\r",
		lvSfc + "\n" + hdrA + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrY + "\n" + lvSfc + "\n",
		ingest.BOM + hdrA + "\n" + lvSfc + "\n" + lvStd + "\n" + ingest.BOM + hdrY + "\n" + lvSfc + "\n",
		"\xef\xbb" + hdrA + "\n" + lvSfc + "\n", "\xef" + hdrA + "\n", ingest.BOM + ingest.BOM + hdrA + "\n",
		"\xef\n" + hdrA + "\n", ingest.BOM + "\n" + hdrA + "\n" + ingest.BOM,
		"note # not a header\n" + hdrA + "\n" + lvSfc + " #\n" + lvStd + "\n" + hdrY + "#\n",
		" " + hdrA + "\n" + hdrA + "\n" + lvSfc + "\n" + lvStd + "\n",
		hdrA + "\n" + lvSfc + "\n" + lvStd + "\n#garbage\n" + lvSfc + "\n" + hdrY + "\n" + lvSfc + "\n",
		"#garbage\n" + hdrA + "\n" + lvSfc + "\n" + lvStd + "\n",
		hdrA + strings.Repeat(" ", maxLine-len(hdrA)-1) + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrY + "\n" + lvSfc + "\n",
		hdrA + strings.Repeat(" ", maxLine-len(hdrA)) + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrY + "\n" + lvSfc + "\n",
		hdrA + "\n" + hdrY + strings.Repeat(" ", maxLine) + "\n" + hdrY + "\n" + lvSfc + "\n",
		hdrA + "\n" + lvSfc + long + "\n" + hdrY + "\n" + lvSfc + "\n",
		hdrA + "\n" + hdrY + long + "\n" + hdrY + "\n" + lvSfc,
		hdrA + "\n" + long + "#" + "\n" + hdrY + "\n",
		"\n\n\n" + hdrA + "\n\n" + lvSfc + "\n\n" + hdrY + "\n",
	}
	// Many station-years, so that fn's injected error is reached.
	var many strings.Builder
	for y := 1990; y < 2010; y++ {
		many.WriteString(strings.Replace(hdrA, "2020", itoa4(y), 1) + "\n" + lvSfc + "\n" + lvStd + "\n")
	}
	inputs = append(inputs, many.String())
	for i, in := range inputs {
		indexBoth(t, "invented "+itoa4(i), []byte(in))
	}
}

func itoa4(n int) string {
	b := []byte{'0', '0', '0', '0'}
	for i := 3; i >= 0; i-- {
		b[i] = byte('0' + n%10)
		n /= 10
	}
	return string(b)
}

// FuzzIndexMatchesReference: Index and indexReference agree on any input.
func FuzzIndexMatchesReference(f *testing.F) {
	hdrY := strings.Replace(hdrA, "2020 03 05", "2021 01 02", 1)
	f.Add([]byte(hdrA + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrY + "\n" + lvSfc + "\n"))
	f.Add([]byte(ingest.BOM + hdrA + "\r" + lvSfc + "#\r\n" + "\xef\xbb" + hdrY + "\n"))
	f.Fuzz(func(t *testing.T, in []byte) {
		indexBoth(t, "fuzz", in)
	})
}
