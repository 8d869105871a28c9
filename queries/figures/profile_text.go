package figures

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"reflect"
	"sort"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/sondeclim/sondeclim/analyze"
	"github.com/sondeclim/sondeclim/qc"
	"github.com/sondeclim/sondeclim/schema"
	"github.com/sondeclim/sondeclim/sounding"
)

// This file writes one sounding for people (WriteText) and programs
// (WriteJSON), and picks the sounding of a file that holds one station or
// one sounding (OnlySounding): what "sondeclim profile" prints.

// OnlySounding fills in what the caller left out, the station (empty) and
// the time (zero), when the soundings rows read from file are of a single
// station or are a single sounding of that station. Otherwise the error
// says how many stations or soundings file holds and which flag chooses
// one (--station, --time); it is the caller's to choose.
func OnlySounding(rows []schema.SoundingRow, file, station string, at time.Time) (string, time.Time, error) {
	stations := map[string]int{}
	for _, r := range rows {
		if station == "" || r.StationID == station {
			stations[r.StationID]++
		}
	}
	if station == "" {
		if len(stations) != 1 {
			ids := make([]string, 0, len(stations))
			for id := range stations {
				ids = append(ids, id)
			}
			sort.Strings(ids)
			return "", at, fmt.Errorf("%s holds %d stations (%s); choose one with --station", file, len(ids), strings.Join(ids, ", "))
		}
		for id := range stations {
			station = id
		}
	}
	if at.IsZero() {
		if n := stations[station]; n != 1 {
			return station, at, fmt.Errorf("%s holds %d soundings of %s; choose one with --time", file, n, station)
		}
		for _, r := range rows {
			if r.StationID == station {
				at = r.LaunchTime.UTC()
			}
		}
	}
	return station, at, nil
}

// num formats v with the given decimals, or "-" when v is NaN or
// infinite; a negative zero is written 0.
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

// methodWords names a mixing-height method in words (analyze.MethodTitle),
// or "-" when none is named.
func methodWords(name string) string {
	if name == "" {
		return "-"
	}
	return analyze.MethodTitle(name)
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

// levelFlags lists what is notable about a level's values: derived or
// upstream-removed values and QC flags other than good and missing.
func levelFlags(l Level) string {
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
func surfaceNote(p *Profile) string {
	if !p.SurfacePressureDerived {
		return ""
	}
	return fmt.Sprintf(" (derived: the surface line has no pressure; hypsometric from the station elevation and the lowest level, %s m above ground)", num(p.LowestLevelAGLM, 0))
}

// WriteText writes the sounding for people: identity, status, the mixing
// height by every method (named in words, analyze.MethodTitle) and the
// consensus, the ventilation index, the inversions, the well-mixed layers
// and every level with its derived values and flags. Missing values are
// "-".
func (p *Profile) WriteText(w io.Writer) error {
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
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%t\t%s\n", methodWords(h.Method), num(h.HeightAGLM, 0), h.Status, num(h.LevelSpacingM, 0), h.Unresolved, dash(h.Note))
	}
	fmt.Fprintf(tw, "  %s\t%s\t%s\t-\t%t\tmedian of the %d methods fitting the regime with status ok, spread %s m\n", methodWords(Consensus), num(p.Consensus.HeightAGLM, 0),
		dash(p.Consensus.Status), p.Unresolved, p.MethodsOK, num(p.SpreadM, 0))
	tw.Flush()

	fmt.Fprintf(&b, "\nVentilation: transport wind %s m/s (%s) x mixing height (%s) = %s m2/s = %s kt ft; category %s (table %s)\n",
		num(p.TransportWindMS, 1), dash(p.TransportWindMethod), methodWords(p.VentilationHeightMethod),
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
	b.WriteString("\nHeights in m above ground; theta = potential temperature, w = water-vapour mixing ratio.\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// WriteJSON writes the sounding as one JSON object keyed by the json tags
// of Profile and its parts; missing values (NaN) are null, times RFC 3339
// in UTC, methods by their code names (mixing_heights.method).
func (p *Profile) WriteJSON(w io.Writer) error {
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
