package figures

import (
	"context"
	"database/sql"
	"embed"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
	"time"

	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/schema"
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

// Consensus is the method name that selects the consensus mixing height of
// the soundings table (the median of the methods whose status is ok)
// instead of one method of the mixing_heights table.
const Consensus = "consensus"

// DefaultMinCount is the fewest values a month-hour cell needs before its
// box or bar is drawn: 15 valid soundings, the proposal for a monthly
// statistic per hour in METHODS.md §8 (about half the days of a month;
// marked there as a proposal, not a published rule).
const DefaultMinCount = 15

// Station identifies a station of a store and its period of record.
type Station struct {
	ID, Name    string
	First, Last time.Time // UTC; earliest and latest nominal time
	Soundings   int       // soundings attempted
	Valid       int       // of those, valid (analysis_status ok): the ones the figures count
}

// Label returns "ID NAME, YYYY-MM-DD to YYYY-MM-DD" for titles.
func (s Station) Label() string {
	name := s.ID
	if n := strings.TrimSpace(s.Name); n != "" {
		name += " " + n
	}
	return fmt.Sprintf("%s, %s to %s", name, s.First.UTC().Format("2006-01-02"), s.Last.UTC().Format("2006-01-02"))
}

// LoadStations returns the stations of the store behind db (see
// queries.Open), sorted by id. A store without soundings gives no stations
// and no error.
func LoadStations(ctx context.Context, db *sql.DB) ([]Station, error) {
	q, err := statement("stations.sql")
	if err != nil {
		return nil, err
	}
	rows, err := db.QueryContext(ctx, q)
	if err != nil {
		return nil, fmt.Errorf("stations: %w", err)
	}
	defer rows.Close()
	var out []Station
	var s Station
	var sc queries.Scanner
	sc.Str("station_id", &s.ID)
	sc.Str("station_name", &s.Name)
	sc.Time("first_time", &s.First)
	sc.Time("last_time", &s.Last)
	sc.Int("n_soundings", &s.Soundings)
	sc.Int("n_valid", &s.Valid)
	for rows.Next() {
		if err := sc.Scan(rows); err != nil {
			return nil, fmt.Errorf("stations: %w", err)
		}
		out = append(out, s)
	}
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("stations: %w", err)
	}
	return out, nil
}

// ErrNoStation marks FindStation's error for an id the store does not hold.
var ErrNoStation = errors.New("station not in the store")

// FindStation returns the station with the given id, or an error listing
// the stations the store holds (errors.Is ErrNoStation).
func FindStation(ctx context.Context, db *sql.DB, id string) (Station, error) {
	all, err := LoadStations(ctx, db)
	if err != nil {
		return Station{}, err
	}
	var ids []string
	for _, s := range all {
		if s.ID == id {
			return s, nil
		}
		ids = append(ids, s.ID)
	}
	return Station{}, fmt.Errorf("station %q: %w (stations: %s)", id, ErrNoStation, strings.Join(ids, ", "))
}

// Methods returns the mixing-height methods of the store's mixing_heights
// table, sorted, preceded by Consensus.
func Methods(ctx context.Context, db *sql.DB) ([]string, error) {
	q, err := statement("methods.sql")
	if err != nil {
		return nil, err
	}
	rows, err := db.QueryContext(ctx, q)
	if err != nil {
		return nil, fmt.Errorf("methods: %w", err)
	}
	defer rows.Close()
	out := []string{Consensus}
	for rows.Next() {
		var m string
		if err := rows.Scan(&m); err != nil {
			return nil, fmt.Errorf("methods: %w", err)
		}
		out = append(out, m)
	}
	return out, rows.Err()
}

// HeightBox is the distribution of the mixing height in one month and
// nominal hour.
type HeightBox struct {
	Month int // 1-12
	Hour  int // nominal hour, h UTC
	// N counts the values: soundings whose status is ok or surface
	// (surface counts as 0 m).
	N int
	// Undefined counts valid soundings whose status is undefined; they are
	// not in the percentiles.
	Undefined int
	// P10 … P90 are percentiles in m above ground (Hyndman & Fan type 7);
	// NaN when N is 0.
	P10, P25, P50, P75, P90 float64
}

// MonthlyHeights is the mixing-height distribution of a station per month
// and nominal hour.
type MonthlyHeights struct {
	Station Station
	Method  string      // Consensus or a method of the mixing_heights table
	Boxes   []HeightBox // sorted by month, then hour
}

// LoadMonthlyHeights reads the mixing-height distribution of station per
// month and nominal hour for method (Consensus, or a method of the
// mixing_heights table, see Methods). Only valid soundings
// (analysis_status ok) count. A method the store does not have is an
// error naming the methods it has.
func LoadMonthlyHeights(ctx context.Context, db *sql.DB, st Station, method string) (*MonthlyHeights, error) {
	by, err := loadMonthlyHeights(ctx, db, st.ID, method)
	if err != nil {
		return nil, err
	}
	return &MonthlyHeights{Station: st, Method: method, Boxes: by[st.ID]}, nil
}

// checkMethod returns an error naming the store's methods unless method is
// Consensus or one of them.
func checkMethod(ctx context.Context, db *sql.DB, method string) error {
	if method == Consensus {
		return nil
	}
	known, err := Methods(ctx, db)
	if err != nil {
		return err
	}
	if !contains(known, method) {
		return fmt.Errorf("unknown mixing-height method %q (the store has: %s)", method, strings.Join(known, ", "))
	}
	return nil
}

// loadMonthlyHeights reads the boxes of station ("" for every station) by
// station id.
func loadMonthlyHeights(ctx context.Context, db *sql.DB, station, method string) (map[string][]HeightBox, error) {
	if err := checkMethod(ctx, db, method); err != nil {
		return nil, err
	}
	out := map[string][]HeightBox{}
	var id string
	var b HeightBox
	var sc queries.Scanner
	sc.Str("station_id", &id)
	sc.Int("month", &b.Month)
	sc.Int("nominal_hour", &b.Hour)
	sc.Int("n_values", &b.N)
	sc.Int("n_undefined", &b.Undefined)
	sc.Float("p10_m", &b.P10)
	sc.Float("p25_m", &b.P25)
	sc.Float("p50_m", &b.P50)
	sc.Float("p75_m", &b.P75)
	sc.Float("p90_m", &b.P90)
	err := readRows(ctx, db, "monthly_heights.sql", []any{station, method}, func(rows *sql.Rows) error {
		if err := sc.Scan(rows); err != nil {
			return err
		}
		out[id] = append(out[id], b)
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("monthly mixing heights%s: %w", of(station), err)
	}
	return out, nil
}

// of returns " of ID" for error messages, "" for every station.
func of(station string) string {
	if station == "" {
		return ""
	}
	return " of " + station
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// hoursShown returns the nominal hours that have at least one cell with
// n(cell) ≥ minCount, sorted.
func hoursShown[T any](cells []T, hour func(T) int, n func(T) int, minCount int) []int {
	seen := map[int]bool{}
	for _, c := range cells {
		if n(c) >= minCount {
			seen[hour(c)] = true
		}
	}
	var hours []int
	for h := range seen {
		hours = append(hours, h)
	}
	sort.Ints(hours)
	return hours
}

// hourKeys returns the legend keys of the nominal hours shown, in their
// colours.
func hourKeys(hours []int) []legendKey {
	keys := make([]legendKey, len(hours))
	for i, h := range hours {
		keys[i] = legendKey{Label: fmt.Sprintf("%02d UTC", h), Fill: hourColor(i)}
	}
	return keys
}

// slot returns the centre and width, in month units, of the i-th of k
// side-by-side marks within a month.
func slot(month, i, k int) (centre, width float64) {
	step := 0.8 / float64(k)
	return float64(month) + (float64(i)-float64(k-1)/2)*step, step * 0.8
}

// BoxShapes returns the rectangles and segments of the box plot of m: per
// month and nominal hour with at least minCount values, a box from P25 to
// P75 in the hour's colour, a dark median line, and whiskers from P10 to
// P25 and P75 to P90. Boxes of one month sit side by side, one slot per
// hour shown. It also returns the hours shown.
func BoxShapes(m *MonthlyHeights, minCount int) (*shapes, []int) {
	hours := hoursShown(m.Boxes, func(b HeightBox) int { return b.Hour }, func(b HeightBox) int { return b.N }, minCount)
	s := &shapes{}
	for _, b := range m.Boxes {
		i := indexOf(hours, b.Hour)
		if i < 0 || b.N < minCount || math.IsNaN(b.P50) {
			continue
		}
		x, w := slot(b.Month, i, len(hours))
		col := hourColor(i)
		s.Rects = append(s.Rects, rect{X0: x - w/2, X1: x + w/2, Y0: b.P25, Y1: b.P75, Fill: col, Line: ink})
		s.Segments = append(s.Segments,
			segment{X0: x, Y0: b.P10, X1: x, Y1: b.P25, Color: ink, Width: vg.Points(0.9)},
			segment{X0: x, Y0: b.P75, X1: x, Y1: b.P90, Color: ink, Width: vg.Points(0.9)},
			segment{X0: x - w/4, Y0: b.P10, X1: x + w/4, Y1: b.P10, Color: ink, Width: vg.Points(0.9)},
			segment{X0: x - w/4, Y0: b.P90, X1: x + w/4, Y1: b.P90, Color: ink, Width: vg.Points(0.9)},
			segment{X0: x - w/2, Y0: b.P50, X1: x + w/2, Y1: b.P50, Color: color.White, Width: vg.Points(1.6)},
		)
	}
	return s, hours
}

func indexOf(list []int, v int) int {
	for i, x := range list {
		if x == v {
			return i
		}
	}
	return -1
}

// MonthlyHeightsFigure draws the box plot of m (see BoxShapes) with one box
// per month and nominal hour holding at least minCount values (minCount ≤ 0
// means DefaultMinCount).
func MonthlyHeightsFigure(m *MonthlyHeights, minCount int) *Figure {
	if minCount <= 0 {
		minCount = DefaultMinCount
	}
	method := analyze.MethodTitle(m.Method)
	title := fmt.Sprintf("Mixing height by month and launch hour (%s)\n%s", method, m.Station.Label())
	p := newPlot(title, "month", "mixing height (m above ground)")
	s, hours := BoxShapes(m, minCount)
	p.Add(s)
	p.X.Min, p.X.Max = 0.5, 12.5
	p.X.Tick.Marker = monthTicks()
	p.Y.Min = 0
	if len(s.Rects) == 0 {
		p.Y.Max = 1000
		p.Add(&note{FX: 0.5, FY: 0.55, Text: fmt.Sprintf("no month and hour has %d or more values", minCount),
			Style: centred(textStyle(11))})
	} else {
		_, _, _, ymax := s.DataRange()
		p.Y.Max = ymax * 1.08
	}
	caption := fmt.Sprintf("Box: 25th to 75th percentile; white line: median; whiskers: 10th to 90th percentile (Hyndman-Fan type 7). "+
		"Surface counts as 0 m; undefined heights are left out. Cells with fewer than %d values are not drawn.", minCount)
	cp := withCaption(p, caption, hourKeys(hours)...)
	return &Figure{
		Name:  safeName(m.Station.ID + "-mixing-height-monthly-" + m.Method),
		Title: strings.ReplaceAll(title, "\n", ", "),
		Width: 10 * vg.Inch, Height: 5.5 * vg.Inch,
		draw: cp.draw, captioned: cp,
	}
}

// FrequencyCell is the surface-based inversion frequency of one month and
// nominal hour.
type FrequencyCell struct {
	Month, Hour int
	Valid       int // valid soundings
	SBI         int // of those, with a surface-based inversion
}

// Frequency returns SBI/Valid, or NaN when Valid is 0.
func (c FrequencyCell) Frequency() float64 {
	if c.Valid == 0 {
		return math.NaN()
	}
	return float64(c.SBI) / float64(c.Valid)
}

// SBIFrequency is the monthly surface-based inversion frequency of a
// station by nominal hour.
type SBIFrequency struct {
	Station Station
	Cells   []FrequencyCell // sorted by month, then hour
}

// LoadSBIFrequency reads the surface-based inversion counts of station per
// month and nominal hour (valid soundings only).
func LoadSBIFrequency(ctx context.Context, db *sql.DB, st Station) (*SBIFrequency, error) {
	by, err := loadSBIFrequency(ctx, db, st.ID)
	if err != nil {
		return nil, err
	}
	return &SBIFrequency{Station: st, Cells: by[st.ID]}, nil
}

// loadSBIFrequency reads the cells of station ("" for every station) by
// station id.
func loadSBIFrequency(ctx context.Context, db *sql.DB, station string) (map[string][]FrequencyCell, error) {
	out := map[string][]FrequencyCell{}
	var id string
	var c FrequencyCell
	var sc queries.Scanner
	sc.Str("station_id", &id)
	sc.Int("month", &c.Month)
	sc.Int("nominal_hour", &c.Hour)
	sc.Int("n_valid", &c.Valid)
	sc.Int("n_sbi", &c.SBI)
	err := readRows(ctx, db, "sbi_frequency.sql", []any{station}, func(rows *sql.Rows) error {
		if err := sc.Scan(rows); err != nil {
			return err
		}
		out[id] = append(out[id], c)
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("inversion frequency%s: %w", of(station), err)
	}
	return out, nil
}

// SBIFrequencyFigure draws the monthly surface-based inversion frequency in
// percent as grouped bars, one per nominal hour with at least minCount
// valid soundings in the month (minCount ≤ 0 means DefaultMinCount).
func SBIFrequencyFigure(f *SBIFrequency, minCount int) *Figure {
	if minCount <= 0 {
		minCount = DefaultMinCount
	}
	title := "Surface-based inversion frequency by month and launch hour\n" + f.Station.Label()
	p := newPlot(title, "month", "soundings with a surface-based inversion (%)")
	const width = 10 * vg.Inch
	s, hours := frequencyShapes(f, minCount, width)
	numbered := len(s.Labels) > 0
	p.Add(s)
	p.X.Min, p.X.Max = 0.5, 12.5
	p.X.Tick.Marker = monthTicks()
	p.Y.Min, p.Y.Max = 0, 100
	p.Y.Tick.Marker = percentTicks()
	if len(s.Rects) == 0 {
		p.Add(&note{FX: 0.5, FY: 0.55, Text: fmt.Sprintf("no month and hour has %d or more valid soundings", minCount),
			Style: centred(textStyle(11))})
	}
	caption := "Share of valid soundings whose temperature rises from the surface level upward"
	if numbered {
		caption += "; the number above a bar is the percentage"
	}
	caption += fmt.Sprintf(". Cells with fewer than %d valid soundings are not drawn.", minCount)
	cp := withCaption(p, caption, hourKeys(hours)...)
	return &Figure{
		Name:  safeName(f.Station.ID + "-sbi-frequency-monthly"),
		Title: strings.ReplaceAll(title, "\n", ", "),
		Width: width, Height: 5.5 * vg.Inch,
		draw: cp.draw, captioned: cp,
	}
}

// frequencyShapes returns the bars of the frequency figure of f, drawn
// width wide, and the hours shown: per month and nominal hour with at
// least minCount valid soundings, a bar of the percentage in the hour's
// colour, and its number above it when that fits (see below).
func frequencyShapes(f *SBIFrequency, minCount int, width vg.Length) (*shapes, []int) {
	hours := hoursShown(f.Cells, func(c FrequencyCell) int { return c.Hour }, func(c FrequencyCell) int { return c.Valid }, minCount)
	// A bar's number goes above it only when the widest, "100", fits in
	// the bar's slot: with many hours the numbers ran into each other.
	// The data area is the page less about an inch of axis and margins.
	_, slotW := slot(1, 0, max(len(hours), 1))
	numbered := centred(textStyle(labelPt)).Width("100") <= vg.Length(slotW/0.8/12)*(width-vg.Inch)
	s := &shapes{}
	for _, c := range f.Cells {
		i := indexOf(hours, c.Hour)
		if i < 0 || c.Valid < minCount {
			continue
		}
		x, w := slot(c.Month, i, len(hours))
		pct := 100 * c.Frequency()
		s.Rects = append(s.Rects, rect{X0: x - w/2, X1: x + w/2, Y0: 0, Y1: pct, Fill: hourColor(i)})
		if numbered {
			s.Labels = append(s.Labels, label{X: x, Y: pct, Text: fmt.Sprintf("%.0f", pct)})
		}
	}
	return s, hours
}

// SBIStrength holds the strengths of a station's surface-based inversions
// (K, top minus base temperature) by season code.
type SBIStrength struct {
	Station  Station
	BySeason map[string][]float64 // DJF, MAM, JJA, SON → strengths in K, sorted
}

// LoadSBIStrength reads the strengths of station's surface-based inversions
// by season (valid soundings only).
func LoadSBIStrength(ctx context.Context, db *sql.DB, st Station) (*SBIStrength, error) {
	by, err := loadSBIStrength(ctx, db, st.ID)
	if err != nil {
		return nil, err
	}
	return &SBIStrength{Station: st, BySeason: seasonsOrEmpty(by[st.ID])}, nil
}

func seasonsOrEmpty(m map[string][]float64) map[string][]float64 {
	if m == nil {
		return map[string][]float64{}
	}
	return m
}

// loadSBIStrength reads the strengths of station ("" for every station)
// by station id and season.
func loadSBIStrength(ctx context.Context, db *sql.DB, station string) (map[string]map[string][]float64, error) {
	out := map[string]map[string][]float64{}
	var id, season string
	var k float64
	var sc queries.Scanner
	sc.Str("station_id", &id)
	sc.Str("season", &season)
	sc.Float("sbi_strength_k", &k)
	err := readRows(ctx, db, "sbi_strength.sql", []any{station}, func(rows *sql.Rows) error {
		if err := sc.Scan(rows); err != nil {
			return err
		}
		if out[id] == nil {
			out[id] = map[string][]float64{}
		}
		out[id][season] = append(out[id][season], k)
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("inversion strengths%s: %w", of(station), err)
	}
	return out, nil
}

// Bin is one bar of a histogram: values v with Lo ≤ v < Hi.
type Bin struct {
	Lo, Hi float64
	Count  int
}

// Histogram counts values in bins of width w starting at 0: bin k holds
// k·w ≤ v < (k+1)·w. Values below 0 go to the first bin, NaN values are
// ignored, and bins run up to the one holding the largest value. Empty
// input (or only NaN) gives no bins; w ≤ 0 or NaN gives no bins.
func Histogram(values []float64, w float64) []Bin {
	if !(w > 0) {
		return nil
	}
	maxK := -1
	for _, v := range values {
		if math.IsNaN(v) {
			continue
		}
		maxK = max(maxK, binIndex(v, w))
	}
	if maxK < 0 {
		return nil
	}
	bins := make([]Bin, maxK+1)
	for k := range bins {
		bins[k] = Bin{Lo: float64(k) * w, Hi: float64(k+1) * w}
	}
	for _, v := range values {
		if !math.IsNaN(v) {
			bins[binIndex(v, w)].Count++
		}
	}
	return bins
}

func binIndex(v, w float64) int {
	if v < 0 || math.IsInf(v, 0) {
		return 0
	}
	return int(math.Floor(v / w))
}

// Seasons lists the meteorological seasons in calendar order
// (schema.Seasons).
var Seasons = schema.Seasons

// SBIStrengthFigure draws four histograms of surface-based inversion
// strength, one per season, with bins of binK kelvin (binK ≤ 0 means 1 K)
// and shared axes so that the seasons compare directly.
func SBIStrengthFigure(s *SBIStrength, binK float64) *Figure {
	if !(binK > 0) {
		binK = 1
	}
	hist := map[string][]Bin{}
	xmax, ymax := binK*5, 1.0
	for _, season := range Seasons {
		h := Histogram(s.BySeason[season], binK)
		hist[season] = h
		for _, b := range h {
			xmax, ymax = math.Max(xmax, b.Hi), math.Max(ymax, float64(b.Count))
		}
	}
	plots := make([][]*plot.Plot, 2)
	for j := range plots {
		plots[j] = make([]*plot.Plot, 2)
	}
	for i, season := range Seasons {
		v := s.BySeason[season]
		head := fmt.Sprintf("%s: no surface-based inversions", season)
		if len(v) > 0 {
			head = fmt.Sprintf("%s: %d inversions, median %.1f K", season, len(v), median(v))
		}
		p := newPlot(head, "strength (K, top minus surface temperature)", "soundings")
		p.Title.TextStyle.Font.Size = vg.Points(10)
		sh := &shapes{}
		for _, b := range hist[season] {
			if b.Count > 0 {
				sh.Rects = append(sh.Rects, rect{X0: b.Lo, X1: b.Hi, Y0: 0, Y1: float64(b.Count), Fill: seasonColors[season], Line: ink})
			}
		}
		p.Add(sh)
		p.X.Min, p.X.Max = 0, xmax
		p.Y.Min, p.Y.Max = 0, ymax*1.08
		plots[i/2][i%2] = p
	}
	title := fmt.Sprintf("Strength of surface-based inversions by season (bins of %g K)\n%s", binK, s.Station.Label())
	return &Figure{
		Name:  safeName(s.Station.ID + "-sbi-strength-seasonal"),
		Title: strings.ReplaceAll(title, "\n", ", "),
		Width: 10 * vg.Inch, Height: 7 * vg.Inch,
		draw: func(c draw.Canvas) {
			head := vg.Points(44)
			sty := centred(textStyle(12))
			sty.YAlign = draw.YTop
			for i, line := range strings.Split(title, "\n") {
				c.FillText(sty, vg.Point{X: (c.Min.X + c.Max.X) / 2, Y: c.Max.Y - vg.Points(6) - vg.Length(i)*vg.Points(16)}, line)
			}
			body := draw.Crop(c, vg.Points(6), -vg.Points(10), vg.Points(4), -head)
			tiles := draw.Tiles{Rows: 2, Cols: 2, PadX: vg.Points(24), PadY: vg.Points(14)}
			canv := plot.Align(plots, tiles, body)
			for j := range plots {
				for i := range plots[j] {
					plots[j][i].Draw(canv[j][i])
				}
			}
		},
	}
}

// median returns the type-7 median of sorted values (NaN when empty).
func median(sorted []float64) float64 {
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return sorted[n/2]
	}
	return (sorted[n/2-1] + sorted[n/2]) / 2
}

func centred(s draw.TextStyle) draw.TextStyle {
	s.XAlign = draw.XCenter
	return s
}

// StationFigures loads and draws the three climatology figures of a
// station: monthly mixing height by hour for method (Consensus by default),
// monthly surface-based inversion frequency, and inversion strength by
// season.
func StationFigures(ctx context.Context, db *sql.DB, st Station, method string) ([]*Figure, error) {
	data, err := LoadStationData(ctx, db, []Station{st}, method, false)
	if err != nil {
		return nil, err
	}
	return data[0].Figures(), nil
}

// StationData holds what the climatology figures of one station show.
type StationData struct {
	Heights   *MonthlyHeights
	Frequency *SBIFrequency
	Strength  *SBIStrength
	Calendar  *EpisodeCalendar // nil unless loaded
}

// LoadStationData reads the numbers of the climatology figures of every
// station in stations, in that order, for mixing-height method (Consensus
// when ""), and with calendar also the episode calendar. Each kind of
// figure takes one query for all the stations, not one per station: every
// query reads the footers of all the store's files, so per-station queries
// made a store-wide run quadratic in the number of stations.
func LoadStationData(ctx context.Context, db *sql.DB, stations []Station, method string, calendar bool) ([]StationData, error) {
	if method == "" {
		method = Consensus
	}
	filter := ""
	if len(stations) == 1 {
		filter = stations[0].ID
	}
	heights, err := loadMonthlyHeights(ctx, db, filter, method)
	if err != nil {
		return nil, err
	}
	freq, err := loadSBIFrequency(ctx, db, filter)
	if err != nil {
		return nil, err
	}
	strength, err := loadSBIStrength(ctx, db, filter)
	if err != nil {
		return nil, err
	}
	var cal map[string]*EpisodeCalendar
	if calendar {
		if cal, err = loadEpisodeCalendars(ctx, db, filter); err != nil {
			return nil, err
		}
	}
	out := make([]StationData, len(stations))
	for i, st := range stations {
		out[i] = StationData{
			Heights:   &MonthlyHeights{Station: st, Method: method, Boxes: heights[st.ID]},
			Frequency: &SBIFrequency{Station: st, Cells: freq[st.ID]},
			Strength:  &SBIStrength{Station: st, BySeason: seasonsOrEmpty(strength[st.ID])},
		}
		if calendar {
			c := cal[st.ID]
			if c == nil {
				c = newEpisodeCalendar()
			}
			c.Station = st
			out[i].Calendar = c
		}
	}
	return out, nil
}

// Figures returns the figures of d: monthly mixing height, surface-based
// inversion frequency and strength, and the episode calendar when it was
// loaded. Drawing happens when a figure is rendered, so the figures of
// several stations may be rendered at once.
func (d StationData) Figures() []*Figure {
	figs := []*Figure{MonthlyHeightsFigure(d.Heights, 0), SBIFrequencyFigure(d.Frequency, 0), SBIStrengthFigure(d.Strength, 1)}
	if d.Calendar != nil {
		figs = append(figs, EpisodeCalendarFigure(d.Calendar))
	}
	return figs
}
