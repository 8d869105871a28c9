// Package dailymax reads the daily maximum surface temperatures that the
// afternoon (Holzworth) mixing height may take instead of an afternoon
// sounding's (sondeclim ingest --daily-max).
package dailymax

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/physics/thermo"
)

// Record is one station's maximum temperature of one local day.
type Record struct {
	StationID string
	Date      time.Time // the local date, midnight UTC
	TmaxK     float64   // K
}

// Read reads daily maximum temperatures from CSV with the
// header line
//
//	station_id,date,tmax_c
//
// and one record per station and day: the station identifier as used by
// the soundings, the local date as YYYY-MM-DD, and the maximum surface
// temperature in °C (converted to K). Blank lines are skipped; an empty
// tmax_c means missing and the record is skipped. A malformed record stops
// reading with an error "line N: reason"; a repeated station and date is
// an error too. Records are returned in file order.
func Read(r io.Reader) ([]Record, error) {
	cr := csv.NewReader(ingest.LineEnds(r)) // a CR of its own ends a line too
	cr.FieldsPerRecord = 3
	cr.TrimLeadingSpace = true
	var out []Record
	seen := map[[2]string]bool{}
	header := true
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			if header {
				return nil, errors.New("daily maxima: empty input, want header station_id,date,tmax_c")
			}
			return out, nil
		}
		if err != nil {
			return nil, fmt.Errorf("daily maxima: %w", err)
		}
		line, _ := cr.FieldPos(0)
		if header {
			if strings.TrimPrefix(rec[0], "\ufeff") != "station_id" || rec[1] != "date" || rec[2] != "tmax_c" {
				return nil, fmt.Errorf("daily maxima: line %d: header %s, want station_id,date,tmax_c", line, ingest.Quote(strings.Join(rec, ",")))
			}
			header = false
			continue
		}
		if rec[0] == "" {
			return nil, fmt.Errorf("daily maxima: line %d: empty station_id", line)
		}
		d, err := time.Parse("2006-01-02", rec[1])
		if err != nil {
			return nil, fmt.Errorf("daily maxima: line %d: date %s is not YYYY-MM-DD", line, ingest.Quote(rec[1]))
		}
		if strings.TrimSpace(rec[2]) == "" {
			continue
		}
		tc, err := strconv.ParseFloat(strings.TrimSpace(rec[2]), 64)
		if err != nil || !(tc > -100 && tc < 70) {
			return nil, fmt.Errorf("daily maxima: line %d: tmax_c %s is not a temperature in °C", line, ingest.Quote(rec[2]))
		}
		k := [2]string{rec[0], rec[1]}
		if seen[k] {
			return nil, fmt.Errorf("daily maxima: line %d: repeated station %s and date %s", line, rec[0], rec[1])
		}
		seen[k] = true
		out = append(out, Record{StationID: rec[0], Date: d, TmaxK: tc + thermo.ZeroCelsiusK})
	}
}
