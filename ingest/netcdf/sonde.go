package netcdf

import (
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strings"
	"time"

	"github.com/sondeclim/sondeclim/ingest"
	"github.com/sondeclim/sondeclim/physics/thermo"
	"github.com/sondeclim/sondeclim/sounding"
)

// Format is the reader name recorded in sounding.Source.Format.
const Format = "netcdf-sonde"

// Mapping names the variables and attributes of a one-flight-per-file
// netCDF sounding. Each field is a variable name in the file; an empty
// name (or a variable absent from the file) leaves that quantity missing,
// except BaseTime, TimeOffset and Pressure, which are required.
//
// Units expected (and converted to SI by Read): times in s, pressure in
// hPa (a "Pa" or "kPa" units attribute is honoured), temperature and
// dewpoint in °C (a "K" units attribute is honoured), relative humidity in
// %, wind speed in m/s, wind direction in degrees true, altitude in
// geometric metres above mean sea level, latitude and longitude in degrees.
type Mapping struct {
	BaseTime      string // scalar, s since 1970-01-01T00:00:00Z
	TimeOffset    string // per record, s after BaseTime
	Pressure      string
	Temperature   string
	Dewpoint      string
	RelHumidity   string
	WindSpeed     string
	WindDirection string
	Altitude      string
	Latitude      string
	Longitude     string

	// SiteAttr and FacilityAttr are global attributes naming the site and
	// the facility; see Read for how the station id is formed.
	SiteAttr, FacilityAttr string

	// MissingValue marks a missing value in every variable, in addition to
	// each variable's own missing_value and _FillValue attributes.
	MissingValue float64

	// EarlyTopPa is the pressure (Pa) above which a flight's lowest valid
	// pressure (its top) counts as an early end, reported as a Finding.
	EarlyTopPa float64
}

// DefaultMapping returns the mapping for the layout of the US Department
// of Energy ARM "sondewnpn" high-resolution files: base_time, time_offset,
// pres (hPa), tdry (°C), dp (°C), rh (%), wspd (m/s), deg, alt (m), lat,
// lon, site_id and facility_id, with −9999 as the missing value. The early
// end threshold is 300 hPa (common practice, no source: a flight that
// stops below the upper troposphere did not reach its planned burst).
func DefaultMapping() Mapping {
	return Mapping{
		BaseTime: "base_time", TimeOffset: "time_offset",
		Pressure: "pres", Temperature: "tdry", Dewpoint: "dp", RelHumidity: "rh",
		WindSpeed: "wspd", WindDirection: "deg",
		Altitude: "alt", Latitude: "lat", Longitude: "lon",
		SiteAttr: "site_id", FacilityAttr: "facility_id",
		MissingValue: -9999,
		EarlyTopPa:   300e2,
	}
}

// Reasons given in a Finding.
var (
	// ErrNoTemperature: no valid temperature after the first record.
	ErrNoTemperature = errors.New("no valid temperature after the first record")
	// ErrEndsEarly: the lowest valid pressure is above Mapping.EarlyTopPa.
	ErrEndsEarly = errors.New("flight ends early")
)

// Finding is a note about a flight that was read but deserves attention.
// It implements error so that callers can log or count it (errors.Is with
// ErrNoTemperature or ErrEndsEarly).
type Finding struct {
	File          string
	Reason        error
	TopPressurePa float64 // lowest valid pressure of the flight (its top), Pa; NaN if none
}

func (f *Finding) Error() string {
	return fmt.Sprintf("%s: %v (top %.1f hPa)", f.File, f.Reason, f.TopPressurePa/100)
}

func (f *Finding) Unwrap() error { return f.Reason }

// r0 is the Earth radius of the USSA76 geopotential conversion, m
// (METHODS §1.6; U.S. Standard Atmosphere 1976).
const r0 = 6356766.0

// GeopotentialHeight returns the geopotential height H = r0 z/(r0 + z) in
// gpm for a geometric height z in m above mean sea level, with
// r0 = 6 356 766 m (the simple form of the U.S. Standard Atmosphere 1976).
// NaN gives NaN.
func GeopotentialHeight(z float64) float64 { return r0 * z / (r0 + z) }

// Read reads the one flight held by r (size bytes, named file in messages)
// using mapping m, and returns it with findings about it.
//
// Rules:
//   - LaunchTime = base_time + time_offset of the first record, and
//     ElapsedS = time_offset − time_offset of the first record. (In some
//     files base_time is the launch time and the first offset is 0; in
//     others base_time is midnight and the offsets count from there.)
//     LaunchTimeReported is true.
//   - NominalTime is the launch time rounded to the nearest hour
//     (time.Time.Round; a half hour rounds up), with NominalHourInferred
//     true: these files carry no synoptic hour.
//   - Every record becomes a level, KindSurface for the first and
//     KindSignificant for the others; Level.Line is the 1-based record.
//   - HeightM is the geopotential height of the altitude variable
//     (GeopotentialHeight). Its status is Reported: it is the reported
//     value in another unit. ElevationM is the first valid height,
//     LatitudeDeg/LongitudeDeg the first valid position, and each
//     record's position is kept as its displacement from that one
//     (LatDisplacementDeg, LonDisplacementDeg; NaN where the record has
//     no valid latitude and longitude).
//   - DewpointK comes from the dewpoint variable; DewpointDepressionK =
//     T − Td with status Derived.
//   - A value equal to m.MissingValue, to the variable's missing_value or
//     _FillValue attribute, or not finite, is NaN with status Missing.
//   - StationID is site + facility code: from the global attributes
//     m.SiteAttr ("sgp") and m.FacilityAttr ("C1: Lamont, Oklahoma" →
//     code "C1", name "Lamont, Oklahoma") when present; otherwise from
//     the file name's first dot-separated part, whose first three letters
//     are the site and whose trailing capital letter and digits are the
//     facility ("twpsondewnpnC3.b1.…" → "twpC3"). When neither gives a
//     site and a facility, the whole first part is the id.
//
// A flight is returned even when it has no valid temperature after its
// first record (it still carries pressure, humidity and winds); a Finding
// with ErrNoTemperature says so. A flight whose lowest valid pressure is
// above m.EarlyTopPa is returned with a Finding with ErrEndsEarly and the
// top pressure. Errors (a malformed file, a missing required variable, a
// variable whose length is not the number of records) are
// *ingest.ParseError values with Offset set for errors at a byte position.
func Read(r io.ReaderAt, size int64, file string, m Mapping) (*sounding.Sounding, []*Finding, error) {
	f, err := Open(r, size)
	if err != nil {
		return nil, nil, wrap(file, err)
	}
	d := decoder{f: f, file: file, m: m}
	s := d.sounding()
	if d.err != nil {
		return nil, nil, d.err
	}
	return s, d.findings(s), nil
}

func wrap(file string, err error) error {
	var fe *FormatError
	if errors.As(err, &fe) {
		return &ingest.ParseError{File: file, Offset: fe.Offset, Err: fe.Err}
	}
	return &ingest.ParseError{File: file, Offset: -1, Err: err}
}

type decoder struct {
	f    *File
	file string
	m    Mapping
	err  error
}

// values reads a variable with missing values replaced by NaN. An empty
// name or an absent optional variable gives nil.
func (d *decoder) values(name string, required bool, perRecord bool) []float64 {
	if d.err != nil {
		return nil
	}
	v := d.f.Var(name)
	if name == "" || v == nil {
		if required {
			d.err = &ingest.ParseError{File: d.file, Offset: -1, Err: fmt.Errorf("%w: required variable %s not found", ingest.ErrBadHeader, ingest.Quote(name))}
		}
		return nil
	}
	if perRecord && v.Len(d.f) != d.f.NumRecs {
		d.err = &ingest.ParseError{File: d.file, Offset: v.Begin, Err: fmt.Errorf("%w: variable %s has %d values for %d records", ingest.ErrBadHeader, ingest.Quote(name), v.Len(d.f), d.f.NumRecs)}
		return nil
	}
	x, err := d.f.Float64s(v)
	if err != nil {
		d.err = wrap(d.file, err)
		return nil
	}
	// A set, because a missing_value attribute may hold many values.
	miss := map[float64]bool{d.m.MissingValue: true}
	for _, an := range []string{"missing_value", "_FillValue"} {
		if a, ok := v.Attr(an); ok {
			for _, mv := range a.Values {
				miss[mv] = true
			}
		}
	}
	for i, xi := range x {
		if math.IsNaN(xi) || math.IsInf(xi, 0) || miss[xi] {
			x[i] = math.NaN()
		}
	}
	return x
}

// scale returns the factor and offset that convert a variable's units to
// SI, given the units its mapping expects by default.
func (d *decoder) scale(name string, defFactor, defOffset float64, known map[string][2]float64) (float64, float64) {
	v := d.f.Var(name)
	if d.err != nil || v == nil {
		return defFactor, defOffset
	}
	a, ok := v.Attr("units")
	if !ok {
		return defFactor, defOffset
	}
	u := strings.TrimSpace(a.Text)
	if c, ok := known[u]; ok {
		return c[0], c[1]
	}
	d.err = &ingest.ParseError{File: d.file, Offset: -1, Err: fmt.Errorf("%w: variable %s has unknown units %s", ingest.ErrBadHeader, ingest.Quote(name), ingest.Quote(u))}
	return defFactor, defOffset
}

var (
	pressureUnits = map[string][2]float64{"hPa": {100, 0}, "mb": {100, 0}, "mbar": {100, 0}, "millibar": {100, 0}, "Pa": {1, 0}, "kPa": {1000, 0}}
	tempUnits     = map[string][2]float64{"C": {1, thermo.ZeroCelsiusK}, "degC": {1, thermo.ZeroCelsiusK}, "deg C": {1, thermo.ZeroCelsiusK}, "degree_Celsius": {1, thermo.ZeroCelsiusK}, "K": {1, 0}}
)

func (d *decoder) sounding() *sounding.Sounding {
	m := d.m
	bt := d.values(m.BaseTime, true, false)
	off := d.values(m.TimeOffset, true, true)
	p := d.values(m.Pressure, true, true)
	pf, _ := d.scale(m.Pressure, 100, 0, pressureUnits)
	t := d.values(m.Temperature, false, true)
	tf, to := d.scale(m.Temperature, 1, thermo.ZeroCelsiusK, tempUnits)
	td := d.values(m.Dewpoint, false, true)
	df, do := d.scale(m.Dewpoint, 1, thermo.ZeroCelsiusK, tempUnits)
	rh := d.values(m.RelHumidity, false, true)
	ws := d.values(m.WindSpeed, false, true)
	wd := d.values(m.WindDirection, false, true)
	alt := d.values(m.Altitude, false, true)
	lat := d.values(m.Latitude, false, true)
	lon := d.values(m.Longitude, false, true)
	if d.err != nil {
		return nil
	}
	if len(bt) != 1 || math.IsNaN(bt[0]) {
		d.err = &ingest.ParseError{File: d.file, Offset: -1, Err: fmt.Errorf("%w: %q must hold one valid value, has %d", ingest.ErrBadHeader, m.BaseTime, len(bt))}
		return nil
	}
	if len(off) == 0 || math.IsNaN(off[0]) {
		d.err = &ingest.ParseError{File: d.file, Offset: -1, Err: fmt.Errorf("%w: no records, or the first %q is missing", ingest.ErrBadHeader, m.TimeOffset)}
		return nil
	}
	launchS := bt[0] + off[0]
	if math.Abs(launchS) > 1e11 {
		d.err = &ingest.ParseError{File: d.file, Offset: -1, Err: fmt.Errorf("%w: launch time %g s is out of range", ingest.ErrBadHeader, launchS)}
		return nil
	}
	sec, frac := math.Modf(launchS)
	launch := time.Unix(int64(sec), int64(frac*1e9)).UTC()

	s := &sounding.Sounding{
		LatitudeDeg: math.NaN(), LongitudeDeg: math.NaN(), ElevationM: math.NaN(),
		LaunchTime: launch, LaunchTimeReported: true,
		NominalTime: launch.Round(time.Hour), NominalHourInferred: true,
		DeclaredLevels: -1,
		Source:         sounding.Source{File: d.file, Format: Format},
		Levels:         make([]sounding.Level, len(off)),
	}
	s.StationID, s.StationName = d.station()
	at := func(x []float64, i int) float64 {
		if x == nil {
			return math.NaN()
		}
		return x[i]
	}
	for i := range off {
		l := sounding.NewLevel()
		l.Kind = sounding.KindSignificant
		if i == 0 {
			l.Kind = sounding.KindSurface
		}
		l.Line = i + 1
		set(&l, sounding.VarElapsedTime, &l.ElapsedS, off[i]-off[0], sounding.Reported)
		set(&l, sounding.VarPressure, &l.PressurePa, p[i]*pf, sounding.Reported)
		set(&l, sounding.VarTemperature, &l.TemperatureK, at(t, i)*tf+to, sounding.Reported)
		l.DewpointK = at(td, i)*df + do
		set(&l, sounding.VarDewpointDepression, &l.DewpointDepressionK, l.TemperatureK-l.DewpointK, sounding.Derived)
		set(&l, sounding.VarRelHumidity, &l.RelHumidityPct, at(rh, i), sounding.Reported)
		set(&l, sounding.VarWindSpeed, &l.WindSpeedMS, at(ws, i), sounding.Reported)
		set(&l, sounding.VarWindDirection, &l.WindDirectionDeg, at(wd, i), sounding.Reported)
		set(&l, sounding.VarHeight, &l.HeightM, GeopotentialHeight(at(alt, i)), sounding.Reported)
		if math.IsNaN(s.ElevationM) {
			s.ElevationM = l.HeightM
		}
		if la, lo := at(lat, i), at(lon, i); math.IsNaN(s.LatitudeDeg) && !math.IsNaN(la) && !math.IsNaN(lo) {
			s.LatitudeDeg, s.LongitudeDeg = la, lo
		}
		s.Levels[i] = l
	}
	// Each record's position, as a displacement from the sounding's
	// (the first valid one); longitude differences are taken the short
	// way round, so a flight across 180° does not jump by 360°.
	for i := range s.Levels {
		la, lo := at(lat, i), at(lon, i)
		if math.IsNaN(la) || math.IsNaN(lo) || math.IsNaN(s.LatitudeDeg) {
			continue
		}
		l := &s.Levels[i]
		l.LatDisplacementDeg = la - s.LatitudeDeg
		l.LonDisplacementDeg = math.Remainder(lo-s.LongitudeDeg, 360)
	}
	return s
}

// set stores x in *dst with status st, or leaves the level's NaN and
// Missing status when x is NaN.
func set(l *sounding.Level, v sounding.Var, dst *float64, x float64, st sounding.Status) {
	if math.IsNaN(x) {
		return
	}
	*dst = x
	l.Status[v] = st
}

// station forms the station id and name; see Read.
func (d *decoder) station() (id, name string) {
	site, fac := "", ""
	if a, ok := d.f.Attr(d.m.SiteAttr); ok && d.m.SiteAttr != "" {
		site = strings.TrimSpace(a.Text)
	}
	if a, ok := d.f.Attr(d.m.FacilityAttr); ok && d.m.FacilityAttr != "" {
		code, rest, _ := strings.Cut(a.Text, ":")
		fac, name = strings.TrimSpace(code), strings.TrimSpace(rest)
	}
	if site != "" && fac != "" {
		return site + fac, name
	}
	base := filepath.Base(d.file)
	first, _, _ := strings.Cut(base, ".")
	fs, ff := siteFacility(first)
	if fs != "" && ff != "" {
		return fs + ff, name
	}
	return first, name
}

// siteFacility splits a datastream name such as "twpsondewnpnC3" into its
// three-letter site ("twp") and trailing facility code ("C3").
func siteFacility(s string) (site, facility string) {
	if len(s) < 5 {
		return "", ""
	}
	for i := 0; i < 3; i++ {
		if c := s[i]; c < 'a' || c > 'z' {
			return "", ""
		}
	}
	j := len(s)
	for j > 3 && s[j-1] >= '0' && s[j-1] <= '9' {
		j--
	}
	if j == len(s) {
		return "", ""
	}
	k := j
	for k > 3 && s[k-1] >= 'A' && s[k-1] <= 'Z' {
		k--
	}
	if k == j {
		return "", ""
	}
	return s[:3], s[k:]
}

// findings reports a flight with no temperature after its first record
// and one that ends early.
func (d *decoder) findings(s *sounding.Sounding) []*Finding {
	top := math.NaN()
	nT := 0
	for i, l := range s.Levels {
		if !math.IsNaN(l.PressurePa) && !(l.PressurePa >= top) {
			top = l.PressurePa
		}
		if i > 0 && !math.IsNaN(l.TemperatureK) {
			nT++
		}
	}
	var out []*Finding
	if nT == 0 && len(s.Levels) > 1 {
		out = append(out, &Finding{File: d.file, Reason: ErrNoTemperature, TopPressurePa: top})
	}
	if !(top <= d.m.EarlyTopPa) {
		out = append(out, &Finding{File: d.file, Reason: ErrEndsEarly, TopPressurePa: top})
	}
	return out
}
