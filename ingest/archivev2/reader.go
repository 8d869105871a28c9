package archivev2

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"math"
	"slices"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

// Format is the name this reader gives in sounding.Source.Format.
const Format = "archive-v2"

// maxLine bounds the bytes of one line the reader keeps; a longer line is
// read to its end and rejected. Real records are 52 (data) and 71 (header)
// characters long.
const maxLine = 4096

// Reader reads soundings from one station data file.
//
// Records are read line by line with a fixed-size buffer, so memory use does
// not grow with the file. Blank lines are skipped wherever they occur. A
// line ends at LF, CR LF or a CR of its own (ingest.LineEnds); a UTF-8
// byte-order mark at the start of a line (of the file, or of a file
// concatenated to another) is ignored.
// Rejections, each returned once as an *ingest.ParseError before the reader
// moves on:
//
//   - ingest.ErrOrphanLevel: data records (or any other text, such as a
//     note put before the first header) before the first header; a run of
//     them is reported once, at the line of its first record.
//   - ingest.ErrBadHeader: a header that cannot be read; the records after
//     it up to the next header are skipped with it. Line = the header's.
//   - ingest.ErrLevelCount: the header's NUMLEV differs from the number of
//     data records before the next header or the end of input (for example
//     a file cut short). The sounding is not emitted. Line = the header's.
//   - ingest.ErrBadLevel: a data record that cannot be read inside an
//     otherwise consistent sounding. The whole sounding is rejected, since a
//     profile with a hole where a record was is not what the source holds.
//     Line = the first bad record's.
//
// A read error from the underlying reader is returned wrapped with the file
// name (not as a ParseError) and repeated on every later call; a sounding
// whose records were all read before it is still returned first. io.EOF is
// returned at the end.
//
// Times. NominalTime is the header date at HOUR. The release time RELTIME
// is placed on the header date, the day before or the day after, whichever
// is closest to NominalTime (so "HOUR 00 RELTIME 2315" is a release at 23:15
// the day before). RELTIME HH99 (minute missing) is read as HH:00. RELTIME
// 9999 gives LaunchTime = NominalTime with LaunchTimeReported false. HOUR 99
// (nominal hour missing) is inferred from the release time rounded to the
// nearest multiple of 3 h (halves up, 24 h taken as 00 UTC of the header
// date) with NominalHourInferred true; when RELTIME is 9999 as well, the
// nominal time is 00 UTC of the header date and LaunchTime equals it.
//
// Levels and values follow parseLevel: LVLTYP2 = 1 makes a surface level
// whatever LVLTYP1 says (the files hold "21", "11" and "01" surfaces), else
// LVLTYP1 1/2/3 gives standard, significant and wind-only levels; LVLTYP2 = 2
// marks the tropopause. −9999 is NaN with status Missing, −8888 NaN with
// RemovedUpstream; the A/B flags go to UpstreamTier. ElevationM is the first
// surface level's height when reported, else NaN.
type Reader struct {
	br *bufio.Reader
	// text, when inMem, is the rest of input held in memory
	// (NewReaderBytes), whose lines are cut where they lie instead of
	// through br.
	text         []byte
	inMem        bool
	file, member string
	line         int   // lines consumed so far
	err          error // terminal: io.EOF or a read error

	// A header line already read while looking for the end of the
	// previous sounding.
	pending     []byte
	pendingLine int
	pendingLong bool
	havePending bool

	long []byte // holds the kept prefix of an over-long line

	// general makes the reader parse every level with parseLevelGeneral,
	// for the tests that check the fast path against it.
	general bool

	arena *sounding.LevelArena // where soundings' levels are kept (nil: the heap)
}

// UseLevelArena makes the reader keep the levels of the soundings it
// returns in a (nil: the heap, the default). They are then the caller's
// only until it resets a.
func (r *Reader) UseLevelArena(a *sounding.LevelArena) { r.arena = a }

// NewReader returns a reader of the station data file r. The file and
// member names are used only in error messages and sounding.Source.
func NewReader(r io.Reader, file, member string) *Reader {
	return &Reader{
		br:      bufio.NewReaderSize(ingest.LineEnds(r), maxLine),
		file:    file,
		member:  member,
		pending: make([]byte, 0, 128),
	}
}

// NewReaderBytes is NewReader of the text b held in memory. When b holds
// no carriage return (the byte ingest.LineEnds may change), lines are cut
// from b where they lie, with no copy; b must then not change while the
// reader is used. Other text is read through NewReader.
func NewReaderBytes(b []byte, file, member string) *Reader {
	if bytes.IndexByte(b, '\r') >= 0 {
		return NewReader(bytes.NewReader(b), file, member)
	}
	return &Reader{text: b, inMem: true, file: file, member: member, pending: make([]byte, 0, 128)}
}

// NewReaderBytesAt is NewReaderAt of the text b held in memory, as
// NewReaderBytes reads it.
func NewReaderBytesAt(b []byte, file, member string, firstLine int) *Reader {
	rd := NewReaderBytes(b, file, member)
	rd.line = max(firstLine, 1) - 1
	return rd
}

// memLine is readLine for text held in memory without carriage returns.
// A line is too long, as with the buffer of maxLine bytes NewReader reads
// through, when maxLine bytes pass without a line feed; its first 128
// bytes are kept.
func (r *Reader) memLine() (line []byte, tooLong bool, err error) {
	if len(r.text) == 0 {
		return nil, false, io.EOF
	}
	i := bytes.IndexByte(r.text, '\n')
	if i < 0 {
		line, r.text = r.text, nil
	} else {
		line, r.text = r.text[:i], r.text[i+1:]
	}
	if len(line) >= maxLine {
		tooLong = true
		r.long = append(r.long[:0], line[:128]...)
		line = r.long
	}
	r.line++
	return ingest.TrimBOM(line), tooLong, nil
}

// readLine returns the next line without its line terminator. The slice is
// valid until the next call. tooLong reports that the line exceeded maxLine
// bytes; only its first bytes are returned. It returns io.EOF at the end of
// input.
func (r *Reader) readLine() (line []byte, tooLong bool, err error) {
	if r.err != nil {
		return nil, false, r.err
	}
	if r.inMem {
		return r.memLine()
	}
	line, err = r.br.ReadSlice('\n')
	if err == bufio.ErrBufferFull {
		tooLong = true
		r.long = append(r.long[:0], line[:min(len(line), 128)]...)
		for err == bufio.ErrBufferFull {
			_, err = r.br.ReadSlice('\n')
		}
		line = r.long
	}
	switch {
	case err == io.EOF && (len(line) > 0 || tooLong):
		// last line without a terminator
	case err != nil:
		return nil, false, err
	}
	r.line++
	for len(line) > 0 && (line[len(line)-1] == '\n' || line[len(line)-1] == '\r') {
		line = line[:len(line)-1]
	}
	return ingest.TrimBOM(line), tooLong, nil
}

// stop records a terminal condition from readLine.
func (r *Reader) stop(err error) {
	if err == io.EOF {
		r.err = io.EOF
		return
	}
	name := r.file
	if r.member != "" {
		name += "!" + r.member
	}
	r.err = fmt.Errorf("read %s after line %d: %w", name, r.line, err)
}

func (r *Reader) keepHeader(line []byte, long bool) {
	r.pending = append(r.pending[:0], line...)
	r.pendingLine = r.line
	r.pendingLong = long
	r.havePending = true
}

func (r *Reader) parseError(line int, err error) *ingest.ParseError {
	return &ingest.ParseError{File: r.file, Member: r.member, Line: line, Offset: -1, Err: err}
}

func isBlank(b []byte) bool {
	for _, c := range b {
		if c != ' ' && c != '\t' {
			return false
		}
	}
	return true
}

// Next returns the next sounding, an *ingest.ParseError for a rejected
// sounding or run of lines (the following call continues after it), io.EOF
// at the end, or a wrapped read error.
func (r *Reader) Next() (*sounding.Sounding, error) {
	if !r.havePending {
		if err := r.findHeader(); err != nil {
			return nil, err
		}
	}
	r.havePending = false
	hdrLine, long := r.pendingLine, r.pendingLong

	var s *sounding.Sounding
	var hdrErr error
	if long {
		hdrErr = fmt.Errorf("%w: line longer than %d bytes", ingest.ErrBadHeader, maxLine)
	} else {
		s, hdrErr = parseHeader(r.pending)
	}
	if s != nil {
		s.Source = sounding.Source{File: r.file, Member: r.member, Line: hdrLine, Format: Format}
		// Room is reserved when the first record is present (a header
		// alone reserves none), for the declared count at once (grow).
		s.Levels = make([]sounding.Level, 0)
	}

	count, badLine := 0, 0
	var badErr error
	for {
		if s != nil && badErr == nil && r.inMem && !r.general {
			count += r.memLevels(s)
		}
		line, long, ok := r.nextData()
		if !ok {
			break
		}
		count++
		if s == nil || badErr != nil || count > s.DeclaredLevels {
			continue
		}
		if long {
			badLine, badErr = r.line, fmt.Errorf("%w: line longer than %d bytes", ingest.ErrBadLevel, maxLine)
			continue
		}
		if len(s.Levels) == cap(s.Levels) {
			// Grow once to the declared size, now that records are
			// really present.
			r.grow(s)
		}
		s.Levels = s.Levels[:len(s.Levels)+1]
		lv := &s.Levels[len(s.Levels)-1]
		parse := parseLevel
		if r.general {
			parse = parseLevelGeneral
		}
		if err := parse(lv, line); err != nil {
			s.Levels = s.Levels[:len(s.Levels)-1]
			badLine, badErr = r.line, err
			continue
		}
		lv.Line = r.line
	}

	if r.arena != nil && s != nil {
		// The capacity past the levels read goes back to the arena; all
		// of it for a sounding rejected below.
		if hdrErr != nil || count != s.DeclaredLevels || badErr != nil {
			s.Levels = r.arena.Trim(s.Levels[:0])
		} else {
			s.Levels = r.arena.Trim(s.Levels)
		}
	}
	switch {
	case hdrErr != nil:
		return nil, r.parseError(hdrLine, hdrErr)
	case count != s.DeclaredLevels:
		return nil, r.parseError(hdrLine, fmt.Errorf("%w: header declares %d, %d present",
			ingest.ErrLevelCount, s.DeclaredLevels, count))
	case badErr != nil:
		return nil, r.parseError(badLine, badErr)
	}
	s.ElevationM = math.NaN()
	for i := range s.Levels {
		if s.Levels[i].Kind == sounding.KindSurface {
			s.ElevationM = s.Levels[i].HeightM
			break
		}
	}
	return s, nil
}

// recordLen is the length of a data record as the archive writes it:
// columns 1–51 and a blank column 52.
const recordLen = 52

// memLevels reads into s, from text held in memory, the data records that
// follow as the archive writes them: records of recordLen characters and a
// line feed that parseLevelFast takes, up to the header's level count. It
// returns how many it read and leaves any other line (a header, a blank or
// short line, a record the fast path does not take, the last line of the
// text) to the general loop of Next, which reads it as it reads every line.
// A line feed that ends the record early lies in columns 1–51, which
// parseLevelFast refuses, or in column 52, tested here.
//
// The levels go where they lie in s.Levels, which grows once to the
// declared count when the first record is present.
func (r *Reader) memLevels(s *sounding.Sounding) int {
	t := r.text
	room := s.DeclaredLevels - len(s.Levels)
	if room <= 0 || len(t) <= recordLen || t[recordLen] != '\n' {
		return 0
	}
	if cap(s.Levels) < s.DeclaredLevels {
		r.grow(s)
	}
	lvs := s.Levels[len(s.Levels) : len(s.Levels)+room]
	n := 0
	for n < len(lvs) && len(t) > recordLen && t[recordLen] == '\n' && t[recordLen-1] != '\n' {
		lv := &lvs[n]
		if !parseLevelFast(lv, t[:recordLen]) {
			break
		}
		r.line++
		lv.Line = r.line
		t = t[recordLen+1:]
		n++
	}
	r.text = t
	s.Levels = s.Levels[:len(s.Levels)+n]
	return n
}

// grow gives s.Levels room for the sounding's declared level count, in
// the reader's arena when it has one.
func (r *Reader) grow(s *sounding.Sounding) {
	if r.arena != nil {
		s.Levels = r.arena.Grow(s.Levels, s.DeclaredLevels)
	} else {
		s.Levels = slices.Grow(s.Levels, s.DeclaredLevels-len(s.Levels))
	}
}

// findHeader reads up to the next header and keeps it as pending. It
// returns the terminal error at the end of input, or a ParseError for a run
// of data records that precede any header.
func (r *Reader) findHeader() error {
	if r.err != nil {
		return r.err
	}
	first, last := 0, 0
	for {
		if _, _, ok := r.nextData(); !ok {
			break
		}
		if first == 0 {
			first = r.line
		}
		last = r.line
	}
	if first != 0 {
		return r.parseError(first, fmt.Errorf("%w: records on lines %d-%d have no header",
			ingest.ErrOrphanLevel, first, last))
	}
	if !r.havePending {
		return r.err
	}
	return nil
}

// nextData returns the next data record, skipping blank lines. At a header
// (kept for the next call of Next) or at the end of the input (or a read
// error, kept in r.err) it returns ok false.
func (r *Reader) nextData() (line []byte, long, ok bool) {
	for {
		line, long, err := r.readLine()
		if err != nil {
			if r.err == nil {
				r.stop(err)
			}
			return nil, false, false
		}
		if !long && isBlank(line) {
			continue
		}
		if line[0] == '#' {
			r.keepHeader(line, long)
			return nil, false, false
		}
		return line, long, true
	}
}
