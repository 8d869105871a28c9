package archivev2

import (
	"bytes"
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
//
// The input is read in chunks of indexChunk bytes and searched for '#' (a
// header is the only line that starts with it) and line ends with the
// standard library's vectorised byte search, instead of line by line.
func Index(r io.Reader, fn func(Segment) error) error {
	ix := newIndexer(fn)
	rd := ingest.LineEnds(r)
	buf := make([]byte, indexChunk)
	for {
		n, err := rd.Read(buf)
		if n > 0 {
			if ferr := ix.scan(buf[:n]); ferr != nil {
				return ferr
			}
		}
		if err == io.EOF {
			break
		}
		if err != nil {
			return err
		}
	}
	return ix.end()
}

// IndexBytes is Index of the text b held in memory. Text without a
// carriage return, which is what ingest.LineEnds would change, is scanned
// where it lies, as one chunk, with no copy; other text is read through
// Index.
func IndexBytes(b []byte, fn func(Segment) error) error {
	if bytes.IndexByte(b, '\r') >= 0 {
		return Index(bytes.NewReader(b), fn)
	}
	ix := newIndexer(fn)
	if err := ix.scan(b); err != nil {
		return err
	}
	return ix.end()
}

func newIndexer(fn func(Segment) error) *indexer {
	ix := &indexer{fn: fn, hdr: make([]byte, 0, maxLine+1), lineNo: 1}
	ix.cur.FirstLine = 1
	return ix
}

// end completes the index at the end of the input: the last header, if
// the input ends inside it, and the last segment.
func (ix *indexer) end() error {
	if ix.state == lineHeader {
		if err := ix.header(); err != nil {
			return err
		}
	}
	if !ix.started {
		return ErrNoHeaders
	}
	ix.cur.Size = ix.off - ix.cur.Offset
	return ix.fn(ix.cur)
}

// indexChunk is the size of the reads Index makes.
const indexChunk = 1 << 20

// What Index knows of the line it is in.
const (
	lineFresh  = iota // at the start of a line, or inside a proper prefix of BOM
	lineHeader        // the line is a header ('#', after at most one BOM)
	lineOther         // any other line
)

// indexer is the state of Index between chunks.
type indexer struct {
	fn  func(Segment) error
	cur Segment
	// off is the bytes scanned so far; lineNo and lineOff the 1-based
	// number and the offset of the line being scanned.
	off, lineOff int64
	lineNo       int
	state        int
	have         bool   // cur has a key
	started      bool   // some good header was seen
	hdr          []byte // the header line's first bytes (up to maxLine+1)
	hdrLen       int64  // the header line's length, line end included
	bom          int    // bytes of a BOM seen at the start of a fresh line
}

// scan consumes one chunk c of the input.
func (ix *indexer) scan(c []byte) error {
	base := ix.off
	ix.off += int64(len(c))
	for i := 0; i < len(c); {
		switch ix.state {
		case lineFresh:
			// Decide from the line's first bytes: '#' or BOM then '#'.
			b := c[i]
			switch {
			case b == '#' && (ix.bom == 0 || ix.bom == len(ingest.BOM)):
				ix.state, ix.hdr, ix.hdrLen = lineHeader, ix.hdr[:0], int64(ix.bom)
				ix.hdr = append(ix.hdr, ingest.BOM[:ix.bom]...)
				continue
			case ix.bom < len(ingest.BOM) && b == ingest.BOM[ix.bom]:
				ix.bom++
				i++
				continue
			}
			ix.state = lineOther
		case lineOther:
			// Lines up to the next '#' are all other lines; the line
			// holding the '#' is a header if it starts there (after at
			// most one BOM).
			rest := c[i:]
			k := bytes.IndexByte(rest, '#')
			if k < 0 {
				k = len(rest)
			}
			last := bytes.LastIndexByte(rest[:k], '\n')
			if last < 0 {
				if k == len(rest) {
					return nil // the line goes on into the next chunk
				}
				i += k + 1 // a '#' inside this other line
				continue
			}
			ix.lineNo += bytes.Count(rest[:last], []byte{'\n'}) + 1
			ix.lineOff = base + int64(i+last+1)
			ix.state, ix.bom = lineFresh, 0
			i += last + 1
		case lineHeader:
			rest := c[i:]
			e := bytes.IndexByte(rest, '\n')
			end := e + 1
			if e < 0 {
				end = len(rest)
			}
			if room := maxLine + 1 - len(ix.hdr); room > 0 {
				ix.hdr = append(ix.hdr, rest[:min(end, room)]...)
			}
			ix.hdrLen += int64(end)
			i += end
			if e < 0 {
				return nil
			}
			if err := ix.header(); err != nil {
				return err
			}
			ix.lineNo++
			ix.lineOff = base + int64(i)
			ix.state, ix.bom = lineFresh, 0
		}
	}
	return nil
}

// header handles a complete header line (ix.hdr, ix.hdrLen bytes long) as
// Index does.
func (ix *indexer) header() error {
	var id string
	year, head, ok := 0, false, false
	if ix.hdrLen <= maxLine {
		if s, perr := parseHeader(trimEOL(ingest.TrimBOM(ix.hdr))); perr == nil {
			id, year, head, ok = s.StationID, s.NominalTime.Year(), sounding.InYearHead(s.NominalTime), true
		}
	}
	if ok && ix.have && (id != ix.cur.StationID || year != ix.cur.Year || head != ix.cur.Head) {
		ix.cur.Size = ix.lineOff - ix.cur.Offset
		if err := ix.fn(ix.cur); err != nil {
			return err
		}
		ix.cur = Segment{Offset: ix.lineOff, FirstLine: ix.lineNo}
	}
	if ok {
		ix.cur.StationID, ix.cur.Year, ix.cur.Head, ix.have, ix.started = id, year, head, true, true
	}
	ix.cur.Headers++
	return nil
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
