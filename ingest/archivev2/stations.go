package archivev2

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/sondeclim/sondeclim/ingest"
)

// ErrDuplicateStation reports a station id listed twice in a station list;
// the first entry is kept.
var ErrDuplicateStation = errors.New("station listed twice")

// Station is one entry of the archive's station list.
type Station struct {
	ID           string
	LatitudeDeg  float64 // degrees north; NaN when missing or mobile
	LongitudeDeg float64 // degrees east; NaN when missing or mobile
	ElevationM   float64 // m above mean sea level; NaN when missing or mobile
	Mobile       bool    // the list marks the position as mobile (ship, ice island)
	State        string  // U.S. postal state code, "" elsewhere
	Name         string
	FirstYear    int // first year of record
	LastYear     int // last year of record
	NumObs       int // number of soundings in the record
}

// ReadStations reads a station list in the layout of the archive's
// igra2-list-format.txt: ID 1–11, LATITUDE 13–20, LONGITUDE 22–30,
// ELEVATION 32–37 (m), STATE 39–40, NAME 42–71, FSTYEAR 73–76, LSTYEAR
// 78–81, NOBS 83–88 (1-based columns).
//
// Missing and mobile codes given by the format description become NaN:
// latitude −98.8888 (mobile), longitude −998.8888 (mobile), elevation
// −999.9 (missing) and −998.8 (mobile). Any mobile code sets Mobile and
// makes all three NaN; a latitude beyond ±90° or a longitude outside
// −180…360° is also NaN.
// Blank lines are skipped.
//
// A line that cannot be read is left out and reported: the returned error
// is then errors.Join of one *ingest.ParseError per rejected line (wrapping
// ingest.ErrBadLevel, or ErrDuplicateStation), and the map still holds every
// good line. The file name in those errors is r's Name() when r has one
// (as *os.File does), else "station list". A read error from r is returned
// wrapped, with the stations read so far.
func ReadStations(r io.Reader) (map[string]Station, error) {
	file := "station list"
	if n, ok := r.(interface{ Name() string }); ok {
		file = n.Name()
	}
	out := make(map[string]Station)
	var errs []error
	sc := bufio.NewScanner(ingest.LineEnds(r)) // a CR of its own ends a line too
	sc.Buffer(make([]byte, 0, 4096), 1<<20)
	lineNo := 0
	for sc.Scan() {
		lineNo++
		line := strings.TrimRight(string(ingest.TrimBOM(sc.Bytes())), "\r")
		if strings.TrimSpace(line) == "" {
			continue
		}
		st, err := parseStation(line)
		if err == nil {
			if _, dup := out[st.ID]; dup {
				err = fmt.Errorf("%w: %s", ErrDuplicateStation, st.ID)
			}
		}
		if err != nil {
			errs = append(errs, &ingest.ParseError{File: file, Line: lineNo, Offset: -1, Err: err})
			continue
		}
		out[st.ID] = st
	}
	if err := sc.Err(); err != nil {
		return out, fmt.Errorf("read %s after line %d: %w", file, lineNo, err)
	}
	return out, errors.Join(errs...)
}

func parseStation(line string) (Station, error) {
	bad := func(what, v string) error {
		return fmt.Errorf("%w: station list %s %s", ingest.ErrBadLevel, what, ingest.Quote(v))
	}
	col := func(from, to int) string {
		if from > len(line) {
			return ""
		}
		return strings.TrimSpace(line[from-1 : min(to, len(line))])
	}
	st := Station{ID: col(1, 11), State: col(39, 40), Name: col(42, 71)}
	if st.ID == "" || strings.ContainsAny(st.ID, " \t") {
		return st, bad("id", line[:min(11, len(line))])
	}
	num := func(what string, from, to int) (float64, error) {
		s := col(from, to)
		v, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, bad(what, s)
		}
		return v, nil
	}
	var err error
	if st.LatitudeDeg, err = num("latitude", 13, 20); err != nil {
		return st, err
	}
	if st.LongitudeDeg, err = num("longitude", 22, 30); err != nil {
		return st, err
	}
	if st.ElevationM, err = num("elevation", 32, 37); err != nil {
		return st, err
	}
	if st.LatitudeDeg == -98.8888 || st.LongitudeDeg == -998.8888 || st.ElevationM == -998.8 {
		st.Mobile = true
	}
	if st.Mobile || st.LatitudeDeg < -90 || st.LatitudeDeg > 90 {
		st.LatitudeDeg = math.NaN()
	}
	if st.Mobile || st.LongitudeDeg < -180 || st.LongitudeDeg > 360 {
		st.LongitudeDeg = math.NaN()
	}
	if st.Mobile || st.ElevationM == -999.9 {
		st.ElevationM = math.NaN()
	}
	ints := [...]struct {
		what     string
		from, to int
		dst      *int
	}{
		{"first year", 73, 76, &st.FirstYear},
		{"last year", 78, 81, &st.LastYear},
		{"number of soundings", 83, 88, &st.NumObs},
	}
	for _, f := range ints {
		v, err := strconv.Atoi(col(f.from, f.to))
		if err != nil {
			return st, bad(f.what, col(f.from, f.to))
		}
		*f.dst = v
	}
	return st, nil
}
