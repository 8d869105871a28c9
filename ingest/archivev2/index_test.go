package archivev2

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/internal/realdata"
	"github.com/sondeclim/sondeclim/sounding"
)

// outcome is what a reader yields, in order: a sounding's key and levels,
// or a parse error's line and message.
type outcome struct {
	station string
	year    int
	head    bool // in the head of its year (sounding.InYearHead)
	line    int
	levels  int
	err     string
}

func outcomes(t testing.TB, rd *Reader) []outcome {
	t.Helper()
	var out []outcome
	for i := 0; ; i++ {
		if i > 1e7 {
			t.Fatal("reader does not end")
		}
		s, err := rd.Next()
		if err == io.EOF {
			return out
		}
		var pe *ingest.ParseError
		switch {
		case errors.As(err, &pe):
			out = append(out, outcome{line: pe.Line, err: err.Error()})
		case err != nil:
			t.Fatalf("unexpected error %v", err)
		default:
			levelLines := 0
			for _, l := range s.Levels {
				levelLines += l.Line
			}
			out = append(out, outcome{station: s.StationID, year: s.NominalTime.Year(), head: sounding.InYearHead(s.NominalTime), line: s.Source.Line,
				levels: len(s.Levels)*1_000_000 + levelLines})
		}
	}
}

// bySegments reads in by Index and NewReaderAt and checks that the
// segments tile the input, that each holds one station-year (its head, or
// the rest of it), and returns
// what the readers of the segments yield, in order.
func bySegments(t testing.TB, in []byte) ([]outcome, []Segment, error) {
	t.Helper()
	var segs []Segment
	err := Index(bytes.NewReader(in), func(s Segment) error { segs = append(segs, s); return nil })
	if err != nil {
		return nil, nil, err
	}
	// Line ends as the readers see them (a CR of its own is one).
	norm, _ := io.ReadAll(ingest.LineEnds(bytes.NewReader(in)))
	var out []outcome
	var next int64
	for _, sg := range segs {
		if sg.Offset != next || sg.Size <= 0 {
			t.Fatalf("segment %+v does not follow the previous one (ends at %d)", sg, next)
		}
		next = sg.Offset + sg.Size
		if lines := bytes.Count(norm[:sg.Offset], []byte{'\n'}) + 1; lines != sg.FirstLine {
			t.Fatalf("segment %+v: first line is %d", sg, lines)
		}
		got := outcomes(t, NewReaderAt(bytes.NewReader(in[sg.Offset:next]), "f", "", sg.FirstLine))
		for _, o := range got {
			if o.err == "" && (o.station != sg.StationID || o.year != sg.Year || o.head != sg.Head) {
				t.Fatalf("segment %s %d (head %v) yields a sounding of %s %d (head %v)", sg.StationID, sg.Year, sg.Head, o.station, o.year, o.head)
			}
		}
		out = append(out, got...)
	}
	if next != int64(len(in)) {
		t.Fatalf("segments end at %d of %d bytes", next, len(in))
	}
	return out, segs, nil
}

// checkSame asserts that reading in segment by segment yields exactly
// what reading it whole does (soundings, line numbers, errors, order).
func checkSame(t testing.TB, in []byte) []Segment {
	t.Helper()
	whole := outcomes(t, NewReader(bytes.NewReader(in), "f", ""))
	parts, segs, err := bySegments(t, in)
	if errors.Is(err, ErrNoHeaders) {
		for _, o := range whole {
			if o.err == "" {
				t.Fatalf("Index found no header but the reader read a sounding at line %d", o.line)
			}
		}
		return nil
	}
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(whole, parts) {
		t.Fatalf("segments yield\n%v\nthe whole input yields\n%v", parts, whole)
	}
	return segs
}

func readValidation(t *testing.T, name string) []byte {
	t.Helper()
	return realdata.Text(t, "archive-v2", name)
}

// TestIndexRealFiles: on the real station files of ../shared/validation
// (PROVENANCE.md), reading by segments equals reading whole, including the
// truncated Barrow file's level-count error and the hour-99 headers of
// Göteborg; Sterling from 2016 on splits into the head of its year and the
// rest.
func TestIndexRealFiles(t *testing.T) {
	for _, name := range []string{"SWM00002527-data-hour99.txt", "USM00070026-data-truncated.txt",
		"USM00074794-data-1950-portion.txt", "AUM00011035-data.txt.gz"} {
		t.Run(name, func(t *testing.T) {
			checkSame(t, readValidation(t, name))
		})
	}
	t.Run("sterling", func(t *testing.T) {
		// Sterling from 2016 holds one year: its 662 soundings (the
		// count the reader tests assert) in two segments, the head of the
		// year (the headers of 1 January 00 and 12 UTC and 2 January 00
		// UTC, before 2 January 12 UTC) and the rest.
		segs := checkSame(t, sterlingBytes(t))
		if len(segs) != 2 || segs[0].StationID != "USM00072403" || segs[0].Year != 2016 || !segs[0].Head || segs[0].Headers != 3 ||
			segs[1].Year != 2016 || segs[1].Head || segs[1].Headers != 659 {
			t.Errorf("segments %+v, want USM00072403 2016 with 3 headers in its head and 659 after", segs)
		}
	})
	t.Run("three files joined", func(t *testing.T) {
		// Three stations and years one after the other: one station-year
		// each (a head segment and the rest when the year's first 36 hours
		// are there), with as many headers as lines starting with '#' whose
		// columns 14-17 (YEAR, igra2-data-format.txt) name its year.
		var in []byte
		for _, name := range []string{"USM00070026-data-truncated.txt", "SWM00002527-data-hour99.txt", "AUM00011035-data.txt.gz"} {
			in = append(in, readValidation(t, name)...)
		}
		segs := checkSame(t, in)
		var got, want []string
		for i, s := range segs {
			if i > 0 && segs[i-1].StationID == s.StationID && segs[i-1].Year == s.Year && segs[i-1].Head && !s.Head {
				got[len(got)-1] = fmt.Sprintf("%s %d %d", s.StationID, s.Year, segs[i-1].Headers+s.Headers)
				continue
			}
			got = append(got, fmt.Sprintf("%s %d %d", s.StationID, s.Year, s.Headers))
		}
		for _, line := range strings.Split(string(in), "\n") {
			if !strings.HasPrefix(line, "#") {
				continue
			}
			key := line[1:12] + " " + line[13:17]
			if n := len(want); n > 0 && strings.HasPrefix(want[n-1], key+" ") {
				var c int
				fmt.Sscan(strings.TrimPrefix(want[n-1], key+" "), &c)
				want[n-1] = fmt.Sprintf("%s %d", key, c+1)
				continue
			}
			want = append(want, key+" 1")
		}
		if !reflect.DeepEqual(got, want) || len(got) != 3 {
			t.Errorf("segments %v, want %v", got, want)
		}
	})
}

// TestIndexRecovery: malformed lines stay with the segment they fall in,
// so their errors come out at the same lines. Invented records (unit
// scaffolding).
func TestIndexRecovery(t *testing.T) {
	hdrY := strings.Replace(hdrA, "2020 03 05", "2021 01 02", 1)
	for name, in := range map[string]string{
		"orphans first":        lvSfc + "\n" + lvStd + "\n" + hdrA + "\n" + lvSfc + "\n" + lvStd + "\n",
		"bad header in middle": hdrA + "\n" + lvSfc + "\n" + lvStd + "\n#garbage\n" + lvSfc + "\n" + hdrY + "\n" + lvSfc + "\n",
		"bad header first":     "#garbage\n" + lvSfc + "\n" + hdrY + "\n" + lvSfc + "\n",
		"year change, CRLF":    strings.ReplaceAll(hdrA+"\n"+lvSfc+"\n"+lvStd+"\n"+hdrY+"\n"+lvSfc+"\n", "\n", "\r\n"),
		"count mismatch":       hdrA + "\n" + lvSfc + "\n" + hdrY + "\n" + lvSfc + "\n" + lvStd + "\n",
		"no final newline":     hdrA + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrY + "\n" + lvSfc,
		"blank lines":          "\n\n" + hdrA + "\n\n" + lvSfc + "\n" + lvStd + "\n\n" + hdrY + "\n" + lvSfc + "\n\n",
		"long header":          hdrA + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrY + strings.Repeat(" ", 5000) + "\n" + lvSfc + "\n",
	} {
		t.Run(name, func(t *testing.T) {
			segs := checkSame(t, []byte(in))
			if len(segs) == 0 {
				t.Fatal("no segments")
			}
		})
	}
	if err := Index(strings.NewReader(lvSfc+"\n#garbage\n"), func(Segment) error { return nil }); !errors.Is(err, ErrNoHeaders) {
		t.Errorf("no readable header: got %v, want ErrNoHeaders", err)
	}
	if err := Index(strings.NewReader(""), func(Segment) error { return nil }); !errors.Is(err, ErrNoHeaders) {
		t.Errorf("empty input: got %v, want ErrNoHeaders", err)
	}
}

// FuzzIndex: for any input, reading by segments equals reading whole.
func FuzzIndex(f *testing.F) {
	hdrY := strings.Replace(hdrA, "2020 03 05", "2021 01 02", 1)
	f.Add([]byte(hdrA + "\n" + lvSfc + "\n" + lvStd + "\n" + hdrY + "\n" + lvSfc + "\n"))
	f.Add([]byte(lvSfc + "\n#bad\n" + hdrY + "\r\n" + lvSfc))
	if dir, _ := findValidation(); dir != "" {
		b, err := os.ReadFile(filepath.Join(dir, "USM00070026-data-truncated.txt"))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b[:min(len(b), 8192)])
	}
	f.Fuzz(func(t *testing.T, in []byte) {
		checkSame(t, in)
	})
}
