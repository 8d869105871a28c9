package queries

import (
	"context"
	"database/sql"
	"embed"
	"fmt"
	"slices"
	"strings"
)

//go:embed *.sql
var sqlFiles embed.FS

// statement returns the text of the embedded SQL file name.
func statement(name string) (string, error) {
	b, err := sqlFiles.ReadFile(name)
	if err != nil {
		return "", fmt.Errorf("embedded SQL %s: %w", name, err)
	}
	return string(b), nil
}

// Periods and times of day of a climatology cell (ClimatologyOptions).
const (
	BySeason = "season" // DJF, MAM, JJA, SON
	ByMonth  = "month"  // 1-12
	ByHour   = "hour"   // nominal hour UTC
	BySun    = "sun"    // sun class at launch: day, low_sun, civil_twilight, night, unknown
)

// Minimum sample sizes of METHODS §8 (proposals there, configurable here).
const (
	MinSeasonSoundings = 45 // valid soundings of a seasonal cell
	MinMonthSoundings  = 15 // valid soundings of a monthly cell
	MinTailSoundings   = 25 // values behind p10 and p90
)

// MinStationSoundings is the default of the figures command's
// --min-soundings option: a station with fewer valid soundings
// (analysis_status ok) is named as thin and not drawn, since not even one
// monthly cell (MinMonthSoundings, the smallest cell its figures draw) can
// reach its minimum sample. The report's option of the same name and
// meaning defaults to MinSeasonSoundings, the cell its tables show.
const MinStationSoundings = MinMonthSoundings

// ClimatologyOptions selects the cells and the sample of a climatology.
// The zero value is the seasonal climatology by nominal hour of every
// station and year.
type ClimatologyOptions struct {
	By       string   // BySeason (default) or ByMonth
	Time     string   // ByHour (default) or BySun
	Stations []string // station ids to keep; empty keeps all
	// FirstYear and LastYear bound the years kept (inclusive; 0 = open):
	// season_year in season mode (December counts with the following
	// year's DJF, METHODS §8), the calendar year in month mode.
	FirstYear, LastYear int
	// MinSoundings is the number of valid soundings below which a cell is
	// marked in its note; 0 means MinSeasonSoundings or MinMonthSoundings.
	MinSoundings int
	// MinTail is the number of values below which p10/p90 are marked;
	// 0 means MinTailSoundings.
	MinTail int
	// AllHours gives every nominal hour its own cell. Otherwise (by hour)
	// a station's special hours, those holding less than 10 % of its
	// soundings, join the nearest regular hour within 3 h or an "other"
	// cell with a null nominal_hour (climatology_sample.sql).
	AllHours bool
}

// normalized returns o with defaults filled in, or an error for values
// out of range.
func (o ClimatologyOptions) normalized() (ClimatologyOptions, error) {
	if o.By == "" {
		o.By = BySeason
	}
	if o.Time == "" {
		o.Time = ByHour
	}
	if o.By != BySeason && o.By != ByMonth {
		return o, fmt.Errorf("period %q: want %s or %s", o.By, BySeason, ByMonth)
	}
	if o.Time != ByHour && o.Time != BySun {
		return o, fmt.Errorf("time of day %q: want %s or %s", o.Time, ByHour, BySun)
	}
	if o.MinSoundings == 0 {
		o.MinSoundings = MinSeasonSoundings
		if o.By == ByMonth {
			o.MinSoundings = MinMonthSoundings
		}
	}
	if o.MinTail == 0 {
		o.MinTail = MinTailSoundings
	}
	if o.MinSoundings < 0 || o.MinTail < 0 {
		return o, fmt.Errorf("minimum sample sizes must not be negative")
	}
	if o.FirstYear != 0 && o.LastYear != 0 && o.FirstYear > o.LastYear {
		return o, fmt.Errorf("first year %d is after last year %d", o.FirstYear, o.LastYear)
	}
	return o, nil
}

// sampleArgs returns the bound parameters $1-$6 of climatology_sample.sql.
func (o ClimatologyOptions) sampleArgs() []any {
	first, last := o.FirstYear, o.LastYear
	if first == 0 {
		first = -1 << 30
	}
	if last == 0 {
		last = 1 << 30
	}
	st := o.Stations
	if st == nil {
		st = []string{}
	}
	hours := "pooled"
	if o.AllHours {
		hours = "all"
	}
	return []any{o.By, o.Time, st, int64(first), int64(last), hours}
}

// ClimatologyTables holds one climatology run: the statistics per cell,
// per cell and mixing-height method, and per cell and ventilation
// category. Table renders the views commands print. A table the run was
// not asked for (ClimatologyFor) is nil.
type ClimatologyTables struct {
	Options    ClimatologyOptions // with defaults filled in
	Cells      *Table             // climatology_cells.sql
	Methods    *Table             // climatology_methods.sql
	Categories *Table             // climatology_categories.sql
}

// ClimatologyOf computes the climatology of the soundings of db (see Open;
// it needs the soundings, inversions and mixing_heights views) for the
// options o: every table, for every view of ClimatologyViews. The columns
// are documented in climatology_cells.sql, climatology_methods.sql and
// climatology_categories.sql; key columns that the options leave empty
// (month in season mode, sun_class in hour mode, …) are dropped.
func ClimatologyOf(ctx context.Context, db *sql.DB, o ClimatologyOptions) (*ClimatologyTables, error) {
	return ClimatologyFor(ctx, db, o, ClimatologyViews...)
}

// ClimatologyFor is ClimatologyOf computing only the tables that the
// views named (of ClimatologyViews) are made of: the summary, inversions
// and mixed views need the per-cell table alone, which is a third of the
// work of the three. Table of a view whose tables were left out is an
// error.
func ClimatologyFor(ctx context.Context, db *sql.DB, o ClimatologyOptions, views ...string) (*ClimatologyTables, error) {
	o, err := o.normalized()
	if err != nil {
		return nil, err
	}
	var cells, methods, categories bool
	for _, v := range views {
		switch v {
		case "summary", "inversions", "mixed":
			cells = true
		case "mixing":
			methods = true
		case "ventilation":
			cells, categories = true, true
		case "all":
			cells, methods, categories = true, true, true
		default:
			return nil, fmt.Errorf("unknown view %q (one of %s)", v, strings.Join(ClimatologyViews, ", "))
		}
	}
	ct := &ClimatologyTables{Options: o}
	sample, err := statement("climatology_sample.sql")
	if err != nil {
		return nil, err
	}
	// Each statement is the sample's WITH clause followed by its own
	// members and SELECT. One statement alone reads the store's files
	// itself, only the columns it uses: storing the sample first cost more
	// than the statement (600 station-years of the bench archive, under
	// load: the summary 3.7-4.2 s of CPU with the stored sample, 1.5-2.0 s
	// without). Two or more share one temporary table of the sample, which
	// costs less than reading the files again for each; their WITH clause
	// then starts with an unused member that takes the sample's parameters,
	// so every statement is bound with the same arguments.
	args := o.sampleArgs()
	limits := append(slices.Clone(args), int64(o.MinSoundings), int64(o.MinTail))
	type part struct {
		want bool
		file string
		args []any
		dst  **Table
	}
	var run []part
	for _, q := range []part{
		{cells, "climatology_cells.sql", limits, &ct.Cells},
		{methods, "climatology_methods.sql", limits, &ct.Methods},
		{categories, "climatology_categories.sql", args, &ct.Categories},
	} {
		if q.want {
			run = append(run, q)
		}
	}
	conn, err := db.Conn(ctx)
	if err != nil {
		return nil, fmt.Errorf("%w", err)
	}
	defer conn.Close()
	prefix := sample
	if len(run) > 1 {
		if _, err := conn.ExecContext(ctx, "CREATE OR REPLACE TEMP TABLE climatology_sample AS\n"+sample+"SELECT * FROM sample", args...); err != nil {
			return nil, fmt.Errorf("climatology (climatology_sample.sql): %w", err)
		}
		defer conn.ExecContext(context.WithoutCancel(ctx), "DROP TABLE IF EXISTS climatology_sample")
		prefix = "WITH parameters AS (SELECT $1, $2, $3, $4, $5, $6),\nsample AS (SELECT * FROM climatology_sample)\n"
	}
	for _, q := range run {
		body, err := statement(q.file)
		if err != nil {
			return nil, err
		}
		t, err := queryOn(ctx, conn, prefix+body, q.args...)
		if err != nil {
			return nil, fmt.Errorf("climatology (%s): %w", q.file, err)
		}
		*q.dst = dropKeys(t, o)
	}
	return ct, nil
}

// Climatology returns the compact seasonal climatology by nominal hour of
// every station of db: the "summary" view of ClimatologyOf with default
// options.
func Climatology(ctx context.Context, db *sql.DB) (*Table, error) {
	ct, err := ClimatologyFor(ctx, db, ClimatologyOptions{}, "summary")
	if err != nil {
		return nil, err
	}
	return ct.Table("summary")
}

// dropKeys removes the key columns that o leaves empty.
func dropKeys(t *Table, o ClimatologyOptions) *Table {
	drop := map[string]bool{"month": true, "sun_class": true}
	if o.By == ByMonth {
		drop = map[string]bool{"season": true, "season_name": true, "sun_class": true}
	}
	if o.Time == BySun {
		delete(drop, "sun_class")
		drop["nominal_hour"] = true
	}
	var keep []string
	for _, c := range t.Columns {
		if !drop[c] {
			keep = append(keep, c)
		}
	}
	return selectColumns(t, keep)
}

// selectColumns returns the columns names of t, in that order; names t
// lacks are skipped.
func selectColumns(t *Table, names []string) *Table {
	idx := make([]int, 0, len(names))
	out := &Table{}
	for _, n := range names {
		if i := slices.Index(t.Columns, n); i >= 0 {
			idx = append(idx, i)
			out.Columns = append(out.Columns, n)
		}
	}
	for _, r := range t.Rows {
		row := make([]any, len(idx))
		for j, i := range idx {
			row[j] = r[i]
		}
		out.Rows = append(out.Rows, row)
	}
	return out
}

// ClimatologyViews names the views Table renders, in print order:
//
//	summary      counts, consensus mixing-height percentiles, SBI frequency
//	             and median strength, median ventilation index, note
//	mixing       one row per cell and method (consensus and each method):
//	             counts by status and percentiles
//	inversions   SBI frequency, median strength and depth; elevated
//	             inversion frequency, overall and by class
//	mixed        mixed-layer frequency, depth, mean θ and mixing ratio
//	ventilation  transport wind, ventilation index, category frequencies
//	all          every per-cell column in one wide row: the cell columns,
//	             then mh_<method>_<statistic> for each method, then
//	             vent_<category>_frequency
var ClimatologyViews = []string{"summary", "mixing", "inversions", "mixed", "ventilation", "all"}

// cellKeys are the key and count columns every per-cell view starts with.
var cellKeys = []string{"station_id", "season", "season_name", "month", "nominal_hour", "sun_class", "n_soundings", "n_valid"}

// Table returns the view name of ClimatologyViews.
func (ct *ClimatologyTables) Table(name string) (*Table, error) {
	cols := func(extra ...string) []string {
		return append(append(slices.Clone(cellKeys), extra...), "note")
	}
	need := map[string][]*Table{"mixing": {ct.Methods}, "ventilation": {ct.Cells, ct.Categories},
		"all": {ct.Cells, ct.Methods, ct.Categories}}[name]
	if need == nil {
		need = []*Table{ct.Cells}
	}
	if slices.Contains(need, nil) && slices.Contains(ClimatologyViews, name) {
		return nil, fmt.Errorf("climatology view %s was not computed (ClimatologyFor)", name)
	}
	switch name {
	case "summary":
		return selectColumns(ct.Cells, cols("n_consensus_undefined",
			"mixing_height_p10_m", "mixing_height_p25_m", "mixing_height_p50_m", "mixing_height_p75_m", "mixing_height_p90_m",
			"sbi_frequency", "sbi_median_strength_k", "ventilation_index_p50_m2s")), nil
	case "mixing":
		return ct.Methods, nil
	case "inversions":
		return selectColumns(ct.Cells, cols("sbi_frequency", "sbi_median_strength_k", "sbi_median_depth_m",
			"ei_frequency", "ei_subsidence_frequency", "ei_frontal_frequency", "ei_capping_frequency", "ei_unclassified_frequency")), nil
	case "mixed":
		return selectColumns(ct.Cells, cols("ml_frequency", "ml_depth_p25_m", "ml_depth_p50_m", "ml_depth_p75_m",
			"ml_theta_median_k", "ml_mixing_ratio_median_gkg")), nil
	case "ventilation":
		v := selectColumns(ct.Cells, append(slices.Clone(cellKeys), "n_ventilation",
			"transport_wind_p25_ms", "transport_wind_p50_ms", "transport_wind_p75_ms",
			"ventilation_index_p10_m2s", "ventilation_index_p25_m2s", "ventilation_index_p50_m2s",
			"ventilation_index_p75_m2s", "ventilation_index_p90_m2s",
			"ventilation_index_p10_ktft", "ventilation_index_p25_ktft", "ventilation_index_p50_ktft",
			"ventilation_index_p75_ktft", "ventilation_index_p90_ktft", "ventilation_table"))
		v = ct.withCategories(v)
		return appendColumnFrom(v, ct.Cells, "note"), nil
	case "all":
		return ct.withCategories(ct.withMethods(ct.Cells)), nil
	}
	return nil, fmt.Errorf("unknown view %q (one of %s)", name, strings.Join(ClimatologyViews, ", "))
}

// keyOf returns the key of row r of t: the values of the columns keys
// that t has, joined.
func keyOf(t *Table, r []any, keys []string) string {
	var b strings.Builder
	for _, k := range keys {
		if i := slices.Index(t.Columns, k); i >= 0 {
			fmt.Fprintf(&b, "%v\x00", r[i])
		}
	}
	return b.String()
}

// appendColumnFrom appends column name of src (same rows, same order) to t.
func appendColumnFrom(t, src *Table, name string) *Table {
	i := slices.Index(src.Columns, name)
	if i < 0 {
		return t
	}
	out := &Table{Columns: append(slices.Clone(t.Columns), name)}
	for n, r := range t.Rows {
		out.Rows = append(out.Rows, append(slices.Clone(r), src.Rows[n][i]))
	}
	return out
}

// pivot appends to t one column per distinct value v of long's column by
// (in first-seen order) and statistic s in stats, named name(v, s),
// matching rows of t and long on the columns keys; cells long lacks are
// nil.
func pivot(t, long *Table, keys []string, by string, stats []string, name func(v, s string) string) *Table {
	bi := slices.Index(long.Columns, by)
	if bi < 0 {
		return t
	}
	var values []string
	cells := map[string]map[string][]any{}
	for _, r := range long.Rows {
		v := fmt.Sprint(r[bi])
		if !slices.Contains(values, v) {
			values = append(values, v)
		}
		k := keyOf(long, r, keys)
		if cells[k] == nil {
			cells[k] = map[string][]any{}
		}
		cells[k][v] = r
	}
	out := &Table{Columns: slices.Clone(t.Columns)}
	for _, v := range values {
		for _, s := range stats {
			out.Columns = append(out.Columns, name(v, s))
		}
	}
	for _, r := range t.Rows {
		row := slices.Clone(r)
		got := cells[keyOf(t, r, keys)]
		for _, v := range values {
			for _, s := range stats {
				var val any
				if lr, ok := got[v]; ok {
					val = lr[slices.Index(long.Columns, s)]
				}
				row = append(row, val)
			}
		}
		out.Rows = append(out.Rows, row)
	}
	return out
}

// withMethods appends the per-method statistics to t as wide columns.
func (ct *ClimatologyTables) withMethods(t *Table) *Table {
	return pivot(t, ct.Methods, cellKeys[:6], "method",
		[]string{"n_ok", "n_surface", "n_undefined", "p10_m", "p25_m", "p50_m", "p75_m", "p90_m"},
		func(v, s string) string { return "mh_" + v + "_" + s })
}

// withCategories appends vent_<category>_frequency columns to t, in the
// categories' rank order (poor to good, undefined last).
func (ct *ClimatologyTables) withCategories(t *Table) *Table {
	return withCategories(t, ct.Categories, cellKeys[:6], []string{"frequency"})
}

// withCategories appends <prefix><category>_<stat> columns from the
// category table c to t, in the categories' rank order.
func withCategories(t, c *Table, keys, stats []string) *Table {
	ri, ci := slices.Index(c.Columns, "rank"), slices.Index(c.Columns, "category")
	sorted := &Table{Columns: c.Columns, Rows: slices.Clone(c.Rows)}
	slices.SortStableFunc(sorted.Rows, func(a, b []any) int {
		ra, _ := a[ri].(int64)
		rb, _ := b[ri].(int64)
		if ra != rb {
			return int(ra - rb)
		}
		return strings.Compare(fmt.Sprint(a[ci]), fmt.Sprint(b[ci]))
	})
	out := pivot(t, sorted, keys, "category", stats, func(v, s string) string { return "vent_" + v + "_" + s })
	// A category absent from a cell with valid soundings occurred 0 times.
	nv := slices.Index(out.Columns, "n_valid")
	for _, r := range out.Rows {
		if nv < 0 {
			break
		}
		if n, _ := r[nv].(int64); n == 0 {
			continue
		}
		for i := len(t.Columns); i < len(out.Columns); i++ {
			if r[i] == nil && strings.HasSuffix(out.Columns[i], "_n") {
				r[i] = int64(0)
			} else if r[i] == nil {
				r[i] = 0.0
			}
		}
	}
	return out
}
