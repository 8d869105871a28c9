// Package tidycsv reads and writes the project's tidy CSV layout for
// campaign and high-resolution soundings (format name "tidy-csv"): one
// row per level, several soundings per file, units spelled out in the
// column names. The layout is specified in FORMAT.md next to this file.
//
// Reader hands out one sounding at a time, in the manner of encoding/csv:
// Next returns the next sounding, a *ingest.ParseError for a rejected
// sounding (after which it carries on with the following one), or io.EOF.
package tidycsv

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// Format is the reader name recorded in sounding.Source.Format.
const Format = "tidy-csv"

type column int

const (
	colStation column = iota
	colLaunch
	colNominal
	colPressure
	colHeight
	colTemperature
	colDewpoint
	colRelHumidity
	colWindDirection
	colWindSpeed
	colElapsed
	colLatitude
	colLongitude
	colElevation
	colKind
	numColumns
)

// columns lists the column names, in the order Write uses, and whether
// the header must contain them.
var columns = [numColumns]struct {
	name     string
	required bool
}{
	{"station_id", true},
	{"launch_time_utc", true},
	{"nominal_time_utc", false},
	{"pressure_hpa", true},
	{"height_m", true},
	{"temperature_c", true},
	{"dewpoint_c", false},
	{"relative_humidity_pct", false},
	{"wind_direction_deg", false},
	{"wind_speed_ms", false},
	{"elapsed_s", false},
	{"latitude_deg", false},
	{"longitude_deg", false},
	{"elevation_m", false},
	{"level_kind", false},
}

// Reasons specific to this format, wrapped in *ingest.ParseError.
var (
	ErrUnknownColumn = errors.New("unknown column")
	ErrMissingColumn = errors.New("required column missing")
	ErrReappears     = errors.New("sounding reappears after other rows; the rows of a sounding must be contiguous")
)

// junkLines is how many lines before the header the reader (and Sniff)
// look through for it; junkBytes bounds their bytes.
const (
	junkLines = 20
	junkBytes = 64 << 10
)

// Sniff reports whether prefix looks like the start of a tidy CSV file:
// one of its first lines (ending at LF or CR, after an optional UTF-8
// byte-order mark), normally the first, is a header naming at least
// station_id and launch_time_utc; lines of text before it are reported by
// the Reader.
func Sniff(prefix []byte) bool {
	for range junkLines {
		i := bytes.IndexAny(prefix, "\r\n")
		line := prefix
		if i >= 0 {
			line, prefix = prefix[:i], prefix[i+1:]
		} else {
			prefix = nil
		}
		if isHeader(line) {
			return true
		}
		if prefix == nil {
			return false
		}
	}
	return false
}

// isHeader reports whether line names station_id and launch_time_utc.
func isHeader(line []byte) bool {
	line = ingest.TrimBOM(bytes.TrimRight(line, "\r\n"))
	var st, lt bool
	for _, f := range bytes.Split(line, []byte(",")) {
		switch string(bytes.Trim(bytes.TrimSpace(f), `"`)) {
		case "station_id":
			st = true
		case "launch_time_utc":
			lt = true
		}
	}
	return st && lt
}

// row is one CSV record with its line number; err is set when the record
// could not be split into the header's fields.
type row struct {
	rec  []string
	line int
	err  error
}

// Reader reads soundings from a tidy CSV stream.
type Reader struct {
	src     *bufio.Reader
	cr      *csv.Reader
	base    int   // lines before the header (junk), added to csv line numbers
	junk    error // the report of those lines, returned after the header
	file    string
	idx     [numColumns]int // field index of each column, −1 if absent
	ncols   int
	started bool
	done    bool
	pending *row
	seen    map[sounding.Key]int // soundings already read → their first line
}

// NewReader returns a reader of r; file names the input in messages and
// in sounding.Source.
//
// A line ends at LF, CR LF or a CR of its own (ingest.LineEnds). Lines of
// text before the header (up to 20 lines, 64 KB) are reported once as
// ingest.ErrJunk and the file is read from the header on.
func NewReader(r io.Reader, file string) *Reader {
	return &Reader{src: bufio.NewReaderSize(ingest.LineEnds(r), junkBytes), file: file, seen: map[sounding.Key]int{}}
}

// findHeader looks for the header among the first lines and sets up the
// CSV reader from it. When none of them is a header, the CSV reader starts
// at the first line, whose header errors are then reported.
func (r *Reader) findHeader() {
	var consumed []byte
	var first string
	start := func(rest io.Reader) {
		r.cr = csv.NewReader(rest)
		r.cr.FieldsPerRecord = -1
		r.cr.ReuseRecord = false
	}
	for n := 0; n < junkLines; n++ {
		line, err := r.src.ReadSlice('\n')
		if isHeader(line) {
			if n > 0 {
				r.base = n
				r.junk = r.errorf(1, ingest.ErrJunk, "lines 1-%d before the header are not part of the table (the first: %s)", n, ingest.Quote(first))
			}
			start(io.MultiReader(bytes.NewReader(append([]byte(nil), line...)), r.src))
			return
		}
		if n == 0 {
			first = strings.TrimRight(string(line), "\r\n")
		}
		consumed = append(consumed, line...)
		if err != nil || len(consumed) > junkBytes {
			break
		}
	}
	start(io.MultiReader(bytes.NewReader(consumed), r.src))
}

func (r *Reader) errorf(line int, reason error, format string, a ...any) error {
	return &ingest.ParseError{File: r.file, Line: line, Offset: -1, Err: fmt.Errorf("%w: "+format, append([]any{reason}, a...)...)}
}

// errorAt is errorf for a line of the CSV reader (after the header's own
// line base).
func (r *Reader) errorAt(line int, reason error, format string, a ...any) error {
	return r.errorf(r.base+line, reason, format, a...)
}

// header reads and checks the header row. Any header error is final.
func (r *Reader) header() error {
	r.started = true
	r.findHeader()
	rec, err := r.cr.Read()
	if err == io.EOF {
		r.done = true
		return io.EOF
	}
	if err != nil {
		r.done = true
		return &ingest.ParseError{File: r.file, Line: r.base + 1, Offset: -1, Err: fmt.Errorf("%w: %v", ingest.ErrBadHeader, err)}
	}
	for i := range r.idx {
		r.idx[i] = -1
	}
	for i, name := range rec {
		name = strings.TrimSpace(name)
		if i == 0 {
			name = strings.TrimPrefix(name, "\ufeff")
		}
		c := lookup(name)
		if c < 0 {
			r.done = true
			return r.errorAt(1, ingest.ErrBadHeader, "%v %s (column %d); units are part of the name, see FORMAT.md", ErrUnknownColumn, ingest.Quote(name), i+1)
		}
		if r.idx[c] >= 0 {
			r.done = true
			return r.errorAt(1, ingest.ErrBadHeader, "column %s appears twice", ingest.Quote(name))
		}
		r.idx[c] = i
	}
	for c, col := range columns {
		if col.required && r.idx[c] < 0 {
			r.done = true
			return r.errorAt(1, ingest.ErrBadHeader, "%v: %q", ErrMissingColumn, col.name)
		}
	}
	r.ncols = len(rec)
	return nil
}

func lookup(name string) column {
	for c, col := range columns {
		if col.name == name {
			return column(c)
		}
	}
	return -1
}

func (r *Reader) next() (*row, error) {
	if r.pending != nil {
		p := r.pending
		r.pending = nil
		return p, nil
	}
	rec, err := r.cr.Read()
	if err == io.EOF {
		return nil, io.EOF
	}
	if err != nil {
		// FieldPos is only valid after a successful Read; the error
		// carries the line instead.
		line := 0
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			line, err = pe.Line, pe.Err
		}
		return &row{rec: rec, line: r.base + line, err: err}, nil
	}
	line, _ := r.cr.FieldPos(0)
	line += r.base
	if len(rec) != r.ncols {
		return &row{rec: rec, line: line, err: fmt.Errorf("%d fields, header has %d", len(rec), r.ncols)}, nil
	}
	return &row{rec: rec, line: line}, nil
}

// field returns the trimmed value of column c, or "" when absent.
func (r *Reader) field(w *row, c column) string {
	i := r.idx[c]
	if i < 0 || i >= len(w.rec) {
		return ""
	}
	return strings.TrimSpace(w.rec[i])
}

// key parses a row's station id and launch time.
func (r *Reader) key(w *row) (sounding.Key, error) {
	if w.err != nil && len(w.rec) == 0 {
		return sounding.Key{}, r.errorf(w.line, ingest.ErrBadLevel, "%v", w.err)
	}
	id := r.field(w, colStation)
	if id == "" {
		return sounding.Key{}, r.errorf(w.line, ingest.ErrBadLevel, "empty station_id")
	}
	t, err := parseTime(r.field(w, colLaunch))
	if err != nil {
		return sounding.Key{}, r.errorf(w.line, ingest.ErrBadLevel, "launch_time_utc: %v", err)
	}
	return sounding.Key{StationID: id, LaunchTime: t}, nil
}

func parseTime(s string) (time.Time, error) {
	t, err := time.Parse(time.RFC3339Nano, s)
	if err != nil {
		return time.Time{}, fmt.Errorf("%s is not an RFC 3339 time", ingest.Quote(s))
	}
	return t.UTC(), nil
}

// sameKey reports whether row w belongs to the sounding with key k whose
// first row had the raw station and launch fields raw.
func (r *Reader) sameKey(w *row, k sounding.Key, raw [2]string) bool {
	if len(w.rec) == 0 {
		return true // an unsplittable row counts against the current sounding
	}
	st, lt := r.field(w, colStation), r.field(w, colLaunch)
	if st != k.StationID {
		return false
	}
	if lt == raw[1] {
		return true
	}
	t, err := parseTime(lt)
	return err == nil && t.Equal(k.LaunchTime)
}

// Next returns the next sounding. A sounding with a bad row is skipped
// whole and reported as a *ingest.ParseError naming the first bad row's
// line; the following call carries on with the next sounding. A header
// error is returned once, followed by io.EOF. At the end of input Next
// returns io.EOF.
func (r *Reader) Next() (*sounding.Sounding, error) {
	if r.done {
		return nil, io.EOF
	}
	if !r.started {
		if err := r.header(); err != nil {
			return nil, err
		}
		if r.junk != nil {
			return nil, r.junk
		}
	}
	first, err := r.next()
	if err != nil {
		r.done = true
		return nil, err
	}
	k, err := r.key(first)
	if err != nil {
		r.skipSame(first)
		return nil, err
	}
	raw := [2]string{r.field(first, colStation), r.field(first, colLaunch)}
	var bad error
	if prev, ok := r.seen[k]; ok {
		bad = r.errorf(first.line, ingest.ErrBadLevel, "%v (first seen at line %d)", ErrReappears, prev)
	} else {
		r.seen[k] = first.line
	}
	s := &sounding.Sounding{
		StationID: k.StationID, LaunchTime: k.LaunchTime, LaunchTimeReported: true,
		LatitudeDeg: math.NaN(), LongitudeDeg: math.NaN(), ElevationM: math.NaN(),
		DeclaredLevels: -1,
		Source:         sounding.Source{File: r.file, Line: first.line, Format: Format},
	}
	for w := first; ; {
		if bad == nil {
			bad = r.addRow(s, w)
		}
		w, err = r.next()
		if err == io.EOF {
			r.done = true
			break
		}
		if !r.sameKey(w, k, raw) {
			r.pending = w
			break
		}
	}
	if bad != nil {
		return nil, bad
	}
	if s.NominalTime.IsZero() {
		s.NominalTime, s.NominalHourInferred = s.LaunchTime.Round(time.Hour), true
	}
	return s, nil
}

// skipSame reads past the rows after first that have the same station and
// launch fields, as written, so that a sounding whose key cannot be read
// (an unreadable launch time, an empty station) is reported once, not
// once per level.
func (r *Reader) skipSame(first *row) {
	if len(first.rec) == 0 {
		return
	}
	st, lt := r.field(first, colStation), r.field(first, colLaunch)
	for {
		w, err := r.next()
		if err != nil {
			r.done = true
			return
		}
		if len(w.rec) == 0 || r.field(w, colStation) != st || r.field(w, colLaunch) != lt {
			r.pending = w
			return
		}
	}
}

// addRow appends the level of row w to s, or returns the row's error.
func (r *Reader) addRow(s *sounding.Sounding, w *row) error {
	if w.err != nil {
		return r.errorf(w.line, ingest.ErrBadLevel, "%v", w.err)
	}
	var v [numColumns]float64
	for _, c := range []column{colPressure, colHeight, colTemperature, colDewpoint, colRelHumidity,
		colWindDirection, colWindSpeed, colElapsed, colLatitude, colLongitude, colElevation} {
		x, err := number(r.field(w, c))
		if err != nil {
			return r.errorf(w.line, ingest.ErrBadLevel, "%s: %v", columns[c].name, err)
		}
		v[c] = x
	}
	if f := r.field(w, colNominal); f != "" && s.NominalTime.IsZero() {
		t, err := parseTime(f)
		if err != nil {
			return r.errorf(w.line, ingest.ErrBadLevel, "nominal_time_utc: %v", err)
		}
		s.NominalTime = t
	}
	l := sounding.NewLevel()
	l.Line = w.line
	switch k := r.field(w, colKind); k {
	case "", "significant":
		l.Kind = sounding.KindSignificant
	case "surface":
		l.Kind = sounding.KindSurface
	case "standard":
		l.Kind = sounding.KindStandard
	case "wind_only":
		l.Kind = sounding.KindWindOnly
	default:
		return r.errorf(w.line, ingest.ErrBadLevel, "level_kind %s is not surface, standard, significant or wind_only", ingest.Quote(k))
	}
	set(&l, sounding.VarPressure, &l.PressurePa, v[colPressure]*100, sounding.Reported)
	set(&l, sounding.VarHeight, &l.HeightM, v[colHeight], sounding.Reported)
	set(&l, sounding.VarTemperature, &l.TemperatureK, v[colTemperature]+thermo.ZeroCelsiusK, sounding.Reported)
	l.DewpointK = v[colDewpoint] + thermo.ZeroCelsiusK
	set(&l, sounding.VarDewpointDepression, &l.DewpointDepressionK, l.TemperatureK-l.DewpointK, sounding.Derived)
	set(&l, sounding.VarRelHumidity, &l.RelHumidityPct, v[colRelHumidity], sounding.Reported)
	set(&l, sounding.VarWindDirection, &l.WindDirectionDeg, v[colWindDirection], sounding.Reported)
	set(&l, sounding.VarWindSpeed, &l.WindSpeedMS, v[colWindSpeed], sounding.Reported)
	set(&l, sounding.VarElapsedTime, &l.ElapsedS, v[colElapsed], sounding.Reported)
	if math.IsNaN(s.LatitudeDeg) && !math.IsNaN(v[colLatitude]) && !math.IsNaN(v[colLongitude]) {
		s.LatitudeDeg, s.LongitudeDeg = v[colLatitude], v[colLongitude]
	}
	if math.IsNaN(s.ElevationM) {
		s.ElevationM = v[colElevation]
	}
	s.Levels = append(s.Levels, l)
	return nil
}

// number parses a decimal number as FORMAT.md defines it; "" is missing
// (NaN). Only [+-]digits[.digits][(e|E)[+-]digits] (digits on at least one
// side of the point) is a number: NaN and infinite spellings, hexadecimal
// and underscores, which strconv.ParseFloat would accept, are rejected,
// and so is a value too large for float64. An empty field is the only
// missing marker.
func number(f string) (float64, error) {
	if f == "" {
		return math.NaN(), nil
	}
	if !isDecimal(f) {
		return 0, fmt.Errorf("%s is not a decimal number (see FORMAT.md)", ingest.Quote(f))
	}
	x, err := strconv.ParseFloat(f, 64)
	if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%s is not a finite number", ingest.Quote(f))
	}
	return x, nil
}

// isDecimal reports whether f is [+-]digits[.digits][(e|E)[+-]digits],
// with at least one digit before or after the point.
func isDecimal(f string) bool {
	i := 0
	if i < len(f) && (f[i] == '+' || f[i] == '-') {
		i++
	}
	digits := func() int {
		n := 0
		for i < len(f) && f[i] >= '0' && f[i] <= '9' {
			i++
			n++
		}
		return n
	}
	n := digits()
	if i < len(f) && f[i] == '.' {
		i++
		n += digits()
	}
	if n == 0 {
		return false
	}
	if i < len(f) && (f[i] == 'e' || f[i] == 'E') {
		i++
		if i < len(f) && (f[i] == '+' || f[i] == '-') {
			i++
		}
		if digits() == 0 {
			return false
		}
	}
	return i == len(f)
}

func set(l *sounding.Level, v sounding.Var, dst *float64, x float64, st sounding.Status) {
	if math.IsNaN(x) {
		return
	}
	*dst = x
	l.Status[v] = st
}

// Write writes soundings in tidy CSV with every column, one row per
// level. Values are written in the column's unit with the shortest
// decimal form that reads back to the same float64 in that unit; NaN is
// an empty field. nominal_time_utc is written only for soundings whose
// nominal hour was not inferred. Per-level statuses other than missing
// are not kept by the format.
func Write(w io.Writer, ss []*sounding.Sounding) error {
	cw := csv.NewWriter(w)
	rec := make([]string, numColumns)
	for c, col := range columns {
		rec[c] = col.name
	}
	if err := cw.Write(rec); err != nil {
		return fmt.Errorf("write tidy csv header: %w", err)
	}
	num := func(x float64) string {
		if math.IsNaN(x) {
			return ""
		}
		return strconv.FormatFloat(x, 'g', -1, 64)
	}
	for _, s := range ss {
		nominal := ""
		if !s.NominalHourInferred && !s.NominalTime.IsZero() {
			nominal = s.NominalTime.UTC().Format(time.RFC3339Nano)
		}
		for _, l := range s.Levels {
			rec[colStation] = s.StationID
			rec[colLaunch] = s.LaunchTime.UTC().Format(time.RFC3339Nano)
			rec[colNominal] = nominal
			rec[colPressure] = num(l.PressurePa / 100)
			rec[colHeight] = num(l.HeightM)
			rec[colTemperature] = num(l.TemperatureK - thermo.ZeroCelsiusK)
			rec[colDewpoint] = num(l.DewpointK - thermo.ZeroCelsiusK)
			rec[colRelHumidity] = num(l.RelHumidityPct)
			rec[colWindDirection] = num(l.WindDirectionDeg)
			rec[colWindSpeed] = num(l.WindSpeedMS)
			rec[colElapsed] = num(l.ElapsedS)
			rec[colLatitude] = num(s.LatitudeDeg)
			rec[colLongitude] = num(s.LongitudeDeg)
			rec[colElevation] = num(s.ElevationM)
			rec[colKind] = l.Kind.String()
			if err := cw.Write(rec); err != nil {
				return fmt.Errorf("write tidy csv %s: %w", s.StationID, err)
			}
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("write tidy csv: %w", err)
	}
	return nil
}
