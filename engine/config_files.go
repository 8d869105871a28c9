package engine

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"os"
	"strings"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/ingest/dailymax"
)

// This file reads the configuration files an ingest takes beside its
// inputs: the daily maximum temperatures (--daily-max) and a ventilation
// category table (--ventilation-table).

// ErrDailyMaxima marks an error in the daily-maxima file (--daily-max):
// absent, unreadable or malformed, or naming a station the run does not
// know. It is the caller's input, not a failure of the run; the command
// answers it as a usage error.
var ErrDailyMaxima = errors.New("bad daily maxima")

// dailyMaximaError is an error about the daily-maxima file; it is
// ErrDailyMaxima and reads as its message alone.
type dailyMaximaError struct{ msg string }

func (e *dailyMaximaError) Error() string        { return e.msg }
func (e *dailyMaximaError) Is(target error) bool { return target == ErrDailyMaxima }

// DailyMaximaFile is a file of daily maximum temperatures as read by
// LoadDailyMaxima.
type DailyMaximaFile struct {
	Path   string
	Maxima analyze.DailyMaxima
	// FirstLine maps a station id to the line of its first record (with
	// or without a value), so that an error about the station names it.
	FirstLine map[string]int
}

// maxima returns the lookup of f, nil for a nil f.
func (f *DailyMaximaFile) maxima() analyze.DailyMaxima {
	if f == nil {
		return nil
	}
	return f.Maxima
}

// LoadDailyMaxima reads a CSV file of daily maximum temperatures
// (ingest/dailymax: station_id,date,tmax_c) into the pairing's lookup.
// Errors wrap ErrDailyMaxima and name the file and, for a malformed
// record, the line: "daily maxima FILE:LINE: reason".
func LoadDailyMaxima(path string) (*DailyMaximaFile, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, &dailyMaximaError{fmt.Sprintf("daily maxima %s: cannot be read: %v", path, err)}
	}
	recs, err := dailymax.Read(bytes.NewReader(b))
	if err != nil {
		return nil, &dailyMaximaError{placeError("daily maxima", path, err)}
	}
	f := &DailyMaximaFile{Path: path, Maxima: analyze.DailyMaxima{}, FirstLine: map[string]int{}}
	for _, r := range recs {
		f.Maxima[analyze.DayKey{StationID: r.StationID, Date: r.Date}] = r.TmaxK
		f.FirstLine[r.StationID] = 0
	}
	// The records carry no line; find each station's first one the way
	// the reader found it (the file has just been read without error).
	cr := csv.NewReader(ingest.LineEnds(bytes.NewReader(b)))
	cr.FieldsPerRecord = 3
	cr.TrimLeadingSpace = true
	for {
		rec, err := cr.Read()
		if err != nil {
			break
		}
		if n, ok := f.FirstLine[rec[0]]; ok && n == 0 {
			f.FirstLine[rec[0]], _ = cr.FieldPos(0)
		}
	}
	return f, nil
}

// placeError writes a reader's error about a file as "WHAT FILE:LINE:
// reason" when the reader named a line ("line N: reason", or the CSV
// reader's "record on line N: ..."), else "WHAT FILE: reason".
func placeError(what, path string, err error) string {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return fmt.Sprintf("%s %s:%d: %v", what, path, pe.Line, pe.Err)
	}
	msg := strings.TrimPrefix(err.Error(), what+": ")
	if rest, ok := strings.CutPrefix(msg, "line "); ok {
		return fmt.Sprintf("%s %s:%s", what, path, rest)
	}
	return fmt.Sprintf("%s %s: %s", what, path, msg)
}

// VentilationTableNames lists the built-in ventilation tables, "a, b".
func VentilationTableNames() string {
	var names []string
	for _, t := range analyze.BuiltinVentilationTables() {
		names = append(names, t.Name)
	}
	return strings.Join(names, ", ")
}

// LoadVentilationTable returns the built-in ventilation table called arg,
// or else the table in the file arg (analyze.ParseVentilationTable).
// Errors name the file and, for a malformed table, the line
// ("ventilation table FILE:LINE: reason").
func LoadVentilationTable(arg string) (analyze.VentilationTable, error) {
	if t, ok := analyze.LookupVentilationTable(arg); ok {
		return t, nil
	}
	f, err := os.Open(arg)
	if err != nil {
		return analyze.VentilationTable{}, fmt.Errorf("ventilation table %q is neither a built-in table (%s) nor a readable file: %w", arg, VentilationTableNames(), err)
	}
	defer f.Close()
	t, err := analyze.ParseVentilationTable(f)
	if err != nil {
		if msg, ok := strings.CutPrefix(err.Error(), "line "); ok {
			return t, fmt.Errorf("ventilation table %s:%s", arg, msg)
		}
		return t, fmt.Errorf("ventilation table %s: %w", arg, err)
	}
	return t, nil
}
