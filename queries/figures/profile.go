package figures

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"image/color"
	"math"
	"sort"
	"strings"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/queries"
)

// Level is one level of a sounding as stored in the levels table. Missing
// values are NaN.
type Level struct {
	Index          int     `json:"level_index"`
	Kind           string  `json:"level_kind"`
	PressureHPa    float64 `json:"pressure_hpa"`
	HeightM        float64 `json:"height_m"` // gpm above mean sea level
	HeightDerived  bool    `json:"height_derived"`
	HeightAGLM     float64 `json:"height_agl_m"`
	TemperatureC   float64 `json:"temperature_c"`
	DewpointC      float64 `json:"dewpoint_c"`
	ThetaK         float64 `json:"theta_k"`
	MixingRatioGKg float64 `json:"mixing_ratio_gkg"`
	WindDirDeg     float64 `json:"wind_direction_deg"`
	WindSpeedMS    float64 `json:"wind_speed_ms"`

	TemperatureStatus string `json:"temperature_status"`
	HeightStatus      string `json:"height_status"`
	HumidityStatus    string `json:"humidity_status"`
	PressureQC        string `json:"pressure_qc"`
	HeightQC          string `json:"height_qc"`
	TemperatureQC     string `json:"temperature_qc"`
	HumidityQC        string `json:"humidity_qc"`
	WindQC            string `json:"wind_qc"`
}

// Inversion is one temperature inversion layer of a sounding.
type Inversion struct {
	Index           int     `json:"inversion_index"`
	SurfaceBased    bool    `json:"surface_based"`
	BaseAGLM        float64 `json:"base_agl_m"`
	TopAGLM         float64 `json:"top_agl_m"`
	BasePressureHPa float64 `json:"base_pressure_hpa"`
	TopPressureHPa  float64 `json:"top_pressure_hpa"`
	DepthM          float64 `json:"depth_m"`
	StrengthK       float64 `json:"strength_k"`
	GradientKPerKm  float64 `json:"gradient_k_per_km"`
	TopAtCeiling    bool    `json:"top_at_ceiling"`
	Class           string  `json:"class"`
}

// MixedLayer is one well-mixed layer of a sounding, with its mass-weighted
// mean potential temperature and mixing ratio.
type MixedLayer struct {
	Index           int     `json:"layer_index"`
	BaseAGLM        float64 `json:"base_agl_m"`
	TopAGLM         float64 `json:"top_agl_m"`
	BasePressureHPa float64 `json:"base_pressure_hpa"`
	TopPressureHPa  float64 `json:"top_pressure_hpa"`
	ThetaK          float64 `json:"theta_k"`
	MixingRatioGKg  float64 `json:"mixing_ratio_gkg"`
	Levels          int     `json:"levels"`
}

// MethodHeight is the mixing height of one method.
type MethodHeight struct {
	Method        string  `json:"method"`
	HeightAGLM    float64 `json:"height_agl_m"` // 0 for status surface, NaN for undefined
	Status        string  `json:"status"`       // ok, surface or undefined
	Note          string  `json:"note"`
	LevelSpacingM float64 `json:"level_spacing_m"`
	Unresolved    bool    `json:"unresolved"`
}

// Profile is one sounding with its levels and every derived layer and
// height, as the store holds them. Missing values are NaN.
type Profile struct {
	StationID      string    `json:"station_id"`
	StationName    string    `json:"station_name"`
	LaunchTime     time.Time `json:"launch_time"`
	NominalTime    time.Time `json:"nominal_time"`
	NominalHour    int       `json:"nominal_hour"`
	LatitudeDeg    float64   `json:"latitude_deg"`
	LongitudeDeg   float64   `json:"longitude_deg"`
	ElevationM     float64   `json:"elevation_m"`
	SourceFile     string    `json:"source_file"`
	SourceLine     int64     `json:"source_line"`
	SourceFormat   string    `json:"source_format"`
	LevelCount     int       `json:"level_count"`
	QCStatus       string    `json:"qc_status"`
	AnalysisStatus string    `json:"analysis_status"`
	SunClass       string    `json:"sun_class"`
	SunElevation   float64   `json:"sun_elevation_deg"`
	Regime         string    `json:"liu_liang_regime"`
	// BLRegime is the boundary-layer regime that chose the consensus
	// methods (stable, convective, neutral; "" when unknown).
	BLRegime string `json:"bl_regime"`

	SurfacePressureHPa float64 `json:"surface_pressure_hpa"`
	// SurfacePressureDerived is true when the ground pressure was derived
	// hypsometrically from the station elevation and the lowest level
	// (LowestLevelAGLM above ground), the surface line carrying none.
	SurfacePressureDerived bool    `json:"surface_pressure_derived"`
	LowestLevelAGLM        float64 `json:"lowest_level_agl_m"`
	SurfaceTemperatureC    float64 `json:"surface_temperature_c"`
	SurfaceDewpointC       float64 `json:"surface_dewpoint_c"`
	SurfaceThetaK          float64 `json:"surface_theta_k"`
	// ResidualTopAGLM is the residual-layer top (stable and neutral
	// regimes), m above ground; NaN when none.
	ResidualTopAGLM float64 `json:"residual_layer_top_agl_m"`

	// Consensus is the median of the methods whose status is ok (Method
	// is "consensus").
	Consensus  MethodHeight `json:"consensus"`
	SpreadM    float64      `json:"mixing_height_spread_m"`
	MethodsOK  int          `json:"mixing_height_methods_ok"`
	Unresolved bool         `json:"mixing_height_unresolved"`

	TransportWindMS         float64 `json:"transport_wind_ms"`
	TransportWindMethod     string  `json:"transport_wind_method"`
	VentilationM2S          float64 `json:"ventilation_index_m2s"`
	VentilationKtFt         float64 `json:"ventilation_index_ktft"`
	VentilationCategory     string  `json:"ventilation_category"`
	VentilationTable        string  `json:"ventilation_table"`
	VentilationHeightMethod string  `json:"ventilation_height_method"`

	Levels      []Level        `json:"levels"`
	Inversions  []Inversion    `json:"inversions"`
	MixedLayers []MixedLayer   `json:"mixed_layers"`
	Heights     []MethodHeight `json:"mixing_heights"`
}

// ErrNoSounding is returned (wrapped) by LoadProfile when no sounding of
// the station lies within the window.
var ErrNoSounding = errors.New("no sounding")

// LoadProfile reads the sounding of station whose launch or nominal time
// is nearest to at, no more than within away (within 0 asks for an exact
// match), with its levels, inversions, mixed layers and mixing heights.
// Ties go to the earlier launch. When none qualifies the error wraps
// ErrNoSounding.
func LoadProfile(ctx context.Context, db *sql.DB, station string, at time.Time, within time.Duration) (*Profile, error) {
	q, err := statement("profile_pick.sql")
	if err != nil {
		return nil, err
	}
	var launch time.Time
	err = db.QueryRowContext(ctx, q, station, at.UTC(), within.Seconds()).Scan(&launch)
	if errors.Is(err, sql.ErrNoRows) {
		return nil, fmt.Errorf("%w of station %s within %v of %s", ErrNoSounding, station, within, at.UTC().Format(time.RFC3339))
	}
	if err != nil {
		return nil, fmt.Errorf("find sounding of %s: %w", station, err)
	}
	p := &Profile{}
	steps := []struct {
		file string
		read func(*sql.Rows) error
	}{
		{"profile_sounding.sql", p.scanSounding},
		{"profile_levels.sql", p.scanLevel},
		{"profile_inversions.sql", p.scanInversion},
		{"profile_mixed_layers.sql", p.scanMixedLayer},
		{"profile_heights.sql", p.scanHeight},
	}
	for _, s := range steps {
		if err := readRows(ctx, db, s.file, []any{station, launch.UTC()}, s.read); err != nil {
			return nil, fmt.Errorf("sounding %s %s: %w", station, launch.UTC().Format(time.RFC3339), err)
		}
	}
	if p.StationID == "" {
		return nil, fmt.Errorf("sounding %s %s: %w in the soundings table", station, launch.UTC().Format(time.RFC3339), ErrNoSounding)
	}
	return p, nil
}

func readRows(ctx context.Context, db *sql.DB, file string, args []any, read func(*sql.Rows) error) error {
	q, err := statement(file)
	if err != nil {
		return err
	}
	rows, err := db.QueryContext(ctx, q, args...)
	if err != nil {
		return err
	}
	defer rows.Close()
	for rows.Next() {
		if err := read(rows); err != nil {
			return err
		}
	}
	return rows.Err()
}

func (p *Profile) scanSounding(rows *sql.Rows) error {
	var sc queries.Scanner
	var line int
	sc.Str("station_id", &p.StationID)
	sc.Str("station_name", &p.StationName)
	sc.Time("launch_time", &p.LaunchTime)
	sc.Time("nominal_time", &p.NominalTime)
	sc.Int("nominal_hour", &p.NominalHour)
	sc.Float("latitude_deg", &p.LatitudeDeg)
	sc.Float("longitude_deg", &p.LongitudeDeg)
	sc.Float("elevation_m", &p.ElevationM)
	sc.Str("source_file", &p.SourceFile)
	sc.Int("source_line", &line)
	sc.Str("source_format", &p.SourceFormat)
	sc.Int("level_count", &p.LevelCount)
	sc.Str("qc_status", &p.QCStatus)
	sc.Str("analysis_status", &p.AnalysisStatus)
	sc.Str("sun_class", &p.SunClass)
	sc.Float("sun_elevation_deg", &p.SunElevation)
	sc.Str("liu_liang_regime", &p.Regime)
	sc.Str("bl_regime", &p.BLRegime)
	sc.Float("surface_pressure_hpa", &p.SurfacePressureHPa)
	sc.Bool("surface_pressure_derived", &p.SurfacePressureDerived)
	sc.Float("lowest_level_agl_m", &p.LowestLevelAGLM)
	sc.Float("surface_temperature_c", &p.SurfaceTemperatureC)
	sc.Float("surface_dewpoint_c", &p.SurfaceDewpointC)
	sc.Float("surface_theta_k", &p.SurfaceThetaK)
	sc.Float("residual_layer_top_agl_m", &p.ResidualTopAGLM)
	sc.Float("mixing_height_consensus_m", &p.Consensus.HeightAGLM)
	sc.Str("mixing_height_consensus_status", &p.Consensus.Status)
	sc.Float("mixing_height_spread_m", &p.SpreadM)
	sc.Int("mixing_height_methods_ok", &p.MethodsOK)
	sc.Bool("mixing_height_unresolved", &p.Unresolved)
	sc.Float("transport_wind_ms", &p.TransportWindMS)
	sc.Str("transport_wind_method", &p.TransportWindMethod)
	sc.Float("ventilation_index_m2s", &p.VentilationM2S)
	sc.Float("ventilation_index_ktft", &p.VentilationKtFt)
	sc.Str("ventilation_category", &p.VentilationCategory)
	sc.Str("ventilation_table", &p.VentilationTable)
	sc.Str("ventilation_height_method", &p.VentilationHeightMethod)
	if err := sc.Scan(rows); err != nil {
		return err
	}
	p.SourceLine = int64(line)
	p.Consensus.Method = Consensus
	p.Consensus.LevelSpacingM = math.NaN()
	p.Consensus.Unresolved = p.Unresolved
	return nil
}

func (p *Profile) scanLevel(rows *sql.Rows) error {
	var l Level
	var sc queries.Scanner
	sc.Int("level_index", &l.Index)
	sc.Str("level_kind", &l.Kind)
	sc.Float("pressure_hpa", &l.PressureHPa)
	sc.Float("height_m", &l.HeightM)
	sc.Bool("height_derived", &l.HeightDerived)
	sc.Float("height_agl_m", &l.HeightAGLM)
	sc.Float("temperature_c", &l.TemperatureC)
	sc.Float("dewpoint_c", &l.DewpointC)
	sc.Float("theta_k", &l.ThetaK)
	sc.Float("mixing_ratio_gkg", &l.MixingRatioGKg)
	sc.Float("wind_direction_deg", &l.WindDirDeg)
	sc.Float("wind_speed_ms", &l.WindSpeedMS)
	sc.Str("temperature_status", &l.TemperatureStatus)
	sc.Str("height_status", &l.HeightStatus)
	sc.Str("humidity_status", &l.HumidityStatus)
	sc.Str("pressure_qc", &l.PressureQC)
	sc.Str("height_qc", &l.HeightQC)
	sc.Str("temperature_qc", &l.TemperatureQC)
	sc.Str("humidity_qc", &l.HumidityQC)
	sc.Str("wind_qc", &l.WindQC)
	if err := sc.Scan(rows); err != nil {
		return err
	}
	p.Levels = append(p.Levels, l)
	return nil
}

func (p *Profile) scanInversion(rows *sql.Rows) error {
	var v Inversion
	var sc queries.Scanner
	sc.Int("inversion_index", &v.Index)
	sc.Bool("surface_based", &v.SurfaceBased)
	sc.Float("base_agl_m", &v.BaseAGLM)
	sc.Float("top_agl_m", &v.TopAGLM)
	sc.Float("base_pressure_hpa", &v.BasePressureHPa)
	sc.Float("top_pressure_hpa", &v.TopPressureHPa)
	sc.Float("depth_m", &v.DepthM)
	sc.Float("strength_k", &v.StrengthK)
	sc.Float("gradient_k_per_km", &v.GradientKPerKm)
	sc.Bool("top_at_ceiling", &v.TopAtCeiling)
	sc.Str("class", &v.Class)
	if err := sc.Scan(rows); err != nil {
		return err
	}
	p.Inversions = append(p.Inversions, v)
	return nil
}

func (p *Profile) scanMixedLayer(rows *sql.Rows) error {
	var m MixedLayer
	var sc queries.Scanner
	sc.Int("layer_index", &m.Index)
	sc.Float("base_agl_m", &m.BaseAGLM)
	sc.Float("top_agl_m", &m.TopAGLM)
	sc.Float("base_pressure_hpa", &m.BasePressureHPa)
	sc.Float("top_pressure_hpa", &m.TopPressureHPa)
	sc.Float("theta_k", &m.ThetaK)
	sc.Float("mixing_ratio_gkg", &m.MixingRatioGKg)
	sc.Int("levels", &m.Levels)
	if err := sc.Scan(rows); err != nil {
		return err
	}
	p.MixedLayers = append(p.MixedLayers, m)
	return nil
}

func (p *Profile) scanHeight(rows *sql.Rows) error {
	var h MethodHeight
	var sc queries.Scanner
	sc.Str("method", &h.Method)
	sc.Float("height_agl_m", &h.HeightAGLM)
	sc.Str("status", &h.Status)
	sc.Str("note", &h.Note)
	sc.Float("level_spacing_m", &h.LevelSpacingM)
	sc.Bool("unresolved", &h.Unresolved)
	if err := sc.Scan(rows); err != nil {
		return err
	}
	p.Heights = append(p.Heights, h)
	return nil
}

// Band kinds of Shading.
const (
	BandSurfaceInversion  = "surface-based inversion"
	BandElevatedInversion = "elevated inversion"
	BandMixedLayer        = "well-mixed layer"
)

// Band is a layer of a sounding shaded in the single-sounding figure,
// between two heights in m above ground.
type Band struct {
	Kind              string // BandSurfaceInversion, BandElevatedInversion or BandMixedLayer
	BaseAGLM, TopAGLM float64
}

// Shading returns the layers the single-sounding figure shades: every
// inversion (surface-based or elevated) and every well-mixed layer of p,
// inversions first, each list lowest first. Layers with a NaN base or top,
// or with the top not above the base, are left out.
func Shading(p *Profile) []Band {
	var out []Band
	ok := func(b, t float64) bool { return !math.IsNaN(b) && !math.IsNaN(t) && t > b }
	for _, v := range p.Inversions {
		if !ok(v.BaseAGLM, v.TopAGLM) {
			continue
		}
		kind := BandElevatedInversion
		if v.SurfaceBased {
			kind = BandSurfaceInversion
		}
		out = append(out, Band{Kind: kind, BaseAGLM: v.BaseAGLM, TopAGLM: v.TopAGLM})
	}
	for _, m := range p.MixedLayers {
		if ok(m.BaseAGLM, m.TopAGLM) {
			out = append(out, Band{Kind: BandMixedLayer, BaseAGLM: m.BaseAGLM, TopAGLM: m.TopAGLM})
		}
	}
	return out
}

// bandFill returns the shading colour of a band kind.
func bandFill(kind string) color.Color {
	switch kind {
	case BandSurfaceInversion:
		return surfaceInversionFill
	case BandElevatedInversion:
		return elevatedInversionFill
	}
	return mixedLayerFill
}

// profileTop returns the upper limit of the height axis, m above ground:
// 10 % above the highest shaded layer top or defined mixing height, at
// least 2000 m, and no higher than the highest level with a height.
func profileTop(p *Profile) float64 {
	top := 0.0
	for _, b := range Shading(p) {
		top = math.Max(top, b.TopAGLM)
	}
	for _, h := range append([]MethodHeight{p.Consensus}, p.Heights...) {
		if !math.IsNaN(h.HeightAGLM) {
			top = math.Max(top, h.HeightAGLM)
		}
	}
	top = math.Max(2000, 1.1*top)
	highest := math.Inf(-1)
	for _, l := range p.Levels {
		if !math.IsNaN(l.HeightAGLM) {
			highest = math.Max(highest, l.HeightAGLM)
		}
	}
	if highest > 0 && highest < top {
		top = highest
	}
	return math.Ceil(top/100) * 100
}

// profileLine returns (value, height) points of the levels with both
// finite, sorted by height, and the value range of the points below top.
func profileLine(levels []Level, value func(Level) float64, top float64) (plotter.XYs, float64, float64) {
	var pts plotter.XYs
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, l := range levels {
		v, z := value(l), l.HeightAGLM
		if math.IsNaN(v) || math.IsNaN(z) || math.IsInf(v, 0) {
			continue
		}
		pts = append(pts, plotter.XY{X: v, Y: z})
		if z <= top {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	sort.SliceStable(pts, func(i, j int) bool { return pts[i].Y < pts[j].Y })
	if math.IsInf(lo, 1) {
		lo, hi = 0, 1
	}
	pad := math.Max(0.5, 0.06*(hi-lo))
	return pts, lo - pad, hi + pad
}

// markerSpacingM is the median level spacing, m, from which the levels of
// a profile are marked: the boundary between significant-level and
// high-resolution profiles that the inversion rule uses
// (analyze.InversionConfig.FineSpacingM, 50 m; common practice, no
// source). Below it the markers of a 1–2 s record (thousands of points)
// would merge into a thick smear, so the profile is a line only.
const markerSpacingM = 50

// MarksLevels reports whether the profile figure marks each level of pts
// ((value, height) points sorted by height, m above ground) besides the
// line through them: when the median spacing of the levels from the ground
// to top is at least markerSpacingM. A single level is always marked (it
// makes no line).
func MarksLevels(pts plotter.XYs, top float64) bool {
	var gaps []float64
	for i := 1; i < len(pts) && pts[i].Y <= top; i++ {
		if d := pts[i].Y - pts[i-1].Y; d > 0 {
			gaps = append(gaps, d)
		}
	}
	if len(gaps) == 0 {
		return true
	}
	sort.Float64s(gaps)
	return median(gaps) >= markerSpacingM
}

// methodInk gives each mixing-height method its own line colour.
var methodInk = []color.Color{
	color.RGBA{0x1b, 0x3a, 0x6b, 0xff}, color.RGBA{0x5b, 0x2a, 0x86, 0xff},
	color.RGBA{0x0f, 0x6e, 0x6e, 0xff}, color.RGBA{0xa3, 0x3b, 0x20, 0xff},
	color.RGBA{0x6b, 0x4e, 0x16, 0xff}, color.RGBA{0x2e, 0x6b, 0x25, 0xff},
	color.RGBA{0x8a, 0x2b, 0x5e, 0xff}, color.RGBA{0x44, 0x44, 0x44, 0xff},
}

// markedHeights returns the heights the figure marks: the consensus first
// (when defined), then each method whose status is ok or surface.
func markedHeights(p *Profile) []MethodHeight {
	var out []MethodHeight
	for _, h := range append([]MethodHeight{p.Consensus}, p.Heights...) {
		if analyze.MixingHeightStatus(h.Status).Defined() {
			if !math.IsNaN(h.HeightAGLM) {
				out = append(out, h)
			}
		}
	}
	return out
}

// labelPositions returns vertical positions for labels wanted at the
// sorted positions ideal, at least gap apart and none below lo: labels that
// would overlap are gathered into groups spaced gap apart and centred on
// the mean of the positions they want.
func labelPositions(ideal []float64, gap, lo float64) []float64 {
	type group struct {
		first, n int
		sum      float64
	}
	var groups []group
	bottom := func(g group) float64 { return math.Max(lo, g.sum/float64(g.n)-float64(g.n-1)*gap/2) }
	for i, y := range ideal {
		groups = append(groups, group{first: i, n: 1, sum: y})
		for len(groups) > 1 {
			a, b := groups[len(groups)-2], groups[len(groups)-1]
			if bottom(a)+float64(a.n)*gap <= bottom(b) {
				break
			}
			groups = append(groups[:len(groups)-2], group{first: a.first, n: a.n + b.n, sum: a.sum + b.sum})
		}
	}
	out := make([]float64, len(ideal))
	for _, g := range groups {
		b := bottom(g)
		for k := 0; k < g.n; k++ {
			out[g.first+k] = b + float64(k)*gap
		}
	}
	return out
}

// drawHeightLabels writes the name and height of each marked method in a
// column right of the data area dc of p, spaced so that labels of nearby
// heights do not overlap, with a thin leader from the line to its label.
func drawHeightLabels(c draw.Canvas, dc draw.Canvas, p *plot.Plot, marked []MethodHeight, colors []color.Color) {
	_, trY := p.Transforms(&dc)
	type item struct {
		at   vg.Length
		text string
		col  color.Color
	}
	items := make([]item, len(marked))
	for i, m := range marked {
		name := analyze.MethodTitle(m.Method)
		text := fmt.Sprintf("%s %.0f m", name, m.HeightAGLM)
		if analyze.MixingHeightStatus(m.Status) == analyze.MixingHeightSurface {
			text = name + ": surface"
		}
		items[i] = item{at: trY(m.HeightAGLM), text: text, col: colors[i]}
	}
	sort.SliceStable(items, func(i, j int) bool { return items[i].at < items[j].at })
	ideal := make([]float64, len(items))
	for i, it := range items {
		ideal[i] = float64(it.at)
	}
	ys := labelPositions(ideal, float64(vg.Points(10)), float64(dc.Min.Y))
	sty := textStyle(8)
	sty.YAlign = draw.YCenter
	x0, x1 := dc.Max.X+vg.Points(2), dc.Max.X+vg.Points(16)
	for i, it := range items {
		y := vg.Length(ys[i])
		c.StrokeLine2(draw.LineStyle{Color: it.col, Width: vg.Points(0.6)}, x0, it.at, x1, y)
		sty.Color = it.col
		c.FillText(sty, vg.Point{X: x1 + vg.Points(2), Y: y}, it.text)
	}
}

// intTicks is the default tick marker with labels printed as integers.
type intTicks struct{}

func (intTicks) Ticks(min, max float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(min, max)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = fmt.Sprintf("%.0f", ts[i].Value)
		}
	}
	return ts
}

// ProfileFigure draws potential temperature (K) and water-vapour mixing
// ratio (g/kg) against height above ground in two panels sharing the height
// axis. Every band of Shading is shaded across both panels (see bandFill
// for colours); each method's mixing height with status ok or surface, and
// the consensus, is a labelled horizontal line. Undefined methods are named
// under the panels.
func ProfileFigure(p *Profile) *Figure {
	top := profileTop(p)
	thetaPts, t0, t1 := profileLine(p.Levels, func(l Level) float64 { return l.ThetaK }, top)
	wPts, w0, w1 := profileLine(p.Levels, func(l Level) float64 { return l.MixingRatioGKg }, top)
	if w0 < 0 {
		w0 = 0
	}
	bands := Shading(p)
	marked := markedHeights(p)
	colors := make([]color.Color, len(marked))
	for i, m := range marked {
		colors[i] = methodInk[i%len(methodInk)]
		if m.Method == Consensus {
			colors[i] = ink
		}
	}
	panel := func(title, xlabel string, pts plotter.XYs, x0, x1 float64, lineInk color.Color) *plot.Plot {
		pl := newPlot(title, xlabel, "height above ground (m)")
		pl.Title.TextStyle.Font.Size = vg.Points(10)
		s := &shapes{}
		for _, b := range bands {
			s.Rects = append(s.Rects, rect{X0: x0, X1: x1, Y0: b.BaseAGLM, Y1: b.TopAGLM, Fill: bandFill(b.Kind)})
		}
		for i, m := range marked {
			w, dash := vg.Points(1), []vg.Length{vg.Points(5), vg.Points(3)}
			if m.Method == Consensus {
				w, dash = vg.Points(2), nil
			}
			s.Segments = append(s.Segments, segment{X0: x0, Y0: m.HeightAGLM, X1: x1, Y1: m.HeightAGLM, Color: colors[i], Width: w, Dashes: dash})
		}
		pl.Add(s)
		if len(pts) > 1 {
			if line, err := plotter.NewLine(pts); err == nil {
				line.Color, line.Width = lineInk, vg.Points(1.8)
				pl.Add(line)
			}
		}
		if len(pts) > 0 && MarksLevels(pts, top) {
			if sc, err := plotter.NewScatter(pts); err == nil {
				sc.GlyphStyle = draw.GlyphStyle{Color: lineInk, Radius: vg.Points(1.6), Shape: draw.CircleGlyph{}}
				pl.Add(sc)
			}
		}
		pl.Y.Tick.Marker = intTicks{}
		pl.X.Min, pl.X.Max = x0, x1
		pl.Y.Min, pl.Y.Max = 0, top
		return pl
	}
	left := panel("potential temperature", "potential temperature θ (K)", thetaPts, t0, t1, thetaInk)
	right := panel("water-vapour mixing ratio", "mixing ratio w (g/kg)", wPts, w0, w1, moistureInk)

	name := p.StationID
	if n := strings.TrimSpace(p.StationName); n != "" {
		name += " " + n
	}
	title := fmt.Sprintf("Sounding of %s\nlaunched %s UTC (nominal %s %02d UTC)", name,
		p.LaunchTime.UTC().Format("2006-01-02 15:04"), p.NominalTime.UTC().Format("2006-01-02"), p.NominalHour)
	var undefined []string
	for _, h := range p.Heights {
		if !analyze.MixingHeightStatus(h.Status).Defined() {
			undefined = append(undefined, analyze.MethodTitle(h.Method))
		}
	}
	caption := "Shaded: inversions (amber) and well-mixed layers (blue). Lines: mixing height by method; solid black: consensus (median of the heights of the methods that suit the sounding's regime)."
	if len(undefined) > 0 {
		caption += " Undefined: " + strings.Join(undefined, ", ") + "."
	}
	plots := [][]*plot.Plot{{left, right}}
	return &Figure{
		Name:  safeName(fmt.Sprintf("%s-%s-profile", p.StationID, p.LaunchTime.UTC().Format("20060102T1504Z"))),
		Title: strings.ReplaceAll(title, "\n", ", "),
		Width: 10 * vg.Inch, Height: 7 * vg.Inch,
		draw: func(c draw.Canvas) {
			sty := centred(textStyle(12))
			sty.YAlign = draw.YTop
			for i, line := range strings.Split(title, "\n") {
				c.FillText(sty, vg.Point{X: (c.Min.X + c.Max.X) / 2, Y: c.Max.Y - vg.Points(6) - vg.Length(i)*vg.Points(16)}, line)
			}
			// Key to the shading, top left.
			key := textStyle(8.5)
			key.YAlign = draw.YCenter
			for i, k := range []string{BandSurfaceInversion, BandElevatedInversion, BandMixedLayer} {
				y := c.Max.Y - vg.Points(10) - vg.Length(i)*vg.Points(12)
				x := c.Min.X + vg.Points(10)
				c.FillPolygon(bandFill(k), []vg.Point{{X: x, Y: y - 4}, {X: x + 16, Y: y - 4}, {X: x + 16, Y: y + 4}, {X: x, Y: y + 4}})
				c.FillText(key, vg.Point{X: x + 20, Y: y}, k)
			}
			body := draw.Crop(c, vg.Points(6), -vg.Points(150), vg.Points(18), -vg.Points(48))
			canv := plot.Align(plots, draw.Tiles{Rows: 1, Cols: 2, PadX: vg.Points(20)}, body)
			left.Draw(canv[0][0])
			right.Draw(canv[0][1])
			drawHeightLabels(c, right.DataCanvas(canv[0][1]), right, marked, colors)
			c.FillText(textStyle(8), vg.Point{X: c.Min.X + vg.Points(8), Y: c.Min.Y + vg.Points(5)}, caption)
		},
	}
}
