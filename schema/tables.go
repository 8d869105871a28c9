package schema

import (
	"fmt"
	"reflect"
)

// Table names of the store.
const (
	TableSoundings     = "soundings"        // rows of SoundingRow
	TableLevels        = "levels"           // rows of LevelRow
	TableInversions    = "inversions"       // rows of InversionRow
	TableMixedLayers   = "mixed_layers"     // rows of MixedLayerRow
	TableMixingHeights = "mixing_heights"   // rows of MixingHeightRow
	TableAfternoon     = "afternoon_mixing" // rows of AfternoonRow
	TableQCFindings    = "qc_findings"      // rows of QCFindingRow

	TableDescents          = "descents"            // rows of DescentRow
	TableDescentLevels     = "descent_levels"      // rows of LevelRow
	TableDescentQCFindings = "descent_qc_findings" // rows of QCFindingRow
)

// Table is one entry of the store's table registry.
type Table struct {
	Name        string       // directory and view name, a lower-case SQL identifier
	Description string       // what one row is, for the schema document
	Row         reflect.Type // the row struct (see Columns)
	// Compact tables are compressed with zstd, the others with Snappy:
	// the levels table is most of a store's bytes and its queries read a
	// few columns at a time, so the better compression pays; the other
	// tables are small and read whole, and Snappy's cheaper decompression
	// made a climatology over 600 station-years about 0.3 s faster (of
	// 1.9 s) for 1 % more store.
	Compact bool
	// rows returns the table's rows among a partition's (nil for the
	// derived tables, which the engine does not write).
	rows func(*PartRows) Writer
}

// tables is the registry, in the order of the schema document, of the
// engine's writes and of a partition's files. To add a table: write its row
// struct (rows.go), a field for its rows in PartRows and RowSet
// (analysis.go), add it here naming that field, and fill the rows
// (AppendSounding, or the engine for rows across soundings).
var tables = []Table{
	{TableSoundings, "One row per radiosonde ascent (one per station and launch time: duplicates are merged): identity, source, surface values and boundary-layer diagnostics.",
		reflect.TypeFor[SoundingRow](), false, func(p *PartRows) Writer { return Slice(p.Soundings) }},
	{TableLevels, "One row per level of an ascent: observed and derived values with their status.",
		reflect.TypeFor[LevelRow](), true, levelsWriter},
	{TableInversions, "One row per temperature inversion layer below the search ceiling, lowest first, with its class.",
		reflect.TypeFor[InversionRow](), false, func(p *PartRows) Writer { return Slice(p.Inversions) }},
	{TableMixedLayers, "One row per well-mixed layer below the search ceiling, lowest first, with mass-weighted mean potential temperature and mixing ratio.",
		reflect.TypeFor[MixedLayerRow](), false, func(p *PartRows) Writer { return Slice(p.MixedLayers) }},
	{TableMixingHeights, "One row per ascent and mixing-height method, whatever the status, so failures are counted rather than hidden.",
		reflect.TypeFor[MixingHeightRow](), false, func(p *PartRows) Writer { return Slice(p.MixingHeights) }},
	{TableAfternoon, "One row per station and local day with a morning ascent: the afternoon mixing height from the morning profile and the day's maximum temperature (Holzworth). A local day is stored in the station-year partition of its morning ascent's UTC year, also where the day straddles the UTC new year (its afternoon ascent then falls in the next year).",
		reflect.TypeFor[AfternoonRow](), false, func(p *PartRows) Writer { return Slice(p.Afternoon) }},
	{TableQCFindings, "One row per quality-control finding: the check, the level and variable, the severity, the value and what was wrong. Soundings without findings have no rows.",
		reflect.TypeFor[QCFindingRow](), false, func(p *PartRows) Writer { return Slice(p.QCFindings) }},
	{TableDescents, "One row per radiosonde descent (BUFR 3 09 056), the profile measured while falling after the burst: identity (the ascent's station and launch time), source and quality control. Not analysed for the boundary layer.",
		reflect.TypeFor[DescentRow](), false, func(p *PartRows) Writer { return Slice(p.Descents.Descents) }},
	{TableDescentLevels, "One row per level of a descent, lowest first, with the columns of the levels table: observed values, heights filled hypsometrically, potential temperature and mixing ratio, QC flags. height_agl_m is above the lowest level: the height of the landing point is not known.",
		reflect.TypeFor[LevelRow](), false, func(p *PartRows) Writer { return &p.Descents.Levels }},
	{TableDescentQCFindings, "One row per quality-control finding of a descent, with the columns of qc_findings (level_index as in descent_levels).",
		reflect.TypeFor[QCFindingRow](), false, func(p *PartRows) Writer { return Slice(p.Descents.QCFindings) }},
}

// derivedTables are documented like the store's tables but built when
// queried (package queries, AttachEpisodes), never written by the engine:
// see rows_episodes.go.
var derivedTables = []Table{
	{TableDays, "One row per station and local solar day with an analysable sounding: the morning and afternoon/evening values the episode rules use. Derived when queried, over each station's whole record.",
		reflect.TypeFor[DayRow](), false, nil},
	{TableEpisodes, "One row per episode: a run of consecutive local days meeting a rule at one station, with its length, missing days and extremes. Derived when queried, over each station's whole record.",
		reflect.TypeFor[EpisodeRow](), false, nil},
	{TableEpisodeDays, "One row per day inside an episode, met or missing. Derived when queried.",
		reflect.TypeFor[EpisodeDayRow](), false, nil},
	{TableRuleMonths, "One row per station, rule and calendar month: the days with a sounding that met, failed or could not be judged on the rule. Derived when queried.",
		reflect.TypeFor[RuleMonthRow](), false, nil},
}

// levelsWriter returns the partition's level rows when their collector
// can write them (a *Rows[LevelRow] or a *RowSlice[LevelRow]).
func levelsWriter(p *PartRows) Writer {
	w, _ := p.Levels.(Writer)
	return w
}

// DerivedTables returns the tables built when queried, in order.
func DerivedTables() []Table {
	return append([]Table(nil), derivedTables...)
}

// AllTables returns the table registry, in order.
func AllTables() []Table {
	out := make([]Table, len(tables))
	copy(out, tables)
	return out
}

// TableNames returns the names of the registered tables, in order.
func TableNames() []string {
	out := make([]string, len(tables))
	for i, t := range tables {
		out[i] = t.Name
	}
	return out
}

// LookupTable returns the registered table called name.
func LookupTable(name string) (Table, bool) {
	for _, t := range tables {
		if t.Name == name {
			return t, true
		}
	}
	return Table{}, false
}

// checkRowType refuses rows of type row for a registered table whose row
// struct is another; unregistered table names accept any row struct.
func checkRowType(table string, row reflect.Type) error {
	if t, ok := LookupTable(table); ok && t.Row != row {
		return fmt.Errorf("schema: table %s holds %v rows, not %v", table, t.Row, row)
	}
	return nil
}

// Tables returns the documentation of the registered tables, in order,
// followed by the derived tables (DerivedTables).
func Tables() ([]TableDoc, error) {
	out := make([]TableDoc, 0, len(tables)+len(derivedTables))
	for _, t := range append(AllTables(), derivedTables...) {
		cols, err := columnsOf(t.Row)
		if err != nil {
			return nil, err
		}
		out = append(out, TableDoc{Name: t.Name, Description: t.Description, Columns: cols})
	}
	return out, nil
}

// Writer is a table's rows ready to be written as one partition file: a
// slice of row structs (Slice) or a column-wise Rows.
type Writer interface {
	Len() int
	// WriteFile writes the rows as the file at path of the named table
	// (see the package-level WriteFile).
	WriteFile(path, table string, sync bool) error
}

// Slice wraps a slice of row structs as a Writer.
func Slice[T any](rows []T) Writer { return sliceWriter[T](rows) }

type sliceWriter[T any] []T

func (s sliceWriter[T]) Len() int { return len(s) }
func (s sliceWriter[T]) WriteFile(path, table string, sync bool) error {
	return WriteFile(path, table, []T(s), sync)
}

// WriteFile writes the collected rows (WriteRows).
func (r *Rows[T]) WriteFile(path, table string, sync bool) error {
	return WriteRows(path, table, r, sync)
}
