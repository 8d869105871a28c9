// Package report writes a store's boundary-layer climatology as one
// self-contained HTML page: the figures of package figures embedded as
// base64 PNG images, the data coverage per station and year, the seasonal
// climatology table, the method notes with their references, and the
// caution about use. The page loads nothing from elsewhere (no scripts,
// fonts, style sheets or images by URL), so it opens offline in any
// browser.
package report

import (
	"bytes"
	"context"
	"database/sql"
	_ "embed"
	"encoding/base64"
	"fmt"
	"html/template"
	"io"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/queries/figures"
)

//go:embed coverage.sql
var coverageSQL string

//go:embed page.html
var pageHTML string

// Options selects what a report covers.
type Options struct {
	// Station restricts the report to one station id; empty means every
	// station of the store.
	Station string
	// Method is the mixing-height method of the monthly figure:
	// figures.Consensus (the default when empty) or a method of the
	// mixing_heights table.
	Method string
}

// Caution is the notice on every report.
const Caution = "Every number and figure here is an estimate from soundings. For regulatory, air-quality, smoke-management or burn decisions, defer to local regulations and licensed meteorological practice."

// Table is a table for the page: column headings and formatted cells.
type Table struct {
	Columns []string
	Rows    [][]string
}

// Image is one embedded figure.
type Image struct {
	Title  string
	Name   string
	Source template.URL // data:image/png;base64,…
	Width  int          // CSS pixels
}

// Section holds one station's figures.
type Section struct {
	Station figures.Station
	Label   string
	Images  []Image
}

// Report is the content of the page.
type Report struct {
	Title       string
	Caution     string
	Coverage    Table
	Climatology Table
	Sections    []Section
	Method      string
}

// Build reads the report's content from the store behind db (see
// queries.Open). An unknown station or method is an error naming the
// ones the store has.
func Build(ctx context.Context, db *sql.DB, opt Options) (*Report, error) {
	method := opt.Method
	if method == "" {
		method = figures.Consensus
	}
	stations, err := figures.LoadStations(ctx, db)
	if err != nil {
		return nil, err
	}
	if opt.Station != "" {
		st, err := figures.FindStation(ctx, db, opt.Station)
		if err != nil {
			return nil, err
		}
		stations = []figures.Station{st}
	}
	if len(stations) == 0 {
		return nil, fmt.Errorf("the store holds no soundings")
	}
	r := &Report{Caution: Caution, Method: method}
	if len(stations) == 1 {
		r.Title = "Boundary-layer climatology of " + stations[0].Label()
	} else {
		r.Title = fmt.Sprintf("Boundary-layer climatology of %d stations", len(stations))
	}
	cov, err := queries.Query(ctx, db, coverageSQL, opt.Station)
	if err != nil {
		return nil, fmt.Errorf("coverage: %w", err)
	}
	r.Coverage = format(cov, "")
	clim, err := queries.Climatology(ctx, db)
	if err != nil {
		return nil, fmt.Errorf("%w", err)
	}
	r.Climatology = format(clim, opt.Station)
	for _, st := range stations {
		figs, err := figures.StationFigures(ctx, db, st, method)
		if err != nil {
			return nil, err
		}
		sec := Section{Station: st, Label: st.Label()}
		for _, f := range figs {
			var buf bytes.Buffer
			if err := f.Render(&buf, "png"); err != nil {
				return nil, err
			}
			sec.Images = append(sec.Images, Image{
				Title:  f.Title,
				Name:   f.Name,
				Source: template.URL("data:image/png;base64," + base64.StdEncoding.EncodeToString(buf.Bytes())),
				Width:  int(math.Round(f.Width.Points() * 96 / 72)),
			})
		}
		r.Sections = append(r.Sections, sec)
	}
	return r, nil
}

// format turns a query result into text cells: heights (columns ending in
// _m) to whole metres, kelvin to 0.1 K, fractions to 0.01, NULL as "–".
// When station is not empty, only rows whose station_id equals it remain.
func format(t *queries.Table, station string) Table {
	out := Table{Columns: t.Columns}
	sid := -1
	for i, c := range t.Columns {
		if c == "station_id" {
			sid = i
		}
	}
	for _, row := range t.Rows {
		if station != "" && sid >= 0 && row[sid] != station {
			continue
		}
		cells := make([]string, len(row))
		for i, v := range row {
			cells[i] = cell(t.Columns[i], v)
		}
		out.Rows = append(out.Rows, cells)
	}
	return out
}

func cell(column string, v any) string {
	switch x := v.(type) {
	case nil:
		return "–"
	case float64:
		if math.IsNaN(x) {
			return "–"
		}
		switch {
		case strings.HasSuffix(column, "_m"):
			return strconv.FormatFloat(x, 'f', 0, 64)
		case strings.HasSuffix(column, "_k"):
			return strconv.FormatFloat(x, 'f', 1, 64)
		default:
			return strconv.FormatFloat(x, 'f', 2, 64)
		}
	case time.Time:
		return x.UTC().Format(time.RFC3339)
	}
	return fmt.Sprint(v)
}

var page = template.Must(template.New("report").Parse(pageHTML))

// WriteHTML writes the report as one self-contained HTML5 page.
func (r *Report) WriteHTML(w io.Writer) error {
	var buf bytes.Buffer
	if err := page.Execute(&buf, r); err != nil {
		return fmt.Errorf("%w", err)
	}
	_, err := w.Write(buf.Bytes())
	return err
}
