package report

import (
	"fmt"
	"html/template"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/queries"
)

// Table is a table for the page: its heading rows and formatted cells.
type Table struct {
	// Head holds one or two heading rows. A column whose heading spans
	// two rows appears in the first only.
	Head [][]Heading
	Rows [][]string
	// Align is the table's class attribute, which aligns its cells by
	// column: "lN" left-aligns the words of column N (from 1), "wN" also
	// lets them wrap (notes); other columns are numbers, right-aligned.
	// One class on the table instead of one on every cell keeps a page
	// of many stations small.
	Align string
}

// Heading is one heading cell: words, the unit in brackets under them,
// and the columns and rows it spans.
type Heading struct {
	Text, Unit    string
	Span, RowSpan int
	Class         string // "text" or "wrap" as the column's cells, or ""
}

// column says how one column of a query result is shown: the heading in
// words (with a group heading over several columns, and the unit), and
// how a value is written.
type column struct {
	name  string // column of the query result
	head  string
	group string // heading over consecutive columns with the same group
	unit  string
	show  func(v any) string // nil: by the column's unit suffix (cell)
	wrap  bool               // text that may wrap (notes)
	words bool               // words, not numbers: aligned left
	// optional columns (notes) are left out when every cell is empty.
	optional bool
}

// render turns the rows of t into a Table with the columns of spec;
// columns t lacks show "–", optional columns with no text are left out.
func render(t *queries.Table, spec []column) Table {
	cells := make([][]string, len(t.Rows))
	for k := range cells {
		cells[k] = make([]string, len(spec))
	}
	var kept []column
	var keep []int
	for i, c := range spec {
		idx := slices.Index(t.Columns, c.name)
		empty := true
		for k, r := range t.Rows {
			var v any
			if idx >= 0 {
				v = r[idx]
			}
			if c.show != nil {
				cells[k][i] = c.show(v)
			} else {
				cells[k][i] = cell(c.name, v)
			}
			empty = empty && cells[k][i] == ""
		}
		if !c.optional || !empty {
			kept, keep = append(kept, c), append(keep, i)
		}
	}
	out := Table{Head: headings(kept)}
	var align []string
	for i, c := range kept {
		switch {
		case c.wrap:
			align = append(align, fmt.Sprintf("w%d", i+1))
		case c.words:
			align = append(align, fmt.Sprintf("l%d", i+1))
		}
	}
	out.Align = strings.Join(align, " ")
	for _, r := range cells {
		row := make([]string, len(keep))
		for j, i := range keep {
			row[j] = r[i]
		}
		out.Rows = append(out.Rows, row)
	}
	return out
}

// headings returns the heading rows of the columns spec: one, or two
// when some columns share a group heading.
func headings(spec []column) [][]Heading {
	class := func(c column) string {
		switch {
		case c.wrap:
			return "wrap"
		case c.words:
			return "text"
		}
		return ""
	}
	grouped := slices.ContainsFunc(spec, func(c column) bool { return c.group != "" })
	var top, second []Heading
	for i := 0; i < len(spec); i++ {
		c := spec[i]
		if c.group == "" {
			rs := 1
			if grouped {
				rs = 2
			}
			top = append(top, Heading{Text: c.head, Unit: c.unit, Span: 1, RowSpan: rs, Class: class(c)})
			continue
		}
		j := i
		for j < len(spec) && spec[j].group == c.group {
			second = append(second, Heading{Text: spec[j].head, Unit: spec[j].unit, Span: 1, RowSpan: 1})
			j++
		}
		top = append(top, Heading{Text: c.group, Span: j - i, RowSpan: 1})
		i = j - 1
	}
	if grouped {
		return [][]Heading{top, second}
	}
	return [][]Heading{top}
}

// cell writes a value at the precision of its column's unit: heights
// (_m) to whole metres, kelvin (_k) to 0.1 K, m²/s (_m2s) to whole units,
// m/s (_ms) to 0.1, other numbers to 0.01; NULL and NaN as "–".
func cell(column string, v any) string {
	switch x := v.(type) {
	case nil:
		return "–"
	case float64:
		if math.IsNaN(x) {
			return "–"
		}
		switch {
		case strings.HasSuffix(column, "_m"), strings.HasSuffix(column, "_m2s"):
			return strconv.FormatFloat(x, 'f', 0, 64)
		case strings.HasSuffix(column, "_k"), strings.HasSuffix(column, "_ms"):
			return strconv.FormatFloat(x, 'f', 1, 64)
		default:
			return strconv.FormatFloat(x, 'f', 2, 64)
		}
	case time.Time:
		return x.UTC().Format("2006-01-02")
	case bool:
		if x {
			return "yes"
		}
		return "no"
	}
	return fmt.Sprint(v)
}

// percent writes a fraction 0-1 as a whole percentage.
func percent(v any) string {
	x, ok := v.(float64)
	if !ok || math.IsNaN(x) {
		return "–"
	}
	return strconv.FormatFloat(100*x, 'f', 0, 64)
}

// decimals writes a number with d decimals.
func decimals(d int) func(any) string {
	return func(v any) string {
		switch x := v.(type) {
		case float64:
			if math.IsNaN(x) {
				return "–"
			}
			return strconv.FormatFloat(x, 'f', d, 64)
		case int64:
			return strconv.FormatFloat(float64(x), 'f', d, 64)
		}
		return cell("", v)
	}
}

// plain writes a number already rounded to its precision as it is.
func plain(v any) string {
	if x, ok := v.(float64); ok && !math.IsNaN(x) {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	return cell("", v)
}

// hour writes a nominal hour as "00"; NULL (the pooled special hours) as
// "other".
func hour(v any) string {
	switch x := v.(type) {
	case int64:
		return fmt.Sprintf("%02d", x)
	case int32:
		return fmt.Sprintf("%02d", x)
	case nil:
		return "other"
	}
	return fmt.Sprint(v)
}

// text writes NULL as an empty cell (notes).
func text(v any) string {
	if v == nil {
		return ""
	}
	return fmt.Sprint(v)
}

// byStation splits the rows of t by their station_id column.
func byStation(t *queries.Table) map[string]*queries.Table {
	out := map[string]*queries.Table{}
	i := slices.Index(t.Columns, "station_id")
	if i < 0 {
		return out
	}
	for _, r := range t.Rows {
		id := fmt.Sprint(r[i])
		if out[id] == nil {
			out[id] = &queries.Table{Columns: t.Columns}
		}
		out[id].Rows = append(out[id].Rows, r)
	}
	return out
}

// withSeasonLabel adds a column season_label, "DJF (winter)", from the
// season and season_name columns (the name follows the hemisphere); a
// table without season_name takes the names from names (station → season
// → name), when given.
func withSeasonLabel(t *queries.Table, names map[string]map[string]string) *queries.Table {
	s, n := slices.Index(t.Columns, "season"), slices.Index(t.Columns, "season_name")
	id := slices.Index(t.Columns, "station_id")
	out := &queries.Table{Columns: append(slices.Clone(t.Columns), "season_label")}
	for _, r := range t.Rows {
		label := "–"
		if s >= 0 && r[s] != nil {
			label = fmt.Sprint(r[s])
			name := ""
			if n >= 0 && r[n] != nil {
				name = fmt.Sprint(r[n])
			} else if id >= 0 {
				name = names[fmt.Sprint(r[id])][label]
			}
			if name != "" {
				label += " (" + name + ")"
			}
		}
		out.Rows = append(out.Rows, append(slices.Clone(r), label))
	}
	return out
}

// seasonNames returns station → season → season_name from t.
func seasonNames(t *queries.Table) map[string]map[string]string {
	out := map[string]map[string]string{}
	id, s, n := slices.Index(t.Columns, "station_id"), slices.Index(t.Columns, "season"), slices.Index(t.Columns, "season_name")
	if id < 0 || s < 0 || n < 0 {
		return out
	}
	for _, r := range t.Rows {
		st := fmt.Sprint(r[id])
		if out[st] == nil {
			out[st] = map[string]string{}
		}
		if r[s] != nil && r[n] != nil {
			out[st][fmt.Sprint(r[s])] = fmt.Sprint(r[n])
		}
	}
	return out
}

// The columns of each table of the page.
var (
	climatologyColumns = []column{
		{name: "season_label", head: "Season", words: true},
		{name: "nominal_hour", head: "Launch hour", unit: "UTC", show: hour},
		{name: "n_soundings", head: "Soundings"},
		{name: "n_valid", head: "Valid"},
		{name: "mixing_height_p10_m", group: "Mixing height, consensus (m above ground)", head: "10th pct."},
		{name: "mixing_height_p25_m", group: "Mixing height, consensus (m above ground)", head: "25th pct."},
		{name: "mixing_height_p50_m", group: "Mixing height, consensus (m above ground)", head: "Median"},
		{name: "mixing_height_p75_m", group: "Mixing height, consensus (m above ground)", head: "75th pct."},
		{name: "mixing_height_p90_m", group: "Mixing height, consensus (m above ground)", head: "90th pct."},
		{name: "n_consensus_undefined", group: "Mixing height, consensus (m above ground)", head: "Undefined", unit: "soundings"},
		{name: "sbi_frequency", group: "Surface-based inversion", head: "Frequency", unit: "%", show: percent},
		{name: "sbi_median_strength_k", group: "Surface-based inversion", head: "Median strength", unit: "K"},
		{name: "ventilation_index_p50_m2s", head: "Median ventilation index", unit: "m²/s"},
		{name: "note", head: "Note", show: text, wrap: true, optional: true},
	}
	episodeColumns = []column{
		{name: "rule_words", head: "Rule", words: true},
		{name: "season_label", head: "Season", words: true},
		{name: "n_years", head: "Years"},
		{name: "n_days", head: "Days with soundings"},
		{name: "n_episodes", group: "Episodes", head: "Count"},
		{name: "episodes_per_year", group: "Episodes", head: "Per year", show: decimals(1)},
		{name: "days_in_episodes", group: "Days in episodes", head: "Days"},
		{name: "share_of_days", group: "Days in episodes", head: "Share", unit: "%", show: percent},
		{name: "length_median_days", group: "Length (days)", head: "Median", show: decimals(1)},
		{name: "length_p90_days", group: "Length (days)", head: "90th pct.", show: decimals(1)},
		{name: "longest_days", group: "Length (days)", head: "Longest"},
		{name: "days_missing", head: "Days without a sounding inside"},
		{name: "n_open_ended", head: "Open at the record's ends"},
	}
	persistenceColumns = []column{
		{name: "season_label", head: "Season", words: true},
		{name: "sbi_class", head: "Morning inversion strength", words: true},
		{name: "n_days", head: "Days"},
		{name: "n_persists", head: "Still present later"},
		{name: "p_persists", head: "Probability", show: decimals(2)},
		{name: "afternoon_mh_p50_m", head: "Median afternoon mixing height", unit: "m"},
		{name: "n_in_episode", head: "Days in a persistent-inversion episode"},
		{name: "note", head: "Note", show: text, wrap: true, optional: true},
	}
	afternoonColumns = []column{
		{name: "season_label", head: "Season", words: true},
		{name: "sbi_class", head: "Morning inversion strength", words: true},
		{name: "source", head: "Afternoon height from", show: sourceWords, words: true},
		{name: "n", head: "Days"},
		{name: "p50_m", head: "Median height", unit: "m"},
		{name: "p_below_600m", group: "Probability of staying below", head: "600 m", show: decimals(2)},
		{name: "p_below_1000m", group: "Probability of staying below", head: "1000 m", show: decimals(2)},
		{name: "p_below_1500m", group: "Probability of staying below", head: "1500 m", show: decimals(2)},
		{name: "note", head: "Note", show: text, wrap: true, optional: true},
	}
	trendColumns = []column{
		{name: "metric_words", head: "Quantity", words: true},
		{name: "season_label", head: "Season", words: true},
		{name: "nominal_hour", head: "Launch hour", unit: "UTC", show: hour},
		{name: "years", head: "Years used"},
		{name: "period", head: "Period"},
		{name: "median", head: "Median of yearly values", show: plain},
		{name: "slope_per_decade", head: "Theil–Sen slope", unit: "per decade", show: plain},
		{name: "mk_p", head: "Mann–Kendall p", show: decimals(2)},
		{name: "verdict", head: "Reading", wrap: true},
	}
	qcColumns = []column{
		{name: "check_words", head: "Check", words: true},
		{name: "severity", head: "Severity", words: true},
		{name: "n_findings", head: "Findings"},
		{name: "n_soundings", head: "Soundings"},
		{name: "sounding_fraction", head: "Share of soundings", unit: "%", show: percentOrLess},
		{name: "n_levels", head: "Levels"},
		{name: "effect", head: "Effect", wrap: true},
	}
	stationColumns = []column{
		{name: "station_id", head: "Station"},
		{name: "station_name", head: "Name", show: text, words: true},
		{name: "latitude_deg", head: "Latitude", unit: "°N", show: decimals(2)},
		{name: "longitude_deg", head: "Longitude", unit: "°E", show: decimals(2)},
		{name: "elevation_m", head: "Elevation", unit: "m"},
		{name: "first_time", head: "First sounding"},
		{name: "last_time", head: "Last sounding"},
		{name: "n_soundings", head: "Soundings"},
		{name: "n_valid", head: "Valid"},
		{name: "shown", head: "In this report", wrap: true},
	}
	coverageColumns = []column{
		{name: "station_id", head: "Station"},
		{name: "year", head: "Year"},
		{name: "n_attempted", head: "Soundings"},
		{name: "n_valid", head: "Valid"},
		{name: "n_qc_excluded", head: "Excluded by QC"},
		{name: "n_not_analysable", head: "Not analysable"},
		{name: "n_qc_suspect", head: "Valid with suspect values"},
	}
)

// alignCSS returns the style rules of the classes Table.Align uses,
// for tables of up to 16 columns.
func alignCSS() template.CSS {
	var left, wrap []string
	for i := 1; i <= 16; i++ {
		left = append(left, fmt.Sprintf(".l%d td:nth-child(%d)", i, i))
		wrap = append(wrap, fmt.Sprintf(".w%d td:nth-child(%d)", i, i))
	}
	return template.CSS(strings.Join(left, ", ") + " { text-align: left; }\n" +
		strings.Join(wrap, ", ") + " { text-align: left; white-space: normal; min-width: 10em; }")
}

// percentOrLess writes a fraction as a whole percentage, "<1" for a
// fraction above 0 that rounds to 0.
func percentOrLess(v any) string {
	if x, ok := v.(float64); ok && x > 0 && x < 0.005 {
		return "<1"
	}
	return percent(v)
}

// sourceWords names the source of an afternoon height in words.
func sourceWords(v any) string {
	switch fmt.Sprint(v) {
	case "holzworth":
		return "Holzworth"
	case "later_sounding":
		return "later sounding"
	}
	return text(v)
}
