package temp

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"regexp"
	"sort"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/sounding"
)

// Format is the reader's format name.
const Format = "wmo-temp"

// ErrNoDate is wrapped in the ParseError returned when neither
// Options.Reference nor the file name gives the year and month.
var ErrNoDate = errors.New("TEMP gives only the day: set a reference time or put a YYYY-MM-DD date in the file name")

// ErrBadDate is wrapped in the ParseError for a report whose day does not
// exist in the reference month.
var ErrBadDate = errors.New("day of month not valid in the reference month")

// Station is what a station list knows about a station (ingest.Station).
type Station = ingest.Station

// Options configure a Reader. The zero value is usable when the file name
// carries a date.
type Options struct {
	// Reference gives the year and month of the reports (TEMP carries only
	// the day). When a report's day would fall more than 20 days after
	// Reference, the previous month is used. Zero: take the date from the
	// file name.
	Reference time.Time
	// Station, when not nil, looks up a WMO station number (5 digits) and
	// supplies position and elevation; otherwise they are NaN.
	Station func(id string) (Station, bool)
	// PilotHeightUnitM is the altitude unit of PILOT Part B height groups,
	// in m. Zero means 304.8 m (1000 ft; see the package documentation).
	PilotHeightUnitM float64
}

func (o *Options) pilotUnit() float64 {
	if o.PilotHeightUnitM > 0 {
		return o.PilotHeightUnitM
	}
	return 304.8
}

// Reader decodes the soundings of a TEMP bulletin stream. A stream is one
// synoptic time, so the Reader reads it whole on the first call to Next,
// then hands out one merged sounding per station and time; memory is
// bounded by a small multiple of the input size.
type Reader struct {
	r     io.Reader
	file  string
	opts  Options
	items []item
	pos   int
	done  bool
}

// item is a sounding or an error, at the line where it starts.
type item struct {
	line int
	s    *sounding.Sounding
	err  error
}

// MaxInputBytes is the longest TEMP input (file or member) the reader
// accepts, bytes. It decodes an input whole, holding every group of every
// report, which takes many times the input's size; the bound keeps that
// under a few hundred MB for any content. Bulletin files of TEMP reports
// are far smaller (a day of a national collection is in the order of a
// megabyte; from memory, no source).
const MaxInputBytes = 16 << 20

// NewReader returns a Reader of r; file names the input in messages and may
// carry the date (YYYY-MM-DD) of the reports.
func NewReader(r io.Reader, file string, opts Options) *Reader {
	return &Reader{r: r, file: file, opts: opts}
}

// Next returns the next sounding, io.EOF at the end, or a *ingest.ParseError
// for a rejected report; after a ParseError the following call continues
// with the rest of the input. Soundings come in the order in which their
// first part appears in the stream.
func (rd *Reader) Next() (*sounding.Sounding, error) {
	if !rd.done {
		rd.done = true
		data, err := io.ReadAll(io.LimitReader(rd.r, MaxInputBytes+1))
		if err != nil {
			return nil, fmt.Errorf("read %s: %w", rd.file, err)
		}
		if len(data) > MaxInputBytes {
			return nil, &ingest.ParseError{File: rd.file, Offset: -1, Err: fmt.Errorf("%w: TEMP input over %d bytes; "+
				"the reader holds a whole input and its groups in memory, so longer inputs are refused: split it into smaller files",
				ingest.ErrTooLarge, MaxInputBytes)}
		}
		rd.items = rd.decode(data)
	}
	if rd.pos >= len(rd.items) {
		return nil, io.EOF
	}
	it := rd.items[rd.pos]
	rd.pos++
	return it.s, it.err
}

func (rd *Reader) parseError(line int, err error) *ingest.ParseError {
	var le *lineError
	if errors.As(err, &le) {
		line, err = le.line, le.err
	}
	return &ingest.ParseError{File: rd.file, Line: line, Offset: -1, Err: err}
}

var fileDate = regexp.MustCompile(`(\d{4})-(\d{2})-(\d{2})`)

// reference returns the reference time from the options or the file name.
func (rd *Reader) reference() (time.Time, bool) {
	if !rd.opts.Reference.IsZero() {
		return rd.opts.Reference.UTC(), true
	}
	m := fileDate.FindStringSubmatch(filepath.Base(rd.file))
	if m == nil {
		return time.Time{}, false
	}
	t, err := time.Parse("2006-01-02", m[0])
	return t, err == nil
}

// stationKey identifies one sounding: station, day and hour.
type stationKey struct {
	station   string
	day, hour int
}

// decode turns the whole input into the list of items to hand out.
func (rd *Reader) decode(data []byte) []item {
	var items []item
	groups := map[stationKey]*[numParts]*report{}
	var keys []stationKey
	// Consecutive pieces of text that are not reports are reported once.
	var junk *junkRun
	flushJunk := func() {
		if junk != nil {
			items = append(items, item{line: junk.first, err: rd.parseError(junk.first, junk.err())})
			junk = nil
		}
	}
	for _, raw := range splitStream(data) {
		rep, err := decodeReport(raw, &rd.opts)
		if errors.Is(err, errSkip) {
			continue
		}
		if errors.Is(err, ingest.ErrJunk) {
			if junk == nil {
				junk = &junkRun{first: raw.toks[0].line, what: err}
			}
			junk.n++
			junk.last = raw.toks[len(raw.toks)-1].line
			continue
		}
		flushJunk()
		if err != nil {
			items = append(items, item{line: raw.toks[0].line, err: rd.parseError(raw.toks[0].line, err)})
			continue
		}
		k := stationKey{rep.station, rep.day, rep.hour}
		g, ok := groups[k]
		if !ok {
			g = new([numParts]*report)
			groups[k] = g
			keys = append(keys, k)
		}
		// Latest correction wins; the later of equal ranks wins.
		if old := g[rep.part]; old == nil || rep.rank >= old.rank {
			g[rep.part] = rep
		}
	}
	flushJunk()
	if len(keys) > 0 {
		ref, ok := rd.reference()
		if !ok {
			return []item{{line: 0, err: &ingest.ParseError{File: rd.file, Offset: -1, Err: ErrNoDate}}}
		}
		for _, k := range keys {
			for _, rep := range groups[k] {
				if rep != nil && rep.partial != nil {
					items = append(items, item{line: rep.line, err: rd.parseError(rep.line, rep.partial)})
				}
			}
			s, line, err := rd.build(k, groups[k], ref)
			if err != nil {
				items = append(items, item{line: line, err: rd.parseError(line, err)})
				continue
			}
			items = append(items, item{line: line, s: s})
		}
	}
	sort.SliceStable(items, func(i, j int) bool { return items[i].line < items[j].line })
	return items
}

// junkRun is a run of consecutive pieces of text without a part
// identifier (ingest.ErrJunk), reported as one error.
type junkRun struct {
	first, last, n int
	what           error // the first piece's error
}

func (j *junkRun) err() error {
	var le *lineError
	first := j.what
	if errors.As(first, &le) {
		first = le.err
	}
	if j.n == 1 {
		return first
	}
	return fmt.Errorf("%w (lines %d-%d: %d pieces of text up to the next report; the first shown)", first, j.first, j.last, j.n)
}

// date returns the nominal time of day/hour in the reference month (or the
// month before when that is more than 20 days after the reference).
func date(ref time.Time, day, hour int) (time.Time, bool) {
	y, m := ref.Year(), ref.Month()
	t := time.Date(y, m, day, hour, 0, 0, 0, time.UTC)
	if t.Sub(ref) > 20*24*time.Hour {
		m--
		t = time.Date(y, m, day, hour, 0, 0, 0, time.UTC)
	}
	// time.Date normalises 31 April to 1 May: reject it.
	return t, t.Day() == day
}

// build merges the parts of one station and time into a sounding.
func (rd *Reader) build(k stationKey, parts *[numParts]*report, ref time.Time) (*sounding.Sounding, int, error) {
	var first *report
	var lv []level
	for _, r := range parts {
		if r == nil {
			continue
		}
		if first == nil || r.order < first.order {
			first = r
		}
		lv = append(lv, r.levels...)
	}
	if parts[partA] != nil {
		first = parts[partA] // the sounding starts where its Part A is
	}
	nominal, ok := date(ref, k.day, k.hour)
	if !ok {
		return nil, first.line, fmt.Errorf("%w: day %d, reference %s", ErrBadDate, k.day, ref.Format("2006-01"))
	}
	s := &sounding.Sounding{
		StationID:      k.station,
		LatitudeDeg:    math.NaN(),
		LongitudeDeg:   math.NaN(),
		ElevationM:     math.NaN(),
		NominalTime:    nominal,
		LaunchTime:     nominal,
		DeclaredLevels: -1,
		Source:         sounding.Source{File: rd.file, Line: first.line, Format: Format},
	}
	for _, p := range []part{partA, partB, partC, partD} {
		if r := parts[p]; r != nil && r.hasLnch {
			s.LaunchTime = launchTime(nominal, r.launch)
			s.LaunchTimeReported = true
			break
		}
	}
	if rd.opts.Station != nil {
		if st, ok := rd.opts.Station(k.station); ok {
			s.StationName = st.Name
			s.LatitudeDeg, s.LongitudeDeg, s.ElevationM = st.LatitudeDeg, st.LongitudeDeg, st.ElevationM
		}
	}
	s.Levels = mergeLevels(lv, s.ElevationM)
	return s, first.line, nil
}

// launchTime places the launch hour and minute of 8GGgg within 12 h of the
// nominal time (a 00 UTC sounding is usually launched the evening before).
func launchTime(nominal time.Time, hm [2]int) time.Time {
	t := time.Date(nominal.Year(), nominal.Month(), nominal.Day(), hm[0], hm[1], 0, 0, time.UTC)
	switch d := t.Sub(nominal); {
	case d > 12*time.Hour:
		t = t.Add(-24 * time.Hour)
	case d < -12*time.Hour:
		t = t.Add(24 * time.Hour)
	}
	return t
}

// Sniff reports whether prefix looks like TEMP: a WMO framing character or
// a part identifier followed by a five-character group.
func Sniff(prefix []byte) bool {
	for _, id := range []string{"TTAA ", "TTBB ", "TTCC ", "TTDD ", "PPBB "} {
		i := bytes.Index(prefix, []byte(id))
		if i < 0 {
			continue
		}
		rest := bytes.Fields(prefix[i+5:])
		if len(rest) > 0 && len(rest[0]) == 5 {
			return true
		}
		if len(rest) == 0 {
			return true // prefix cut right after the identifier
		}
	}
	return false
}
