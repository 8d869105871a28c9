package engine

import (
	"fmt"
	"os"
	"strings"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/ingest/dailymax"
)

// This file reads the configuration files an ingest takes beside its
// inputs: the daily maximum temperatures (--daily-max) and a ventilation
// category table (--ventilation-table).

// LoadDailyMaxima reads a CSV file of daily maximum temperatures
// (ingest/dailymax: station_id,date,tmax_c) into the pairing's lookup.
// Errors name the file (and the line, dailymax.Read).
func LoadDailyMaxima(path string) (analyze.DailyMaxima, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	recs, err := dailymax.Read(f)
	if err != nil {
		return nil, fmt.Errorf("daily maxima %s: %w", path, err)
	}
	m := analyze.DailyMaxima{}
	for _, r := range recs {
		m[analyze.DayKey{StationID: r.StationID, Date: r.Date}] = r.TmaxK
	}
	return m, nil
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
