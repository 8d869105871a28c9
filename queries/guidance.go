package queries

import (
	"context"
	"database/sql"
	"fmt"
	"slices"
	"strconv"
)

// GuidanceOptions selects the sample and the classes of the forecasters'
// tables. The zero value uses every station and year and the defaults
// documented on the fields.
type GuidanceOptions struct {
	Stations            []string // station ids to keep; empty keeps all
	FirstYear, LastYear int      // inclusive, 0 = open (season_year; calendar year for ventilation)
	// SBIClassesK are the ascending limits (K) of the morning SBI strength
	// classes; default 0, 2, 5: none, 0-2 K, 2-5 K, >=5 K (common practice,
	// no source).
	SBIClassesK []float64
	// BelowM are the heights (m above ground) whose probability of not
	// being reached is tabulated; default 600, 1000, 1500 (common
	// practice, no source).
	BelowM []float64
	// TmaxStepC is the width of the maximum-temperature bins in °C of
	// the Holzworth lookup; default 5.
	TmaxStepC float64
	// MinDays notes rows with fewer days; default MinTailSoundings.
	MinDays int
	// Only names the tables of GuidanceViews to compute; nil computes
	// all four. The others stay nil. The persistence table needs the
	// days tables of AttachEpisodes, by far the dearest part (about 2 s of
	// 2.2 s over 600 station-years).
	Only []string
}

// GuidanceTables holds the forecasters' tables (GuidanceOf).
type GuidanceTables struct {
	Options GuidanceOptions // with defaults filled in
	// Afternoon: one row per station, season, morning SBI class and
	// source, with n_below_<h>m and p_below_<h>m for each height of
	// BelowM (guidance_afternoon.sql).
	Afternoon *Table
	// Holzworth: afternoon mixing height by maximum-temperature bin
	// (guidance_holzworth.sql).
	Holzworth *Table
	// Ventilation: per station, month and hour, <category>_n and
	// <category>_frequency for each ventilation category
	// (guidance_ventilation.sql).
	Ventilation *Table
	// Persistence: probability that the morning SBI is still present on
	// the afternoon/evening sounding, by season and morning SBI class
	// (guidance_persistence.sql, over the days table of AttachEpisodes).
	Persistence *Table
}

// GuidanceViews names the tables of GuidanceTables for Table.
var GuidanceViews = []string{"afternoon", "holzworth", "ventilation", "persistence"}

// Table returns the table of GuidanceViews called name; an error when it
// is unknown or was not computed (GuidanceOptions.Only).
func (g *GuidanceTables) Table(name string) (*Table, error) {
	var t *Table
	switch name {
	case "afternoon":
		t = g.Afternoon
	case "holzworth":
		t = g.Holzworth
	case "ventilation":
		t = g.Ventilation
	case "persistence":
		t = g.Persistence
	default:
		return nil, fmt.Errorf("unknown table %q", name)
	}
	if t == nil {
		return nil, fmt.Errorf("table %s was not computed", name)
	}
	return t, nil
}

// Matches reports whether g's filter (Options: stations and years)
// matches the soundings of any of the four tables. A table with rows says
// so at once; when every table computed is empty and some were left out
// (Options.Only), those are computed to tell, since another table may use
// soundings the printed ones do not.
func (g *GuidanceTables) Matches(ctx context.Context, db *sql.DB) (bool, error) {
	if !g.empty() {
		return true, nil
	}
	if g.Options.Only == nil {
		return false, nil
	}
	o := g.Options
	o.Only = nil
	for _, v := range GuidanceViews {
		if !slices.Contains(g.Options.Only, v) {
			o.Only = append(o.Only, v)
		}
	}
	if len(o.Only) == 0 {
		return false, nil
	}
	others, err := GuidanceOf(ctx, db, o)
	if err != nil {
		return false, err
	}
	return !others.empty(), nil
}

// empty reports whether every table of g that was computed has no rows.
func (g *GuidanceTables) empty() bool {
	for _, t := range []*Table{g.Afternoon, g.Holzworth, g.Ventilation, g.Persistence} {
		if t != nil && len(t.Rows) > 0 {
			return false
		}
	}
	return true
}

// normalized fills defaults and checks o.
func (o GuidanceOptions) normalized() (GuidanceOptions, error) {
	if o.SBIClassesK == nil {
		o.SBIClassesK = []float64{0, 2, 5}
	}
	if o.BelowM == nil {
		o.BelowM = []float64{600, 1000, 1500}
	}
	if o.TmaxStepC == 0 {
		o.TmaxStepC = 5
	}
	if o.MinDays == 0 {
		o.MinDays = MinTailSoundings
	}
	switch {
	case len(o.SBIClassesK) == 0 || !slices.IsSorted(o.SBIClassesK) || hasDup(o.SBIClassesK):
		return o, fmt.Errorf("SBI class limits must be ascending and distinct, got %v", o.SBIClassesK)
	case len(o.BelowM) == 0 || slices.ContainsFunc(o.BelowM, func(h float64) bool { return !(h > 0) }):
		return o, fmt.Errorf("heights to stay below must be positive, got %v", o.BelowM)
	case !(o.TmaxStepC > 0):
		return o, fmt.Errorf("the maximum-temperature step must be positive, got %v", o.TmaxStepC)
	case o.MinDays < 0:
		return o, fmt.Errorf("minimum days must not be negative")
	}
	for _, v := range o.Only {
		if !slices.Contains(GuidanceViews, v) {
			return o, fmt.Errorf("unknown table %q", v)
		}
	}
	o.BelowM = slices.Clone(o.BelowM)
	slices.Sort(o.BelowM)
	o.BelowM = slices.Compact(o.BelowM)
	return o, nil
}

func hasDup(x []float64) bool {
	for i := 1; i < len(x); i++ {
		if x[i] == x[i-1] {
			return true
		}
	}
	return false
}

// yearBounds turns 0 (open) bounds into bindable ones.
func yearBounds(first, last int) (int64, int64) {
	f, l := int64(first), int64(last)
	if f == 0 {
		f = -1 << 30
	}
	if l == 0 {
		l = 1 << 30
	}
	return f, l
}

// GuidanceOf computes the forecasters' tables of db (see Open; it needs
// the soundings and afternoon_mixing views, and builds the days tables of
// AttachEpisodes with defaults unless they exist). The columns are documented
// in guidance_afternoon.sql, guidance_holzworth.sql and
// guidance_ventilation.sql.
func GuidanceOf(ctx context.Context, db *sql.DB, o GuidanceOptions) (*GuidanceTables, error) {
	o, err := o.normalized()
	if err != nil {
		return nil, err
	}
	g := &GuidanceTables{Options: o}
	st := o.Stations
	if st == nil {
		st = []string{}
	}
	first, last := yearBounds(o.FirstYear, o.LastYear)
	sample, err := statement("guidance_sample.sql")
	if err != nil {
		return nil, err
	}
	days := func(name string) (string, error) {
		body, err := statement(name)
		if err != nil {
			return "", err
		}
		return "WITH days AS (\n" + sample + "\n)\n" + body, nil
	}
	want := func(v string) bool { return o.Only == nil || slices.Contains(o.Only, v) }
	if want("afternoon") {
		q, err := days("guidance_afternoon.sql")
		if err != nil {
			return nil, err
		}
		long, err := Query(ctx, db, q, st, first, last, o.SBIClassesK, o.BelowM, int64(o.MinDays))
		if err != nil {
			return nil, fmt.Errorf("guidance (afternoon): %w", err)
		}
		g.Afternoon = afternoonWide(long)
	}
	if want("holzworth") {
		q, err := days("guidance_holzworth.sql")
		if err != nil {
			return nil, err
		}
		if g.Holzworth, err = Query(ctx, db, q, st, first, last, o.SBIClassesK, o.TmaxStepC, int64(o.MinDays)); err != nil {
			return nil, fmt.Errorf("guidance (holzworth): %w", err)
		}
	}
	if want("ventilation") {
		vent, err := runStatement(ctx, db, "guidance_ventilation.sql", "guidance (ventilation)", st, first, last)
		if err != nil {
			return nil, err
		}
		keys := []string{"station_id", "month", "nominal_hour"}
		base := distinctRows(selectColumns(vent, append(slices.Clone(keys), "n_valid")), keys)
		g.Ventilation = withCategories(base, vent, keys, []string{"n", "frequency"})
	}
	if want("persistence") {
		if err := EnsureEpisodes(ctx, db); err != nil {
			return nil, fmt.Errorf("guidance (persistence): %w", err)
		}
		if g.Persistence, err = runStatement(ctx, db, "guidance_persistence.sql", "guidance (persistence)",
			st, first, last, o.SBIClassesK, int64(o.MinDays)); err != nil {
			return nil, err
		}
	}
	return g, nil
}

// afternoonWide turns the long afternoon table (one row per height of
// BelowM) into one row per group with n_below_<h>m and p_below_<h>m
// columns, the note last.
func afternoonWide(long *Table) *Table {
	keys := []string{"station_id", "season", "sbi_rank", "source"}
	var cols []string
	for _, c := range long.Columns {
		switch c {
		case "below_m", "n_below", "p_below", "note", "sbi_rank":
		default:
			cols = append(cols, c)
		}
	}
	base := distinctRows(selectColumns(long, append(append([]string{"sbi_rank"}, cols...), "note")), keys)
	wide := pivot(selectColumns(base, append([]string{"sbi_rank"}, cols...)), long, keys, "below_m",
		[]string{"n_below", "p_below"}, func(v, s string) string {
			if f, err := strconv.ParseFloat(v, 64); err == nil {
				v = strconv.FormatFloat(f, 'f', -1, 64)
			}
			return s + "_" + v + "m"
		})
	wide = appendColumnFrom(wide, base, "note")
	return selectColumns(wide, slices.DeleteFunc(slices.Clone(wide.Columns), func(c string) bool { return c == "sbi_rank" }))
}

// distinctRows keeps the first row of each key (rows of equal key are
// adjacent or not; order of first appearance is kept).
func distinctRows(t *Table, keys []string) *Table {
	seen := map[string]bool{}
	out := &Table{Columns: t.Columns}
	for _, r := range t.Rows {
		k := keyOf(t, r, keys)
		if !seen[k] {
			seen[k] = true
			out.Rows = append(out.Rows, r)
		}
	}
	return out
}
