// Package report writes a store's boundary-layer climatology as an HTML
// page a meteorologist can hand on: what the report was made from (program
// version, store, schema and derivation versions, date), the stations with
// their positions and periods of record, the data coverage, and per station
// the seasonal climatology, the figures of package figures, the episodes,
// the forecasters' guidance, the trends and the quality-control findings;
// then the method notes with their references and the caution about use.
//
// Stations with fewer valid soundings than Options.MinSoundings are listed
// with their counts but get no section (a handful of soundings gives no
// climatology). The figures are PNG files beside the page (Report.Save) or,
// with Options.Embed, inside it as data URIs. The page loads nothing from
// elsewhere (no scripts, fonts, style sheets or images by URL), so it opens
// offline in any browser.
package report

import (
	"context"
	"database/sql"
	_ "embed"
	"fmt"
	"html/template"
	"math"
	"runtime"
	"slices"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/queries/figures"
	"golang.org/x/sync/errgroup"
)

//go:embed coverage.sql
var coverageSQL string

//go:embed stations.sql
var stationsSQL string

// DefaultMinSoundings is the number of valid soundings below which a
// station is listed but given no section: queries.MinSeasonSoundings, the
// smallest sample of one cell of the seasonal table, so that a station
// below it cannot fill a single cell.
const DefaultMinSoundings = queries.MinSeasonSoundings

// FullFigureStations is the largest number of station sections whose
// figures are all drawn, at fullDPI. A report of more stations shows
// one figure per station, the monthly mixing height, at compactDPI, so
// that the page and its figures stay a few megabytes (100 stations:
// about 1 MB of figures instead of 9); "sondeclim figures" draws the
// others.
const FullFigureStations = 10

// Options selects what a report covers and records what made it.
type Options struct {
	// Station restricts the report to one station id; empty means every
	// station of the store.
	Station string
	// Method is the mixing-height method of the monthly figure:
	// figures.Consensus (the default when empty) or a method of the
	// mixing_heights table.
	Method string
	// MinSoundings is the number of valid soundings a station needs for
	// its section; 0 means DefaultMinSoundings, a negative value is an
	// error.
	MinSoundings int
	// Embed puts the figures inside the page as data URIs; otherwise Save
	// writes them as PNG files into a folder beside the page.
	Embed bool
	// FullFigureStations is the largest number of sections whose figures
	// are all drawn; 0 means FullFigureStations.
	FullFigureStations int

	// What made the report, shown in its colophon.
	Generated         time.Time // when it was written (UTC); zero: now
	Version           string    // program version (internal/buildinfo)
	StorePath         string    // the store directory as given
	SchemaVersion     int       // store schema version
	DerivationVersion int       // derivation version of the program
}

// Caution is the notice on every report.
const Caution = "Every number and figure here is an estimate from soundings. For regulatory, air-quality, smoke-management or burn decisions, defer to local regulations and licensed meteorological practice."

// Image is one figure of a station.
type Image struct {
	Title string
	Name  string // file stem
	Width int    // CSS pixels
	PNG   []byte
	// Source is the image's address in the page: a data URI when
	// embedded, else the relative path Save writes it to.
	Source template.URL
}

// Section is one station's part of the report.
type Section struct {
	ID, Label   string
	Position    string // "38.98° N, 77.49° W, 88 m above sea level"
	Climatology Table
	Images      []Image
	Episodes    Table
	// NoEpisodes names the rules with no episode in any season (their
	// rows, all zeros, are left out of Episodes).
	NoEpisodes  string
	Persistence Table
	Afternoon   Table
	Trends      Table
	// TrendsNote, when set, replaces the trends table: no season and
	// hour has enough years to judge a trend.
	TrendsNote string
	QC         Table
	Excluded   int // soundings excluded by quality control
}

// Report is the content of the page.
type Report struct {
	Title        string
	Caution      string
	Generated    string
	Version      string
	Store        string
	Schema       int
	Derivation   int
	MinSoundings int
	Method       string
	Embed        bool
	// Compact is set when the report has more than FullFigureStations
	// sections: one figure per station, the details folded.
	Compact            bool
	FullFigureStations int
	MinTrendYears      int
	// FigureDir is the folder of the figure files, relative to the page
	// (Save sets it from the page's name).
	FigureDir string

	Stations Table
	Listed   []string // ids of the stations listed without a section
	Coverage Table
	Sections []Section
	Rules    []Rule
}

// Rule is an episode rule as the page describes it.
type Rule struct{ Name, Words string }

// Build reads the report's content from the store behind db (see
// queries.Open). An unknown station or method is an error naming the
// ones the store has.
func Build(ctx context.Context, db *sql.DB, opt Options) (*Report, error) {
	if opt.Method == "" {
		opt.Method = figures.Consensus
	}
	if opt.MinSoundings < 0 {
		return nil, fmt.Errorf("the minimum number of soundings must not be negative, got %d", opt.MinSoundings)
	}
	if opt.MinSoundings == 0 {
		opt.MinSoundings = DefaultMinSoundings
	}
	if opt.FullFigureStations <= 0 {
		opt.FullFigureStations = FullFigureStations
	}
	if opt.Generated.IsZero() {
		opt.Generated = time.Now()
	}
	all, err := figures.LoadStations(ctx, db)
	if err != nil {
		return nil, err
	}
	if opt.Station != "" {
		st, err := figures.FindStation(ctx, db, opt.Station)
		if err != nil {
			return nil, err
		}
		all = []figures.Station{st}
	}
	if len(all) == 0 {
		return nil, fmt.Errorf("the store holds no soundings")
	}
	r := &Report{Caution: Caution, Method: opt.Method, Generated: opt.Generated.UTC().Format("2006-01-02 15:04 UTC"),
		Version: opt.Version, Store: opt.StorePath, Schema: opt.SchemaVersion, Derivation: opt.DerivationVersion,
		MinSoundings: opt.MinSoundings, Embed: opt.Embed, FullFigureStations: opt.FullFigureStations,
		MinTrendYears: queries.DefaultMinTrendYears}
	if len(all) == 1 {
		r.Title = "Boundary-layer climatology of " + all[0].Label()
	} else {
		r.Title = fmt.Sprintf("Boundary-layer climatology of %d stations", len(all))
	}
	for _, c := range analyze.BuiltinCriteria() {
		r.Rules = append(r.Rules, Rule{Name: c.Name, Words: ruleWords(c.Name)})
	}

	meta, err := queries.Query(ctx, db, stationsSQL, opt.Station)
	if err != nil {
		return nil, fmt.Errorf("stations: %w", err)
	}
	kept, positions := r.stations(meta)
	cov, err := queries.Query(ctx, db, coverageSQL, opt.Station)
	if err != nil {
		return nil, fmt.Errorf("coverage: %w", err)
	}
	r.Coverage = render(cov, coverageColumns)
	if len(kept) == 0 {
		return r, nil
	}
	t, err := loadTables(ctx, db, kept)
	if err != nil {
		return nil, err
	}
	excluded := excludedByStation(cov)
	var drawn []figures.Station
	for _, st := range all {
		if !slices.Contains(kept, st.ID) {
			continue
		}
		sec := Section{ID: st.ID, Label: st.Label(), Position: positions[st.ID], Excluded: excluded[st.ID]}
		t.fill(&sec)
		r.Sections = append(r.Sections, sec)
		drawn = append(drawn, st)
	}
	// One query per kind of figure for all the stations (per-station
	// queries each read every file's footer). The figures are drawn side
	// by side, one station per processor; each lands in its own section,
	// so the page does not depend on the order they finish in.
	data, err := figures.LoadStationData(ctx, db, drawn, opt.Method, true)
	if err != nil {
		return nil, err
	}
	compact := len(drawn) > opt.FullFigureStations
	r.Compact = compact
	g, gctx := errgroup.WithContext(ctx)
	g.SetLimit(runtime.GOMAXPROCS(0))
	for i := range drawn {
		g.Go(func() error {
			if err := gctx.Err(); err != nil {
				return err
			}
			im, err := sectionImages(data[i], compact)
			r.Sections[i].Images = im
			return err
		})
	}
	if err := g.Wait(); err != nil {
		return nil, err
	}
	return r, nil
}

// stations fills the stations table of r from the rows of stations.sql,
// and returns the ids of the stations with a section and each station's
// position in words.
func (r *Report) stations(meta *queries.Table) ([]string, map[string]string) {
	col := func(name string) int { return slices.Index(meta.Columns, name) }
	id, valid := col("station_id"), col("n_valid")
	lat, lon, elev, npos := col("latitude_deg"), col("longitude_deg"), col("elevation_m"), col("n_positions")
	var kept []string
	positions := map[string]string{}
	out := &queries.Table{Columns: append(slices.Clone(meta.Columns), "shown")}
	for _, row := range meta.Rows {
		sid := fmt.Sprint(row[id])
		n, _ := row[valid].(int64)
		shown := "section below"
		if int(n) < r.MinSoundings {
			shown = fmt.Sprintf("listed only: fewer than %d valid soundings", r.MinSoundings)
			r.Listed = append(r.Listed, sid)
		} else {
			kept = append(kept, sid)
		}
		if np, _ := row[npos].(int64); np > 1 {
			shown += fmt.Sprintf("; %d positions in the record, the latest shown", np)
		}
		positions[sid] = position(row[lat], row[lon], row[elev])
		out.Rows = append(out.Rows, append(slices.Clone(row), shown))
	}
	r.Stations = render(out, stationColumns)
	return kept, positions
}

// position writes a station's position in words.
func position(lat, lon, elev any) string {
	la, ok1 := lat.(float64)
	lo, ok2 := lon.(float64)
	var parts []string
	if ok1 && ok2 {
		ns, ew := "N", "E"
		if la < 0 {
			ns = "S"
		}
		if lo < 0 {
			ew = "W"
		}
		parts = append(parts, fmt.Sprintf("%.2f° %s, %.2f° %s", math.Abs(la), ns, math.Abs(lo), ew))
	} else {
		parts = append(parts, "position not given")
	}
	if e, ok := elev.(float64); ok && !math.IsNaN(e) {
		parts = append(parts, fmt.Sprintf("%.0f m above sea level", e))
	} else {
		parts = append(parts, "elevation not given")
	}
	return strings.Join(parts, ", ")
}

// excludedByStation sums the coverage table's QC-excluded soundings per
// station.
func excludedByStation(cov *queries.Table) map[string]int {
	out := map[string]int{}
	id, ex := slices.Index(cov.Columns, "station_id"), slices.Index(cov.Columns, "n_qc_excluded")
	for _, r := range cov.Rows {
		n, _ := r[ex].(int64)
		out[fmt.Sprint(r[id])] += int(n)
	}
	return out
}
