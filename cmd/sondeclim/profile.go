package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/sondeclim/sondeclim/engine"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/queries"
	"github.com/sondeclim/sondeclim/queries/figures"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/sounding"
)

func init() {
	register("profile", "show one sounding: levels with derived values and QC flags, layers, mixing heights", func(e env) command { return &profileCmd{env: e} })
}

// profileCmd prints one sounding from a store or from sounding files.
type profileCmd struct {
	env
}

func (c *profileCmd) Run(ctx context.Context, args []string) error {
	fs := newFlags("profile", "(--store DIR --station ID --time TIME | --file PATH [--station ID] [--time TIME]) [--format text|json] [--figure FILE]", `
Show one sounding: its identity and status, the mixing height by every
method with its status, the ventilation index, the inversion layers with
their class, the well-mixed layers, and every level with the derived
potential temperature and mixing ratio and the flags of quality control.

The sounding is the one whose launch or nominal time is nearest to --time
(UTC) within --within. With --file the sounding files are read through the
same readers and analysis as "sondeclim ingest" (in memory, without a
store), so the values are identical to those a store would hold; --station and --time
may be left out when the file holds one station or one sounding.

Level flags: "z derived" is a height filled by hypsometric integration;
"T removed_upstream" a value the archive's own QC removed; "T suspect",
"T bad", "T corrected" are this program's QC flags (p, z, T, Td, wind).`,
		`  sondeclim profile --store ./store --station USM00072403 --time 2016-07-01T12
  sondeclim profile --store ./store --station USM00072403 --time 2016-07-01T00 --format json > sounding.json
  sondeclim profile --file USM00072403-data.txt.zip --time 2016-07-01T12 --figure sounding.png`,
		c.stderr)
	store := fs.String("store", "", "store `directory` written by sondeclim ingest")
	file := fs.String("file", "", "sounding `file` to read directly (any input format ingest reads)")
	station := fs.String("station", "", "station `id`")
	at := fs.String("time", "", "UTC `time` of the sounding: 2016-07-01T12, 2016-07-01T11:03 or RFC 3339")
	within := fs.Duration("within", 3*time.Hour, "largest distance between --time and the launch or nominal `time`")
	format := fs.String("format", "text", "output `format`: text or json")
	figure := fs.String("figure", "", "also draw the sounding to `FILE` (.png or .svg)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if fs.NArg() > 0 {
		return fmt.Errorf("profile: unexpected argument %q (use --file PATH): %w", fs.Arg(0), errUsage)
	}
	if (*store == "") == (*file == "") {
		return fmt.Errorf("profile: give exactly one of --store and --file: %w", errUsage)
	}
	if *format != "text" && *format != "json" {
		return fmt.Errorf("profile: unknown --format %q (text or json): %w", *format, errUsage)
	}
	figFormat := ""
	if *figure != "" {
		figFormat = strings.TrimPrefix(strings.ToLower(filepath.Ext(*figure)), ".")
		if figFormat != "png" && figFormat != "svg" {
			return fmt.Errorf("profile: --figure %s: name must end in .png or .svg: %w", *figure, errUsage)
		}
	}
	var when time.Time
	if *at != "" {
		t, err := parseUTC(*at)
		if err != nil {
			return fmt.Errorf("profile: --time: %v: %w", err, errUsage)
		}
		when = t
	} else if *store != "" {
		return fmt.Errorf("profile: --time is required with --store: %w", errUsage)
	}
	if *store != "" && *station == "" {
		return fmt.Errorf("profile: --station is required with --store: %w", errUsage)
	}

	var p *figures.Profile
	skipped := false
	if *file != "" {
		rs, sum, err := engine.Analyse(ctx, []string{*file}, engine.Options{Workers: 1})
		if err != nil {
			return fmt.Errorf("profile: %w", err)
		}
		for _, s := range sum.Skipped {
			fmt.Fprintf(c.stderr, "%s: %s\n", s.Where, s.Detail)
		}
		skipped = len(sum.Skipped) > 0
		if sum.Soundings == 0 {
			return fmt.Errorf("profile: %s holds no sounding that could be read", *file)
		}
		if *station == "" || *at == "" {
			if err := pickOnly(rs.Soundings, *file, station, &when, within); err != nil {
				return err
			}
		}
		if p, err = figures.ProfileFromRows(rs, *station, when, *within); err != nil {
			return fmt.Errorf("profile: %w", err)
		}
	} else {
		db, err := queries.Open(ctx, *store)
		if err != nil {
			return fmt.Errorf("profile: %w", err)
		}
		defer db.Close()
		if p, err = figures.LoadProfile(ctx, db, *station, when, *within); err != nil {
			return fmt.Errorf("profile: %w", err)
		}
	}
	var err error
	if *format == "json" {
		err = writeProfileJSON(c.stdout, p)
	} else {
		err = writeProfileText(c.stdout, p)
	}
	if err != nil {
		return err
	}
	if *figure != "" {
		if err := writeFigure(*figure, figures.ProfileFigure(p), figFormat); err != nil {
			return fmt.Errorf("profile: %w", err)
		}
	}
	if skipped {
		return errSkipped
	}
	return nil
}

// pickOnly fills in the station and time when the file's soundings are
// of a single station or are a single sounding, and explains the choice
// otherwise.
func pickOnly(rows []schema.SoundingRow, file string, station *string, when *time.Time, within *time.Duration) error {
	stations := map[string]int{}
	for _, r := range rows {
		if *station == "" || r.StationID == *station {
			stations[r.StationID]++
		}
	}
	if *station == "" {
		if len(stations) != 1 {
			var ids []string
			for id := range stations {
				ids = append(ids, id)
			}
			sort.Strings(ids)
			return fmt.Errorf("profile: %s holds %d stations (%s); choose one with --station: %w", file, len(ids), strings.Join(ids, ", "), errUsage)
		}
		for id := range stations {
			*station = id
		}
	}
	if when.IsZero() {
		n := stations[*station]
		if n != 1 {
			return fmt.Errorf("profile: %s holds %d soundings of %s; choose one with --time: %w", file, n, *station, errUsage)
		}
		for _, r := range rows {
			if r.StationID == *station {
				*when, *within = r.LaunchTime.UTC(), 0
			}
		}
	}
	return nil
}

// parseUTC reads a UTC time written as 2016-07-01T12, 2016-07-01T12:30,
// 2016-07-01T12:30:00, 2016-07-01 12:30, 2016-07-01, or RFC 3339.
func parseUTC(s string) (time.Time, error) {
	for _, layout := range []string{time.RFC3339, "2006-01-02T15:04:05", "2006-01-02T15:04", "2006-01-02T15", "2006-01-02 15:04", "2006-01-02"} {
		if t, err := time.ParseInLocation(layout, strings.TrimSuffix(s, "Z"), time.UTC); err == nil {
			return t.UTC(), nil
		}
		if t, err := time.Parse(layout, s); err == nil {
			return t.UTC(), nil
		}
	}
	return time.Time{}, fmt.Errorf("cannot read %q as a UTC time (e.g. 2016-07-01T12 or 2016-07-01T11:03)", s)
}

// num formats v with the given decimals, or "-" when v is NaN.
func num(v float64, decimals int) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "-"
	}
	s := fmt.Sprintf("%.*f", decimals, v)
	if s == "-0" || strings.HasPrefix(s, "-0.") && strings.Trim(s, "-0.") == "" {
		s = s[1:]
	}
	return s
}

func dash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

// levelFlags lists what is notable about a level's values: derived or
// upstream-removed values and QC flags other than good and missing.
func levelFlags(l figures.Level) string {
	var f []string
	if l.HeightDerived {
		f = append(f, "z derived")
	}
	for _, s := range []struct{ v, status string }{{"T", l.TemperatureStatus}, {"Td", l.HumidityStatus}} {
		if s.status == sounding.RemovedUpstream.String() || s.status == sounding.Derived.String() {
			f = append(f, s.v+" "+s.status)
		}
	}
	if l.HeightStatus == sounding.RemovedUpstream.String() {
		f = append(f, "z "+l.HeightStatus)
	}
	for _, q := range []struct{ v, flag string }{{"p", l.PressureQC}, {"z", l.HeightQC}, {"T", l.TemperatureQC}, {"Td", l.HumidityQC}, {"wind", l.WindQC}} {
		if q.flag != "" && q.flag != qc.Good.String() && q.flag != qc.Missing.String() {
			f = append(f, q.v+" "+q.flag)
		}
	}
	return strings.Join(f, ", ")
}

// surfaceNote says when the surface pressure was derived rather than
// reported, and from how far up the profile starts.
func surfaceNote(p *figures.Profile) string {
	if !p.SurfacePressureDerived {
		return ""
	}
	return fmt.Sprintf(" (derived: the surface line has no pressure; hypsometric from the station elevation and the lowest level, %s m above ground)", num(p.LowestLevelAGLM, 0))
}

// writeProfileText prints a sounding for people.
func writeProfileText(w io.Writer, p *figures.Profile) error {
	var b strings.Builder
	name := p.StationID
	if p.StationName != "" {
		name += " " + p.StationName
	}
	fmt.Fprintf(&b, "Sounding of %s\n\n", name)
	tw := tabwriter.NewWriter(&b, 0, 8, 2, ' ', 0)
	fmt.Fprintf(tw, "  launch\t%s UTC (nominal %s, %02d UTC)\n", p.LaunchTime.UTC().Format("2006-01-02 15:04"), p.NominalTime.UTC().Format("2006-01-02"), p.NominalHour)
	fmt.Fprintf(tw, "  position\t%s, %s, %s m above sea level\n", hemi(p.LatitudeDeg, "N", "S"), hemi(p.LongitudeDeg, "E", "W"), num(p.ElevationM, 0))
	fmt.Fprintf(tw, "  source\t%s:%d (%s), %d levels\n", p.SourceFile, p.SourceLine, p.SourceFormat, p.LevelCount)
	fmt.Fprintf(tw, "  status\tquality control %s; analysis %s\n", dash(p.QCStatus), dash(p.AnalysisStatus))
	fmt.Fprintf(tw, "  sun\t%s (elevation %s deg); Liu-Liang regime %s\n", dash(p.SunClass), num(p.SunElevation, 1), dash(p.Regime))
	fmt.Fprintf(tw, "  regime\t%s (chooses the consensus methods); residual-layer top %s m\n", dash(p.BLRegime), num(p.ResidualTopAGLM, 0))
	fmt.Fprintf(tw, "  surface\t%s hPa%s, T %s degC, Td %s degC, theta %s K\n", num(p.SurfacePressureHPa, 1), surfaceNote(p),
		num(p.SurfaceTemperatureC, 1), num(p.SurfaceDewpointC, 1), num(p.SurfaceThetaK, 2))
	tw.Flush()

	b.WriteString("\nMixing height (m above ground)\n")
	tw = tabwriter.NewWriter(&b, 0, 8, 2, ' ', 0)
	fmt.Fprintln(tw, "  method\theight_m\tstatus\tlevel_spacing_m\tunresolved\tnote")
	for _, h := range p.Heights {
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%t\t%s\n", h.Method, num(h.HeightAGLM, 0), h.Status, num(h.LevelSpacingM, 0), h.Unresolved, dash(h.Note))
	}
	fmt.Fprintf(tw, "  %s\t%s\t%s\t-\t%t\tmedian of the %d methods fitting the regime with status ok, spread %s m\n", figures.Consensus, num(p.Consensus.HeightAGLM, 0),
		dash(p.Consensus.Status), p.Unresolved, p.MethodsOK, num(p.SpreadM, 0))
	tw.Flush()

	fmt.Fprintf(&b, "\nVentilation: transport wind %s m/s (%s) x mixing height (%s) = %s m2/s = %s kt ft; category %s (table %s)\n",
		num(p.TransportWindMS, 1), dash(p.TransportWindMethod), dash(p.VentilationHeightMethod),
		num(p.VentilationM2S, 0), num(p.VentilationKtFt, 0), dash(p.VentilationCategory), dash(p.VentilationTable))

	fmt.Fprintf(&b, "\nInversions (%d)\n", len(p.Inversions))
	if len(p.Inversions) > 0 {
		tw = tabwriter.NewWriter(&b, 0, 8, 2, ' ', 0)
		fmt.Fprintln(tw, "  #\tbase_m\ttop_m\tbase_hpa\ttop_hpa\tdepth_m\tstrength_k\tgradient_k_per_km\tkind\tclass")
		for _, v := range p.Inversions {
			kind := "elevated"
			if v.SurfaceBased {
				kind = "surface-based"
			}
			if v.TopAtCeiling {
				kind += ", top at ceiling"
			}
			fmt.Fprintf(tw, "  %d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", v.Index, num(v.BaseAGLM, 0), num(v.TopAGLM, 0),
				num(v.BasePressureHPa, 1), num(v.TopPressureHPa, 1), num(v.DepthM, 0), num(v.StrengthK, 1), num(v.GradientKPerKm, 2), kind, v.Class)
		}
		tw.Flush()
	}

	fmt.Fprintf(&b, "\nWell-mixed layers (%d; theta and w are mass-weighted means)\n", len(p.MixedLayers))
	if len(p.MixedLayers) > 0 {
		tw = tabwriter.NewWriter(&b, 0, 8, 2, ' ', 0)
		fmt.Fprintln(tw, "  #\tbase_m\ttop_m\tbase_hpa\ttop_hpa\ttheta_k\tw_gkg\tlevels")
		for _, m := range p.MixedLayers {
			fmt.Fprintf(tw, "  %d\t%s\t%s\t%s\t%s\t%s\t%s\t%d\n", m.Index, num(m.BaseAGLM, 0), num(m.TopAGLM, 0),
				num(m.BasePressureHPa, 1), num(m.TopPressureHPa, 1), num(m.ThetaK, 2), num(m.MixingRatioGKg, 2), m.Levels)
		}
		tw.Flush()
	}

	fmt.Fprintf(&b, "\nLevels (%d)\n", len(p.Levels))
	tw = tabwriter.NewWriter(&b, 0, 8, 2, ' ', 0)
	fmt.Fprintln(tw, "  #\tkind\tp_hpa\tz_agl_m\tT_c\tTd_c\ttheta_k\tw_gkg\twdir_deg\twspd_ms\tflags")
	for _, l := range p.Levels {
		fmt.Fprintf(tw, "  %d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", l.Index, l.Kind, num(l.PressureHPa, 1), num(l.HeightAGLM, 0),
			num(l.TemperatureC, 1), num(l.DewpointC, 1), num(l.ThetaK, 2), num(l.MixingRatioGKg, 2),
			num(l.WindDirDeg, 0), num(l.WindSpeedMS, 1), dash(levelFlags(l)))
	}
	tw.Flush()
	fmt.Fprintf(&b, "\nHeights in m above ground; theta = potential temperature, w = water-vapour mixing ratio.\n%s\n", caution)
	_, err := io.WriteString(w, b.String())
	return err
}

// writeProfileJSON writes the sounding as one JSON object; missing values
// (NaN) are null.
func writeProfileJSON(w io.Writer, p *figures.Profile) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(jsonValue(reflect.ValueOf(p)))
}

// jsonValue converts v for encoding/json: structs become objects keyed by
// their json tags, NaN and infinite floats become null, times RFC 3339.
func jsonValue(v reflect.Value) any {
	switch v.Kind() {
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return nil
		}
		return jsonValue(v.Elem())
	case reflect.Float32, reflect.Float64:
		f := v.Float()
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return nil
		}
		return f
	case reflect.Slice:
		out := make([]any, v.Len())
		for i := range out {
			out[i] = jsonValue(v.Index(i))
		}
		return out
	case reflect.Struct:
		if t, ok := v.Interface().(time.Time); ok {
			return t.UTC().Format(time.RFC3339)
		}
		out := map[string]any{}
		for i := 0; i < v.NumField(); i++ {
			f := v.Type().Field(i)
			if !f.IsExported() {
				continue
			}
			name := strings.Split(f.Tag.Get("json"), ",")[0]
			if name == "" {
				name = f.Name
			}
			out[name] = jsonValue(v.Field(i))
		}
		return out
	}
	return v.Interface()
}

// writeFigure renders f to path in format ("png" or "svg").
func writeFigure(path string, f *figures.Figure, format string) error {
	out, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := f.Render(out, format); err != nil {
		out.Close()
		return err
	}
	return out.Close()
}

// hemi formats a latitude or longitude in degrees with its hemisphere
// letter (4 decimals), or "-" when unknown.
func hemi(deg float64, pos, neg string) string {
	switch {
	case math.IsNaN(deg):
		return "-"
	case deg < 0:
		return num(-deg, 4) + " " + neg
	}
	return num(deg, 4) + " " + pos
}
