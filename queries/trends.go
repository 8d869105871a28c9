package queries

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"slices"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/analyze/stats"
)

// TrendMetrics are the per-sounding quantities Trends can follow, with
// their units (see trends_yearly.sql).
var TrendMetrics = map[string]string{
	"mixing_height":     "m",
	"parcel_height":     "m",
	"sbi_frequency":     "fraction",
	"sbi_strength":      "K",
	"sbi_depth":         "m",
	"mixed_layer_depth": "m",
	"transport_wind":    "m/s",
	"ventilation_index": "m2/s",
}

// trendDecimals is the precision of each metric unit in TrendMetrics
// (schema.OutputDecimals gives the same for the column units).
var trendDecimals = map[string]int{"m": 0, "fraction": 2, "K": 1, "m/s": 1, "m2/s": 0}

// roundTo rounds x to d decimals, halves away from zero.
func roundTo(x float64, d int) float64 {
	p := math.Pow10(d)
	return math.Round(x*p) / p
}

// Defaults of TrendOptions (METHODS §8: trends on yearly statistics with
// ≥ 70 % coverage [M]; ≥ 10 years per multi-year cell [M]).
const (
	DefaultTrendCoverage = 0.7
	DefaultMinTrendYears = 10
	// LevelJump is the relative change of the yearly median number of
	// levels per sounding that is reported as a possible instrument or
	// practice change (common practice, no source).
	LevelJump = 0.3
)

// TrendOptions selects the series of Trends.
type TrendOptions struct {
	Stations            []string // station ids to keep; empty keeps all
	FirstYear, LastYear int      // season_year bounds, inclusive; 0 = open
	Metric              string   // one of TrendMetrics; default mixing_height
	// MinPerYear, when > 0, is the number of valid soundings a year needs
	// in a cell; otherwise Coverage applies.
	MinPerYear int
	// Coverage is the fraction of the expected soundings (one per day of
	// the season at the nominal hour) a year needs; default 0.7.
	Coverage float64
	// MinYears is the number of kept years below which a trend is
	// flagged (it is still computed from 3 years on); default 10.
	MinYears int
}

// TrendTables holds the result of Trends.
type TrendTables struct {
	Options TrendOptions // with defaults filled in
	Yearly  *Table       // trends_yearly.sql plus expected and kept columns
	Trends  *Table       // one row per station, season and hour
}

// Trends computes, per station, season and nominal hour, the Theil–Sen
// slope per decade and the Mann–Kendall test (analyze/stats) of the yearly
// medians of a metric (the yearly fraction for sbi_frequency), over the
// years that meet the coverage rule. Years are season years (December
// counts with the following DJF). Each row warns about gaps (years inside
// the record that are missing or too thin) and about jumps of more than
// LevelJump in the station's yearly median number of levels per sounding,
// naming the year: such a jump suggests a change of instrument or
// reporting practice that can masquerade as a trend (METHODS §8,
// homogeneity).
//
// Trends columns: station_id, season, nominal_hour, metric, unit, years
// (kept), first_year, last_year, median (of the kept yearly values),
// slope_per_decade (unit per 10 years), slope_pct_per_decade (relative to
// median; null when the median is 0), mk_s, mk_z, mk_p (two-sided), note.
// Statistics need at least 3 kept years; fewer give nulls.
func Trends(ctx context.Context, db *sql.DB, o TrendOptions) (*TrendTables, error) {
	if o.Metric == "" {
		o.Metric = "mixing_height"
	}
	unit, ok := TrendMetrics[o.Metric]
	if !ok {
		return nil, fmt.Errorf("unknown metric %q", o.Metric)
	}
	if o.Coverage == 0 {
		o.Coverage = DefaultTrendCoverage
	}
	if o.MinYears == 0 {
		o.MinYears = DefaultMinTrendYears
	}
	if !(o.Coverage > 0 && o.Coverage <= 1) || o.MinPerYear < 0 || o.MinYears < 0 {
		return nil, fmt.Errorf("coverage must be in (0, 1], minimum counts non-negative")
	}
	st := o.Stations
	if st == nil {
		st = []string{}
	}
	first, last := yearBounds(o.FirstYear, o.LastYear)
	y, err := runStatement(ctx, db, "trends_yearly.sql", "trends", st, first, last, o.Metric)
	if err != nil {
		return nil, err
	}
	col := func(name string) int { return slices.Index(y.Columns, name) }
	iSt, iSe, iH, iY, iV, iVal, iLv := col("station_id"), col("season"), col("nominal_hour"), col("season_year"),
		col("n_valid"), col("value"), col("median_levels")

	// Expected soundings and the coverage verdict per yearly row.
	y.Columns = append(y.Columns, "expected", "kept")
	levels := map[string]map[int64]float64{} // station → year → median levels
	for n, r := range y.Rows {
		year, _ := r[iY].(int64)
		nValid, _ := r[iV].(int64)
		exp := int64(seasonDays(fmt.Sprint(r[iSe]), int(year)))
		need := int64(math.Ceil(o.Coverage * float64(exp)))
		if o.MinPerYear > 0 {
			need = int64(o.MinPerYear)
		}
		_, hasValue := r[iVal].(float64)
		y.Rows[n] = append(r, exp, nValid >= need && hasValue)
		stn := fmt.Sprint(r[iSt])
		if levels[stn] == nil {
			levels[stn] = map[int64]float64{}
		}
		if lv, ok := r[iLv].(float64); ok {
			levels[stn][year] = lv
		}
	}
	jumps := map[string]string{}
	for stn, byYear := range levels {
		jumps[stn] = levelJumps(byYear)
	}

	out := &Table{Columns: []string{"station_id", "season", "nominal_hour", "metric", "unit", "years", "first_year", "last_year",
		"median", "slope_per_decade", "slope_pct_per_decade", "mk_s", "mk_z", "mk_p", "note"}}
	for start := 0; start < len(y.Rows); {
		end := start
		for end < len(y.Rows) && y.Rows[end][iSt] == y.Rows[start][iSt] && y.Rows[end][iSe] == y.Rows[start][iSe] &&
			y.Rows[end][iH] == y.Rows[start][iH] {
			end++
		}
		out.Rows = append(out.Rows, trendRow(y.Rows[start:end], iY, iVal, len(y.Columns)-1, o, unit, jumps))
		start = end
	}
	return &TrendTables{Options: o, Yearly: y, Trends: out}, nil
}

// trendRow computes the trend of one station, season and hour from its
// yearly rows (in year order).
func trendRow(rows [][]any, iY, iVal, iKept int, o TrendOptions, unit string, jumps map[string]string) []any {
	var years, values []float64
	var short []string
	for _, r := range rows {
		year, _ := r[iY].(int64)
		if kept, _ := r[iKept].(bool); kept {
			years = append(years, float64(year))
			values = append(values, r[iVal].(float64))
		} else {
			short = append(short, fmt.Sprint(year))
		}
	}
	r0 := rows[0]
	row := []any{r0[0], r0[1], r0[2], o.Metric, unit, int64(len(years)), nil, nil, nil, nil, nil, nil, nil, nil}
	var notes []string
	if len(years) > 0 {
		row[6], row[7] = int64(years[0]), int64(years[len(years)-1])
		if g := gaps(years); g != "" {
			notes = append(notes, "gap: "+g)
		}
	}
	if len(short) > 0 {
		notes = append(notes, "years below coverage: "+strings.Join(short, ","))
	}
	if len(years) >= 3 {
		med := stats.Quantile(values, 0.5, stats.Type7)
		slope := stats.TheilSenSlope(years, values) * 10
		mk := stats.MannKendallTest(values)
		if med != 0 {
			row[10] = 100 * slope / med
		}
		// The median at the precision of the metric's unit, the slope
		// with one decimal more (a decade's change is often smaller than
		// the data's resolution); the column names cannot say the unit,
		// which varies with the metric.
		d := trendDecimals[unit]
		row[8], row[9], row[11], row[12], row[13] = roundTo(med, d), roundTo(slope, d+1), mk.S, mk.Z, mk.P
	} else {
		notes = append(notes, "fewer than 3 years: no trend")
	}
	if len(years) >= 3 && len(years) < o.MinYears {
		notes = append(notes, fmt.Sprintf("only %d years (< %d)", len(years), o.MinYears))
	}
	if j := jumps[fmt.Sprint(r0[0])]; j != "" {
		notes = append(notes, j)
	}
	return append(row, strings.Join(notes, "; "))
}

// gaps lists the years between the first and last kept year that are not
// kept (missing from the store, or below coverage), as ranges "a-b".
func gaps(kept []float64) string {
	var out []string
	for i := 1; i < len(kept); i++ {
		if kept[i]-kept[i-1] > 1 {
			a, b := int(kept[i-1])+1, int(kept[i])-1
			if a == b {
				out = append(out, fmt.Sprint(a))
			} else {
				out = append(out, fmt.Sprintf("%d-%d", a, b))
			}
		}
	}
	return strings.Join(out, ",")
}

// levelJumps names the years in which the yearly median number of levels
// per sounding changed by more than LevelJump relative to the previous
// year with data, e.g. "levels per sounding 28 -> 61 in 2006".
func levelJumps(byYear map[int64]float64) string {
	var ys []int64
	for y := range byYear {
		ys = append(ys, y)
	}
	slices.Sort(ys)
	var out []string
	for i := 1; i < len(ys); i++ {
		a, b := byYear[ys[i-1]], byYear[ys[i]]
		if a > 0 && math.Abs(b/a-1) > LevelJump {
			out = append(out, fmt.Sprintf("levels per sounding %s -> %s in %d", formatText(a, 0), formatText(b, 0), ys[i]))
		}
	}
	if len(out) == 0 {
		return ""
	}
	return strings.Join(out, ", ") + " (instrument or practice change?)"
}

// seasonDays returns the number of days of season (DJF, MAM, JJA, SON) of
// season year y (DJF y runs from 1 December y−1 to the end of February y),
// or 0 for another label.
func seasonDays(season string, y int) int {
	start := map[string]time.Time{
		"DJF": time.Date(y-1, 12, 1, 0, 0, 0, 0, time.UTC),
		"MAM": time.Date(y, 3, 1, 0, 0, 0, 0, time.UTC),
		"JJA": time.Date(y, 6, 1, 0, 0, 0, 0, time.UTC),
		"SON": time.Date(y, 9, 1, 0, 0, 0, 0, time.UTC),
	}
	s, ok := start[season]
	if !ok {
		return 0
	}
	return int(s.AddDate(0, 3, 0).Sub(s).Hours() / 24)
}
