package figures

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/xml"
	"errors"
	"image"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/plot/plotter"

	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/schema"
)

var nan = math.NaN()

// scaffold is an invented store (unit scaffolding; station XFIG1 does not
// exist): January 00 UTC soundings with consensus mixing heights 1, 2, …,
// 10 m; January 12 UTC soundings with statuses surface, ok 100 m, ok 200 m
// and two undefined; one sounding that could not be analysed and carries a
// deliberately absurd height; and one fully described sounding at
// 2016-07-01 11:03 UTC with levels, two inversions and a mixed layer.
func scaffold(t *testing.T) *sql.DB {
	t.Helper()
	dir := t.TempDir()
	yes, no := true, false
	row := func(launch time.Time, hour int32, status, mhStatus string, mh float64, sbi *bool, strength float64) schema.SoundingRow {
		nominal := time.Date(launch.Year(), launch.Month(), launch.Day(), int(hour), 0, 0, 0, time.UTC)
		if launch.Hour() > 18 {
			nominal = nominal.AddDate(0, 0, 1)
		}
		return schema.SoundingRow{
			StationID: "XFIG1", StationName: "INVENTED FIELD", LaunchTime: launch, LaunchKnown: true,
			NominalTime: nominal, NominalHour: hour, Year: int32(nominal.Year()), Month: int32(nominal.Month()),
			Season: "DJF", SeasonYear: int32(nominal.Year()), AnalysisStatus: status, QCStatus: "ok",
			ConsensusMHM: mh, ConsensusStatus: mhStatus, SBIPresent: sbi, SBIStrengthK: strength,
			LatitudeDeg: 45, LongitudeDeg: 10, ElevationM: 200,
		}
	}
	var rows []schema.SoundingRow
	var mh []schema.MixingHeightRow
	for i := 1; i <= 10; i++ {
		launch := time.Date(2015, 1, i, 23, 5, 0, 0, time.UTC) // nominal 00 UTC of the next day
		sbi := &no
		if i <= 3 {
			sbi = &yes
		}
		rows = append(rows, row(launch, 0, "ok", "ok", float64(i), sbi, float64(i)))
		mh = append(mh, schema.MixingHeightRow{StationID: "XFIG1", LaunchTime: launch, Year: 2015,
			Method: "heffter", HeightAGLM: float64(10 * i), Status: "ok"})
	}
	for i, c := range []struct {
		status string
		mh     float64
	}{{"surface", 0}, {"ok", 100}, {"ok", 200}, {"undefined", nan}, {"undefined", nan}} {
		launch := time.Date(2015, 1, 20+i, 11, 0, 0, 0, time.UTC)
		rows = append(rows, row(launch, 12, "ok", c.status, c.mh, &yes, 2.5))
	}
	rows = append(rows, row(time.Date(2015, 1, 28, 11, 0, 0, 0, time.UTC), 12, "no_surface_level", "ok", 99999, nil, nan))

	// The described sounding. Its layers are the ones METHODS.md §9
	// ("Inversion detection", merge gap 100 m) expects for its test profile:
	// SBI 0-300 m, EI 1000-1200 m; the mixed layer is invented.
	launch := time.Date(2016, 7, 1, 11, 3, 0, 0, time.UTC)
	full := row(launch, 12, "ok", "ok", 450, &yes, 7)
	full.Month, full.Season, full.Year = 7, "JJA", 2016
	rows = append(rows, full)
	mh = append(mh,
		schema.MixingHeightRow{StationID: "XFIG1", LaunchTime: launch, Year: 2016, Method: "parcel", Status: "surface"},
		schema.MixingHeightRow{StationID: "XFIG1", LaunchTime: launch, Year: 2016, Method: "heffter", HeightAGLM: nan, Status: "undefined"},
		schema.MixingHeightRow{StationID: "XFIG1", LaunchTime: launch, Year: 2016, Method: "bulk_richardson", HeightAGLM: 450, Status: "ok"},
	)
	var levels []schema.LevelRow
	z := []float64{0, 50, 150, 220, 300, 400, 600, 1000, 1200, 1400, 2000}
	tc := []float64{-20, -18, -15, -15.5, -13, -14, -16, -18, -17, -19, -23}
	for i := range z {
		levels = append(levels, schema.LevelRow{StationID: "XFIG1", LaunchTime: launch, Year: 2016, Index: int32(i),
			PressureHPa: 1000 - z[i]/10, HeightAGLM: z[i], TemperatureC: tc[i], DewpointC: tc[i] - 3,
			ThetaK: 273.15 + tc[i] + z[i]/100, MixingRatioGKg: 1, WindDirDeg: nan, WindSpeedMS: nan})
	}
	inv := []schema.InversionRow{
		{StationID: "XFIG1", LaunchTime: launch, Year: 2016, Index: 0, SurfaceBased: true, BaseAGLM: 0, TopAGLM: 300, StrengthK: 7, Class: "radiation"},
		{StationID: "XFIG1", LaunchTime: launch, Year: 2016, Index: 1, BaseAGLM: 1000, TopAGLM: 1200, StrengthK: 1, Class: "unclassified"},
	}
	mixed := []schema.MixedLayerRow{{StationID: "XFIG1", LaunchTime: launch, Year: 2016, BaseAGLM: 300, TopAGLM: 900, ThetaK: 262, Levels: 3}}
	for _, err := range []error{
		first(schema.WriteTable(dir, schema.TableSoundings, rows)),
		first(schema.WriteTable(dir, schema.TableMixingHeights, mh)),
		first(schema.WriteTable(dir, schema.TableLevels, levels)),
		first(schema.WriteTable(dir, schema.TableInversions, inv)),
		first(schema.WriteTable(dir, schema.TableMixedLayers, mixed)),
	} {
		if err != nil {
			t.Fatal(err)
		}
	}
	db, err := queries.Open(context.Background(), dir)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	return db
}

func first(_ []string, err error) error { return err }

func near(a, b float64) bool { return math.Abs(a-b) < 1e-9 }

func TestMonthlyHeights(t *testing.T) {
	ctx := context.Background()
	db := scaffold(t)
	st, err := FindStation(ctx, db, "XFIG1")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := FindStation(ctx, db, "NOPE"); err == nil || !strings.Contains(err.Error(), "XFIG1") {
		t.Errorf("unknown station: error %v should list XFIG1", err)
	}
	m, err := LoadMonthlyHeights(ctx, db, st, Consensus)
	if err != nil {
		t.Fatal(err)
	}
	want := []HeightBox{
		// Percentiles of 1..10, type 7: p10 = 1.9, p50 = 5.5, p90 = 9.1
		// (METHODS.md §9 "Statistics"); p25 = 3.25 and p75 = 7.75 by the
		// type-7 formula there, h = (n-1)p.
		{Month: 1, Hour: 0, N: 10, P10: 1.9, P25: 3.25, P50: 5.5, P75: 7.75, P90: 9.1},
		// {0 (surface), 100, 200}, two undefined left out (METHODS.md §8:
		// surface counts as 0, undefined reported apart); the unanalysable
		// sounding does not count. Type 7 on 3 values: p10 = 20, p25 = 50.
		{Month: 1, Hour: 12, N: 3, Undefined: 2, P10: 20, P25: 50, P50: 100, P75: 150, P90: 180},
		{Month: 7, Hour: 12, N: 1, P10: 450, P25: 450, P50: 450, P75: 450, P90: 450},
	}
	if len(m.Boxes) != len(want) {
		t.Fatalf("boxes %+v, want %+v", m.Boxes, want)
	}
	for i, w := range want {
		g := m.Boxes[i]
		if g.Month != w.Month || g.Hour != w.Hour || g.N != w.N || g.Undefined != w.Undefined ||
			!near(g.P10, w.P10) || !near(g.P25, w.P25) || !near(g.P50, w.P50) || !near(g.P75, w.P75) || !near(g.P90, w.P90) {
			t.Errorf("box %d = %+v, want %+v", i, g, w)
		}
	}

	// One method of the mixing_heights table: heights 10..100 m in January
	// at 00 UTC, so the type-7 median is 55 m (METHODS.md §9 scaled by 10).
	h, err := LoadMonthlyHeights(ctx, db, st, "heffter")
	if err != nil {
		t.Fatal(err)
	}
	if len(h.Boxes) != 2 || !near(h.Boxes[0].P50, 55) || h.Boxes[1].Undefined != 1 {
		t.Errorf("heffter boxes %+v", h.Boxes)
	}
	if _, err := LoadMonthlyHeights(ctx, db, st, "astrology"); err == nil || !strings.Contains(err.Error(), "heffter") {
		t.Errorf("unknown method: error %v should list the methods", err)
	}

	// The box plot draws cells with at least minCount values only.
	s, hours := BoxShapes(m, 3)
	if len(s.Rects) != 2 || len(hours) != 2 || s.Rects[0].Y0 != 3.25 || s.Rects[0].Y1 != 7.75 {
		t.Errorf("BoxShapes(3): %d boxes, hours %v, first %+v", len(s.Rects), hours, s.Rects)
	}
	if s, hours := BoxShapes(m, 10); len(s.Rects) != 1 || len(hours) != 1 || hours[0] != 0 {
		t.Errorf("BoxShapes(10): %d boxes, hours %v", len(s.Rects), hours)
	}
}

func TestSBIFrequencyAndStrength(t *testing.T) {
	ctx := context.Background()
	db := scaffold(t)
	st, _ := FindStation(ctx, db, "XFIG1")
	f, err := LoadSBIFrequency(ctx, db, st)
	if err != nil {
		t.Fatal(err)
	}
	// Hand count: 3 of 10 at 00 UTC, 5 of 5 at 12 UTC in January (the
	// unanalysable sounding has no SBI verdict), 1 of 1 in July.
	want := []FrequencyCell{{1, 0, 10, 3}, {1, 12, 5, 5}, {7, 12, 1, 1}}
	if len(f.Cells) != len(want) {
		t.Fatalf("cells %+v, want %+v", f.Cells, want)
	}
	for i := range want {
		if f.Cells[i] != want[i] {
			t.Errorf("cell %d = %+v, want %+v", i, f.Cells[i], want[i])
		}
	}
	if got := f.Cells[0].Frequency(); !near(got, 0.3) {
		t.Errorf("frequency %v, want 0.3", got)
	}
	if got := (FrequencyCell{}).Frequency(); !math.IsNaN(got) {
		t.Errorf("frequency of no soundings %v, want NaN", got)
	}
	s, err := LoadSBIStrength(ctx, db, st)
	if err != nil {
		t.Fatal(err)
	}
	// DJF: strengths 1, 2, 3 (00 UTC) and 2.5 ×5 (12 UTC); JJA: 7.
	if got := s.BySeason["DJF"]; len(got) != 8 || got[0] != 1 || got[7] != 3 {
		t.Errorf("DJF strengths %v", got)
	}
	if got := s.BySeason["JJA"]; len(got) != 1 || got[0] != 7 {
		t.Errorf("JJA strengths %v", got)
	}
}

func TestHistogram(t *testing.T) {
	// Invented values, counts by hand; bins [k w, (k+1) w) (common
	// practice, no source).
	cases := []struct {
		name   string
		values []float64
		w      float64
		want   []int
	}{
		{"empty", nil, 1, nil},
		{"only NaN", []float64{nan}, 1, nil},
		{"zero width", []float64{1}, 0, nil},
		{"edges go up", []float64{0, 0.99, 1, 2.5, nan}, 1, []int{2, 1, 1}},
		{"negative to first bin", []float64{-0.4, 0.2, 3.9}, 2, []int{2, 1}},
		{"unsorted", []float64{5, 1, 3, 1}, 2, []int{2, 1, 1}},
	}
	for _, c := range cases {
		got := Histogram(c.values, c.w)
		if len(got) != len(c.want) {
			t.Errorf("%s: %d bins %+v, want counts %v", c.name, len(got), got, c.want)
			continue
		}
		for k, b := range got {
			if b.Count != c.want[k] || b.Lo != float64(k)*c.w || b.Hi != float64(k+1)*c.w {
				t.Errorf("%s: bin %d = %+v, want count %d", c.name, k, b, c.want[k])
			}
		}
	}
}

func TestLabelPositions(t *testing.T) {
	// Worked by hand: overlapping labels form a group centred on the mean
	// of the positions they want; nothing goes below lo.
	cases := []struct {
		ideal    []float64
		gap, lo  float64
		want     []float64
		scenario string
	}{
		{[]float64{0, 100}, 10, 0, []float64{0, 100}, "apart"},
		{[]float64{50, 52}, 10, 0, []float64{46, 56}, "pair centred on 51"},
		{[]float64{0, 0, 0}, 10, 0, []float64{0, 10, 20}, "clamped at the bottom"},
		{[]float64{30, 31, 40}, 10, 0, []float64{23.666666666666668, 33.666666666666664, 43.666666666666664}, "chain of three"},
		{nil, 10, 0, []float64{}, "none"},
	}
	for _, c := range cases {
		got := labelPositions(c.ideal, c.gap, c.lo)
		if len(got) != len(c.want) {
			t.Fatalf("%s: %v, want %v", c.scenario, got, c.want)
		}
		for i := range got {
			if !near(got[i], c.want[i]) {
				t.Errorf("%s: %v, want %v", c.scenario, got, c.want)
				break
			}
		}
	}
}

func TestLoadProfileWindow(t *testing.T) {
	ctx := context.Background()
	db := scaffold(t)
	launch := time.Date(2016, 7, 1, 11, 3, 0, 0, time.UTC)
	// Nominal 12 UTC, launch 11:03: asked at 12:00 within 3 h.
	p, err := LoadProfile(ctx, db, "XFIG1", time.Date(2016, 7, 1, 12, 0, 0, 0, time.UTC), 3*time.Hour)
	if err != nil {
		t.Fatal(err)
	}
	if !p.LaunchTime.Equal(launch) || len(p.Levels) != 11 || len(p.Inversions) != 2 || len(p.MixedLayers) != 1 || len(p.Heights) != 3 {
		t.Fatalf("profile %s: %d levels, %d inversions, %d mixed layers, %d heights",
			p.LaunchTime, len(p.Levels), len(p.Inversions), len(p.MixedLayers), len(p.Heights))
	}
	if p.Heights[0].Method != "parcel" || p.Heights[1].Method != "heffter" || !math.IsNaN(p.Heights[1].HeightAGLM) {
		t.Errorf("heights %+v", p.Heights)
	}
	if p.Consensus.Method != Consensus || p.Consensus.HeightAGLM != 450 {
		t.Errorf("consensus %+v", p.Consensus)
	}
	// 16:00 is 4 h 57 min after launch and 4 h after the nominal time.
	if _, err := LoadProfile(ctx, db, "XFIG1", time.Date(2016, 7, 1, 16, 0, 0, 0, time.UTC), 3*time.Hour); !errors.Is(err, ErrNoSounding) {
		t.Errorf("outside the window: error %v, want ErrNoSounding", err)
	}
	// Exact launch time with no window.
	if _, err := LoadProfile(ctx, db, "XFIG1", launch, 0); err != nil {
		t.Errorf("exact launch time: %v", err)
	}
}

func TestProfileShading(t *testing.T) {
	ctx := context.Background()
	db := scaffold(t)
	p, err := LoadProfile(ctx, db, "XFIG1", time.Date(2016, 7, 1, 11, 3, 0, 0, time.UTC), 0)
	if err != nil {
		t.Fatal(err)
	}
	bands := Shading(p)
	want := []Band{{BandSurfaceInversion, 0, 300}, {BandElevatedInversion, 1000, 1200}, {BandMixedLayer, 300, 900}}
	if len(bands) != len(want) {
		t.Fatalf("bands %+v, want %+v", bands, want)
	}
	for i := range want {
		if bands[i] != want[i] {
			t.Errorf("band %d = %+v, want %+v", i, bands[i], want[i])
		}
	}
	// Layers without a usable extent are not shaded.
	bad := &Profile{Inversions: []Inversion{{BaseAGLM: nan, TopAGLM: 10}, {BaseAGLM: 50, TopAGLM: 50}}}
	if got := Shading(bad); len(got) != 0 {
		t.Errorf("degenerate layers shaded: %+v", got)
	}

	// In the SVG each band is one filled rectangle per panel (two panels)
	// plus one swatch in the key: 2n+1 paths of the band's colour.
	var buf bytes.Buffer
	if err := ProfileFigure(p).Render(&buf, "svg"); err != nil {
		t.Fatal(err)
	}
	svg := buf.String()
	for _, c := range []struct {
		fill string
		n    int
	}{{"fill:#C87A1D;", 2*1 + 1}, {"fill:#E2B449;", 2*1 + 1}, {"fill:#4E8EBF;", 2*1 + 1}} {
		if got := strings.Count(svg, c.fill); got != c.n {
			t.Errorf("SVG has %d shapes filled %s, want %d", got, c.fill, c.n)
		}
	}
	// The defined heights are labelled, the undefined one is named, each
	// method in words (the registry's Title), never by its code name.
	for _, s := range []string{"Holzworth parcel: surface", "bulk Richardson 450 m", "consensus of methods 450 m", "Undefined: Heffter."} {
		if !strings.Contains(svg, s) {
			t.Errorf("SVG lacks %q", s)
		}
	}
	for _, code := range []string{"bulk_richardson", "heffter"} {
		if strings.Contains(svg, code) {
			t.Errorf("SVG names method %q by its code name", code)
		}
	}
}

// checkImage fails unless b decodes as a PNG or parses as SVG with root
// <svg>.
func checkImage(t *testing.T, name, format string, b []byte) {
	t.Helper()
	if len(b) == 0 {
		t.Errorf("%s.%s is empty", name, format)
		return
	}
	switch format {
	case "png":
		img, err := png.Decode(bytes.NewReader(b))
		if err != nil {
			t.Errorf("%s.png: %v", name, err)
		} else if r := img.Bounds(); r.Dx() < 600 || r.Dy() < 400 {
			t.Errorf("%s.png is only %dx%d", name, r.Dx(), r.Dy())
		} else if p, ok := img.(*image.Paletted); !ok || len(p.Palette) > PaletteSize {
			t.Errorf("%s.png is %T, not a palette image of at most %d colours", name, img, PaletteSize)
		}
	case "svg":
		d := xml.NewDecoder(bytes.NewReader(b))
		for {
			tok, err := d.Token()
			if err != nil {
				t.Errorf("%s.svg: no root element: %v", name, err)
				return
			}
			if se, ok := tok.(xml.StartElement); ok {
				if se.Name.Local != "svg" {
					t.Errorf("%s.svg: root element <%s>", name, se.Name.Local)
				}
				break
			}
		}
		for {
			if _, err := d.Token(); err != nil {
				if err.Error() != "EOF" {
					t.Errorf("%s.svg: %v", name, err)
				}
				return
			}
		}
	}
}

func TestRenderAll(t *testing.T) {
	ctx := context.Background()
	db := scaffold(t)
	st, _ := FindStation(ctx, db, "XFIG1")
	figs, err := StationFigures(ctx, db, st, "")
	if err != nil {
		t.Fatal(err)
	}
	p, err := LoadProfile(ctx, db, "XFIG1", time.Date(2016, 7, 1, 11, 3, 0, 0, time.UTC), 0)
	if err != nil {
		t.Fatal(err)
	}
	figs = append(figs, ProfileFigure(p))
	for _, f := range figs {
		if !strings.HasPrefix(f.Name, "XFIG1-") || !strings.Contains(f.Title, "XFIG1 INVENTED FIELD") {
			t.Errorf("figure %q titled %q", f.Name, f.Title)
		}
		for _, format := range Formats {
			var buf bytes.Buffer
			if err := f.Render(&buf, format); err != nil {
				t.Fatalf("%s: %v", f.Name, err)
			}
			checkImage(t, f.Name, format, buf.Bytes())
		}
	}
	if err := figs[0].Render(&bytes.Buffer{}, "gif"); err == nil {
		t.Error("unknown format accepted")
	}
}

// TestMonthPosition: days fill their month's slot of the month axis
// without overlap or gap (calendar arithmetic, including a leap February).
func TestMonthPosition(t *testing.T) {
	for _, tc := range []struct {
		d      time.Time
		x0, x1 float64
	}{
		{time.Date(2016, 1, 1, 0, 0, 0, 0, time.UTC), 0.5, 0.5 + 1.0/31},
		{time.Date(2016, 2, 29, 0, 0, 0, 0, time.UTC), 2.5 - 1.0/29, 2.5},
		{time.Date(2015, 2, 28, 0, 0, 0, 0, time.UTC), 2.5 - 1.0/28, 2.5},
		{time.Date(2016, 12, 31, 0, 0, 0, 0, time.UTC), 12.5 - 1.0/31, 12.5},
	} {
		x0, x1 := monthPosition(tc.d)
		if math.Abs(x0-tc.x0) > 1e-12 || math.Abs(x1-tc.x1) > 1e-12 {
			t.Errorf("%s: %g..%g, want %g..%g", tc.d.Format("2006-01-02"), x0, x1, tc.x0, tc.x1)
		}
	}
}

// TestMarksLevels: levels are marked when their median spacing reaches
// 50 m (significant levels of a TEMP or archive sounding are tens to
// hundreds of metres apart; a 1-2 s high-resolution record, rising about
// 5 m/s, is 5-10 m apart: common practice, no source), counted up to top.
func TestMarksLevels(t *testing.T) {
	pts := func(step float64, n int) plotter.XYs {
		var p plotter.XYs
		for i := 0; i < n; i++ {
			p = append(p, plotter.XY{X: 280, Y: float64(i) * step})
		}
		return p
	}
	for _, c := range []struct {
		name string
		pts  plotter.XYs
		top  float64
		want bool
	}{
		{"1-2 s record, 8 m apart", pts(8, 500), 3000, false},
		{"significant levels, 120 m apart", pts(120, 20), 3000, true},
		{"exactly 50 m", pts(50, 40), 3000, true},
		{"one level", pts(8, 1), 3000, true},
		{"none", nil, 3000, true},
		// Coarse above top does not count: 8 m apart up to 400 m, then 500 m.
		{"fine below top", append(pts(8, 50), plotter.XY{X: 1, Y: 900}, plotter.XY{X: 1, Y: 1400}, plotter.XY{X: 1, Y: 1900}), 400, false},
	} {
		if got := MarksLevels(c.pts, c.top); got != c.want {
			t.Errorf("%s: MarksLevels = %v, want %v", c.name, got, c.want)
		}
	}
}

// TestWriteFiles renders the scaffold's figures several at once: the
// paths come back in figure and format order, every file decodes, and an
// unknown format writes nothing. (Run with -race to check that figures
// render concurrently without sharing state.)
func TestWriteFiles(t *testing.T) {
	ctx := context.Background()
	db := scaffold(t)
	st, _ := FindStation(ctx, db, "XFIG1")
	data, err := LoadStationData(ctx, db, []Station{st, st}, "", false)
	if err != nil {
		t.Fatal(err)
	}
	var figs []*Figure
	for _, d := range data {
		figs = append(figs, d.Figures()...)
	}
	dir := t.TempDir()
	paths, err := WriteFiles(ctx, figs[:4], Formats, dir, 4)
	if err != nil {
		t.Fatal(err)
	}
	if len(paths) != 8 {
		t.Fatalf("%d paths, want 8", len(paths))
	}
	for i, p := range paths {
		want := filepath.Join(dir, figs[i/2].Name+"."+Formats[i%2])
		if p != want {
			t.Errorf("path %d = %s, want %s", i, p, want)
		}
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		checkImage(t, p, Formats[i%2], b)
	}
	if _, err := WriteFiles(ctx, figs, []string{"gif"}, t.TempDir(), 2); err == nil {
		t.Error("unknown format accepted")
	}
}
