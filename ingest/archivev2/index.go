package archivev2

import (
	"bufio"
	"errors"
	"io"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

// Segment is a byte range of a station data file that holds consecutive
// soundings of one station and year. Reading the range with NewReaderAt
// gives exactly the soundings and errors a Reader of the whole file gives
// for those lines.
type Segment struct {
	StationID string
	Year      int   // calendar year of the nominal time of the soundings
	Offset    int64 // bytes from the start of the file
	Size      int64 // bytes
	FirstLine int   // 1-based line number of the range's first line
	Headers   int   // header records in the range (soundings, good or bad)
	// Head: the soundings' nominal times lie in the head of the year
	// (sounding.InYearHead, the first 36 hours), which the store reads
	// as context when it builds the previous year.
	Head bool
}

// ErrNoHeaders is returned by Index for input in which no header record
// can be read.
var ErrNoHeaders = errors.New("archive-v2: no readable header record")

// Index reads a station data file without decoding its levels and calls fn
// with each segment, in file order, as soon as it is complete. Segments
// tile the file: a new one starts at each header whose station or year
// differs from the previous good header's, or that enters or leaves the
// head of its year (Segment.Head). Lines that a Reader would
// reject are kept in the segment they fall in, so reading the segment
// reports them: data records before the first header belong to the first
// segment, and a header that cannot be read (or is longer than a Reader
// accepts) to the segment before it, or to the next one at the start of the
// file. Index returns ErrNoHeaders when no header can be read, a read error
// from r, or the first error from fn.
//
// Index reads only the header records in full, so it runs at close to the
// speed of splitting lines; it exists so that callers can find a file's
// station-years first and decode each one later, from the file itself.
func Index(r io.Reader, fn func(Segment) error) error {
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

func trimEOL(b []byte) []byte {
	for len(b) > 0 && (b[len(b)-1] == '\n' || b[len(b)-1] == '\r') {
		b = b[:len(b)-1]
	}
	return b
}

// NewReaderAt returns a reader of a part of a station data file that starts
// at 1-based line firstLine of the file (for example a Segment), so that
// line numbers in soundings and errors are the file's.
func NewReaderAt(r io.Reader, file, member string, firstLine int) *Reader {
	rd := NewReader(r, file, member)
	rd.line = max(firstLine, 1) - 1
	return rd
}
