package queries

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"time"
	"unique"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/schema"
)

// EpisodeOptions sets how days are formed and which episode rules are
// evaluated (AttachEpisodes).
type EpisodeOptions struct {
	Days analyze.DayConfig
	// Criteria are evaluated in order; nil means analyze.BuiltinCriteria.
	Criteria []analyze.Criterion
}

// DefaultEpisodeOptions returns the documented defaults of package analyze.
func DefaultEpisodeOptions() EpisodeOptions {
	return EpisodeOptions{Days: analyze.DefaultDayConfig()}
}

// EpisodeCounts summarises what AttachEpisodes built.
type EpisodeCounts struct {
	Soundings, Days, Episodes, EpisodeDays int
}

// AttachEpisodes builds the tables days, episodes, episode_days and
// rule_months (package schema: DayRow, EpisodeRow, EpisodeDayRow,
// RuleMonthRow) in db from the soundings and
// afternoon_mixing views, replacing earlier ones. Days and episodes are
// computed per station over its whole record (analyze.BuildDays and
// analyze.FindEpisodes), so an episode spanning a year boundary or an
// append is one episode, and the result does not depend on how the store
// was partitioned, on worker counts or on input order.
//
// A store written before the heat-deficit columns existed is an error
// asking for a re-ingest.
func AttachEpisodes(ctx context.Context, db *sql.DB, o EpisodeOptions) (EpisodeCounts, error) {
	var n EpisodeCounts
	criteria := o.Criteria
	if criteria == nil {
		criteria = analyze.BuiltinCriteria()
	}
	seen := map[string]bool{}
	for _, c := range criteria {
		if err := c.Validate(); err != nil {
			return n, err
		}
		if seen[c.Name] {
			return n, fmt.Errorf("queries: episodes: two rules named %s", c.Name)
		}
		seen[c.Name] = true
	}
	obs, err := readDayObs(ctx, db)
	if err != nil {
		return n, err
	}
	n.Soundings = len(obs)
	holz, err := readHolzworth(ctx, db)
	if err != nil {
		return n, err
	}
	days := analyze.BuildDays(obs, holz, o.Days)
	return writeDayTables(ctx, db, days, criteria, n)
}

// writeDayTables builds the derived tables from days (sorted by station
// and date) and validated criteria.
func writeDayTables(ctx context.Context, db *sql.DB, days []analyze.DayRecord, criteria []analyze.Criterion, n EpisodeCounts) (EpisodeCounts, error) {
	n.Days = len(days)
	dayRows := make([]schema.DayRow, len(days))
	for i, d := range days {
		dayRows[i] = dayRow(d)
	}
	var epRows []schema.EpisodeRow
	var edRows []schema.EpisodeDayRow
	var rmRows []schema.RuleMonthRow
	for _, c := range criteria {
		rmRows = append(rmRows, ruleMonths(days, c)...)
		eps, err := analyze.FindEpisodes(days, c)
		if err != nil {
			return n, err
		}
		def := c.Definition()
		for _, e := range eps {
			season, sy := seasonOf(e.First)
			epRows = append(epRows, schema.EpisodeRow{StationID: e.StationID, Criterion: e.Criterion, Rule: def,
				FirstDay: e.First, LastDay: e.Last, Year: int32(e.First.Year()), Month: int32(e.First.Month()),
				Season: season, SeasonYear: int32(sy), LengthDays: int32(e.LengthDays), DaysMet: int32(e.DaysMet),
				DaysMissing: int32(e.DaysMissing), Soundings: int32(e.Soundings), OpenStart: e.OpenStart, OpenEnd: e.OpenEnd,
				PeakHDMJ: e.PeakHeatDeficitJ / 1e6, LowestMHM: e.LowestAfternoonMHM, LowestVent: e.LowestVentilationM2S})
			for _, d := range e.Days {
				edRows = append(edRows, schema.EpisodeDayRow{StationID: e.StationID, Criterion: e.Criterion,
					FirstDay: e.First, LocalDate: d.Date, Status: string(d.StatusName())})
			}
		}
	}
	n.Episodes, n.EpisodeDays = len(epRows), len(edRows)
	dir, err := os.MkdirTemp("", "sondeclim-episodes-")
	if err != nil {
		return n, fmt.Errorf("queries: episodes: %w", err)
	}
	defer os.RemoveAll(dir)
	if err := materialize(ctx, db, dir, schema.TableDays, dayRows); err != nil {
		return n, err
	}
	if err := materialize(ctx, db, dir, schema.TableEpisodes, epRows); err != nil {
		return n, err
	}
	if err := materialize(ctx, db, dir, schema.TableEpisodeDays, edRows); err != nil {
		return n, err
	}
	return n, materialize(ctx, db, dir, schema.TableRuleMonths, rmRows)
}

// ruleMonths counts how the days (sorted by station and date) answer c,
// per station and calendar month.
func ruleMonths(days []analyze.DayRecord, c analyze.Criterion) []schema.RuleMonthRow {
	var out []schema.RuleMonthRow
	for _, d := range days {
		y, m := int32(d.Date.Year()), int32(d.Date.Month())
		if k := len(out) - 1; k < 0 || out[k].StationID != d.StationID || out[k].Year != y || out[k].Month != m {
			season, sy := seasonOf(d.Date)
			out = append(out, schema.RuleMonthRow{StationID: d.StationID, Criterion: c.Name, Year: y, Month: m, Season: season, SeasonYear: int32(sy)})
		}
		r := &out[len(out)-1]
		switch c.Evaluate(d) {
		case analyze.Yes:
			r.DaysMet++
		case analyze.No:
			r.DaysFailed++
		default:
			r.DaysUnknown++
		}
	}
	return out
}

// dayRow is the days table's row of a day.
func dayRow(d analyze.DayRecord) schema.DayRow {
	season, sy := seasonOf(d.Date)
	return schema.DayRow{StationID: d.StationID, LocalDate: d.Date, Year: int32(d.Date.Year()),
		Month: int32(d.Date.Month()), Season: season, SeasonYear: int32(sy), Soundings: int32(d.Soundings),
		HasMorning: d.Morning >= 0, HasAfternoon: d.Afternoon >= 0,
		MorningSBI: d.MorningSBI.Bool(), MorningSBIK: d.MorningSBIStrengthK, AfternoonSBI: d.AfternoonSBI.Bool(),
		SBIPersists: d.SBIPersists(0).Bool(), MorningHDMJ: d.MorningHeatDeficitJ / 1e6,
		AfternoonHDMJ: d.AfternoonHeatDeficitJ / 1e6, MaxHDMJ: d.MaxHeatDeficitJ / 1e6,
		StableFraction: d.StableFraction, DeepStable: d.DeepStable.Bool(), AfternoonMHM: d.AfternoonMHM,
		AfternoonMHFrom: string(d.AfternoonMHSource), AfternoonWindMS: d.AfternoonWindMS, AfternoonVentM2S: d.VentilationM2S}
}

// materialize writes rows as a Parquet file with the table's documented
// columns and loads it into db as a table of that name.
func materialize[T any](ctx context.Context, db *sql.DB, dir, table string, rows []T) error {
	f := filepath.Join(dir, table+".parquet")
	if err := schema.WriteFile(f, table, rows, false); err != nil {
		return fmt.Errorf("queries: %s: %w", table, err)
	}
	lit := "'" + strings.ReplaceAll(filepath.ToSlash(f), "'", "''") + "'"
	if _, err := db.ExecContext(ctx, fmt.Sprintf(`DROP VIEW IF EXISTS "%s"`, table)); err != nil {
		return fmt.Errorf("queries: %s: %w", table, err)
	}
	if _, err := db.ExecContext(ctx, fmt.Sprintf(`CREATE OR REPLACE TABLE "%s" AS SELECT * FROM read_parquet(%s)`, table, lit)); err != nil {
		return fmt.Errorf("queries: %s: %w", table, err)
	}
	return nil
}

// readDayObs reads the analysable soundings' per-day inputs.
func readDayObs(ctx context.Context, db *sql.DB) ([]analyze.DayObs, error) {
	// The slice is made once at the number of stored soundings (a count the
	// Parquet footers answer), not grown by doubling: each doubling moves
	// every row to fresh memory.
	var n int64
	if err := db.QueryRowContext(ctx, "SELECT count(*) FROM soundings").Scan(&n); err != nil {
		return nil, fmt.Errorf("queries: episodes: %w", err)
	}
	out := make([]analyze.DayObs, 0, n)
	var o analyze.DayObs
	var heatDeficitMJ float64
	var sc Scanner
	sc.Str("station_id", &o.StationID)
	sc.Time("launch_time", &o.LaunchTime)
	sc.Float("longitude_deg", &o.LongitudeDeg)
	sc.Bool("sbi_present", &o.SBIPresent)
	sc.Float("sbi_strength_k", &o.SBIStrengthK)
	sc.Float("heat_deficit_mj_m2", &heatDeficitMJ)
	sc.Float("stable_layer_fraction", &o.StableFraction)
	sc.Float("mixing_height_parcel_m", &o.ParcelMHM)
	sc.Float("transport_wind_ms", &o.TransportWindMS)
	err := sc.Each(ctx, db, `SELECT station_id, launch_time, longitude_deg, coalesce(sbi_present, false) AS sbi_present,
		sbi_strength_k, heat_deficit_mj_m2, stable_layer_fraction, mixing_height_parcel_m, transport_wind_ms
		FROM soundings WHERE analysed(analysis_status)`, func() error {
		o.HeatDeficitJ = heatDeficitMJ * 1e6 // J m⁻²; NaN stays NaN
		// One copy of each identifier (the standard library's unique), so the
		// days' grouping, sorting and episode scans find equal identifiers by
		// their pointer instead of comparing their bytes.
		o.StationID = unique.Make(o.StationID).Value()
		out = append(out, o)
		return nil
	})
	if err != nil {
		if strings.Contains(err.Error(), "heat_deficit") || strings.Contains(err.Error(), "stable_layer") {
			return nil, fmt.Errorf("queries: episodes: the store predates the heat-deficit columns; ingest the inputs again (sondeclim ingest --store DIR PATH...): %w", err)
		}
		return nil, fmt.Errorf("queries: episodes: %w", err)
	}
	return out, nil
}

// readHolzworth reads the defined afternoon (Holzworth) mixing heights.
func readHolzworth(ctx context.Context, db *sql.DB) (map[analyze.DayKey]float64, error) {
	out := map[analyze.DayKey]float64{}
	var st string
	var d time.Time
	var h float64
	var sc Scanner
	sc.Str("station_id", &st)
	sc.Time("local_date", &d)
	sc.Float("height_agl_m", &h) // NULL (NaN) when not known: no entry
	err := sc.Each(ctx, db, `SELECT station_id, local_date,
		mixing_height_m(status, height_agl_m) AS height_agl_m
		FROM afternoon_mixing WHERE mh_defined(status)`, func() error {
		if !math.IsNaN(h) {
			out[analyze.DayKey{StationID: st, Date: d}] = h
		}
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("queries: episodes: afternoon mixing heights: %w", err)
	}
	return out, nil
}

func nullNaN(v sql.NullFloat64) float64 {
	if !v.Valid {
		return math.NaN()
	}
	return v.Float64
}

// seasonOf returns the meteorological season of a date and the year it
// belongs to (December with the following year's DJF; METHODS §8).
func seasonOf(t time.Time) (string, int) {
	y := t.Year()
	switch t.Month() {
	case time.December:
		return "DJF", y + 1
	case time.January, time.February:
		return "DJF", y
	case time.March, time.April, time.May:
		return "MAM", y
	case time.June, time.July, time.August:
		return "JJA", y
	}
	return "SON", y
}

// MentionsEpisodeTables reports whether SQL text names one of the tables
// AttachEpisodes builds, so that a command running user SQL builds them
// only when they are used.
func MentionsEpisodeTables(sqlText string) bool {
	s := strings.ToLower(sqlText)
	for _, t := range []string{schema.TableDays, schema.TableEpisodes, schema.TableEpisodeDays, schema.TableRuleMonths} {
		for i := strings.Index(s, t); i >= 0; {
			before := i == 0 || !identChar(s[i-1])
			after := i+len(t) >= len(s) || !identChar(s[i+len(t)])
			if before && after {
				return true
			}
			j := strings.Index(s[i+1:], t)
			if j < 0 {
				break
			}
			i += 1 + j
		}
	}
	return false
}

func identChar(c byte) bool {
	return c == '_' || c >= 'a' && c <= 'z' || c >= '0' && c <= '9'
}

// EpisodeClimatology returns the climatology of episodes of db (after
// AttachEpisodes with the same criteria) per station, criterion and
// period (o.By: season or month; o.Stations, o.FirstYear and o.LastYear
// select as for ClimatologyOf): years and days with soundings, episodes
// (counted in the period of their first day) and episodes per year, days
// inside episodes meeting the rule and their share of the days, length
// median, p90 and longest (calendar days), missing days inside,
// episodes with an open start or end, and the rule's definition. The columns are documented in
// climatology_episodes.sql; month or season, whichever o leaves empty, is
// dropped.
func EpisodeClimatology(ctx context.Context, db *sql.DB, o ClimatologyOptions, criteria []analyze.Criterion) (*Table, error) {
	o, err := o.normalized()
	if err != nil {
		return nil, err
	}
	if criteria == nil {
		criteria = analyze.BuiltinCriteria()
	}
	names, defs := make([]string, len(criteria)), make([]string, len(criteria))
	for i, c := range criteria {
		names[i], defs[i] = c.Name, c.Definition()
	}
	args := o.sampleArgs() // by, time, stations, first, last
	body, err := statement("climatology_episodes.sql")
	if err != nil {
		return nil, err
	}
	t, err := Query(ctx, db, body, args[0], args[2], args[3], args[4], names, defs)
	if err != nil {
		return nil, fmt.Errorf("episode climatology: %w", err)
	}
	drop := "month"
	if o.By == ByMonth {
		drop = "season"
	}
	var keep []string
	for _, c := range t.Columns {
		if c != drop {
			keep = append(keep, c)
		}
	}
	return selectColumns(t, keep), nil
}

// EnsureEpisodes runs AttachEpisodes with defaults unless db already has
// a days table.
func EnsureEpisodes(ctx context.Context, db *sql.DB) error {
	var n int
	if err := db.QueryRowContext(ctx, "SELECT count(*) FROM duckdb_tables() WHERE table_name = ?", schema.TableDays).Scan(&n); err != nil {
		return err
	}
	if n > 0 {
		return nil
	}
	_, err := AttachEpisodes(ctx, db, DefaultEpisodeOptions())
	return err
}
