// Package sounding defines the canonical radiosonde sounding that every
// stage of the pipeline shares: readers produce it, quality control flags
// it, and the analysis derives boundary-layer diagnostics from it.
//
// All quantities are SI inside the model: pressure in Pa, heights in
// geopotential metres above mean sea level, temperatures in K, wind speed in
// m/s, wind direction in degrees true (the direction the wind blows from).
// Missing values are NaN; the reason a value is missing is kept in the
// level's Status array so that "not reported" and "removed by the archive's
// own quality control" stay distinguishable.
package sounding

import (
	"fmt"
	"math"
	"time"
)

// LevelKind says what kind of level a record is in the source.
type LevelKind uint8

const (
	// KindSignificant is a pressure level that is not a standard isobaric
	// surface (a significant temperature, humidity or wind level).
	KindSignificant LevelKind = iota
	// KindSurface is the surface observation at launch.
	KindSurface
	// KindStandard is a standard (mandatory) isobaric surface.
	KindStandard
	// KindWindOnly is a level without pressure, reported by height, which
	// carries wind only (for example the archive's level type 3).
	KindWindOnly
)

// String returns the lower-case name used in output tables.
func (k LevelKind) String() string {
	switch k {
	case KindSurface:
		return "surface"
	case KindStandard:
		return "standard"
	case KindSignificant:
		return "significant"
	case KindWindOnly:
		return "wind_only"
	}
	return fmt.Sprintf("kind(%d)", uint8(k))
}

// Var indexes the observed variables of a level, for per-value status.
type Var uint8

const (
	VarPressure Var = iota
	VarHeight
	VarTemperature
	VarRelHumidity
	VarDewpointDepression
	VarWindDirection
	VarWindSpeed
	VarElapsedTime
	NumVars
)

var varNames = [NumVars]string{"pressure", "height", "temperature", "relative_humidity", "dewpoint_depression", "wind_direction", "wind_speed", "elapsed_time"}

// String returns the variable's snake_case name used in output tables.
func (v Var) String() string {
	if v < NumVars {
		return varNames[v]
	}
	return fmt.Sprintf("var(%d)", uint8(v))
}

// Status records where a value came from, or why it is absent.
type Status uint8

const (
	// Reported: the source gave the value.
	Reported Status = iota
	// Missing: the source marks it as not observed (for example −9999).
	Missing
	// RemovedUpstream: the source's own quality control removed it
	// (for example −8888 in the archive's version-2 files).
	RemovedUpstream
	// Derived: computed by this pipeline (for example a height filled by
	// hypsometric integration, or a dewpoint from a dewpoint depression).
	Derived
)

// String returns the lower-case name used in output tables.
func (s Status) String() string {
	switch s {
	case Reported:
		return "reported"
	case Missing:
		return "missing"
	case RemovedUpstream:
		return "removed_upstream"
	case Derived:
		return "derived"
	}
	return fmt.Sprintf("status(%d)", uint8(s))
}

// Level is one record of a sounding. Float fields are NaN when absent; the
// matching Status entry says why.
type Level struct {
	Kind       LevelKind
	Tropopause bool // the source marks this level as a tropopause

	ElapsedS            float64 // time since release, s
	PressurePa          float64 // Pa
	HeightM             float64 // geopotential height above mean sea level, gpm
	TemperatureK        float64 // K
	DewpointK           float64 // K; derived from T − DPD or from RH when not given directly
	DewpointDepressionK float64 // K, as reported
	RelHumidityPct      float64 // %, with respect to water, as reported
	WindDirectionDeg    float64 // degrees true, direction the wind comes from
	WindSpeedMS         float64 // m/s

	// LatDisplacementDeg and LonDisplacementDeg are the balloon's position
	// at this level relative to the sounding's position (LatitudeDeg,
	// LongitudeDeg): degrees north and degrees east of it, NaN where the
	// source gives no per-level position (most formats). They carry no
	// Status entry: NaN simply means not given.
	LatDisplacementDeg float64
	LonDisplacementDeg float64

	// Status says, for each observed variable, whether it was reported,
	// missing, removed upstream or derived here.
	Status [NumVars]Status
	// UpstreamTier holds the source's own climatology-check tier per
	// variable where it gives one ('A' or 'B' in the archive's v2 files),
	// or 0 when not checked.
	UpstreamTier [NumVars]byte

	// Line is the 1-based line of this level in the source file (0 when the
	// source is not line-oriented).
	Line int
}

// NewLevel returns a level with every value missing.
func NewLevel() Level {
	l := Level{}
	nan := math.NaN()
	l.ElapsedS, l.PressurePa, l.HeightM, l.TemperatureK = nan, nan, nan, nan
	l.DewpointK, l.DewpointDepressionK, l.RelHumidityPct = nan, nan, nan
	l.WindDirectionDeg, l.WindSpeedMS = nan, nan
	l.LatDisplacementDeg, l.LonDisplacementDeg = nan, nan
	for i := range l.Status {
		l.Status[i] = Missing
	}
	return l
}

// Source names where a sounding came from.
type Source struct {
	File   string // path of the input file as given on the command line
	Member string // member name inside a zip archive, or ""
	Line   int    // 1-based line of the sounding's header (0 if not line-oriented)
	Format string // reader name, e.g. "archive-v2"
}

// String formats the source as file[!member][:line] for messages.
func (s Source) String() string {
	name := s.File
	if s.Member != "" {
		name += "!" + s.Member
	}
	if s.Line > 0 {
		return fmt.Sprintf("%s:%d", name, s.Line)
	}
	return name
}

// Sounding is one radiosonde ascent in canonical form.
type Sounding struct {
	StationID   string
	StationName string // from a station list when one was given, else ""

	LatitudeDeg  float64 // degrees north; NaN if unknown
	LongitudeDeg float64 // degrees east; NaN if unknown
	// ElevationM is the station (surface) elevation above mean sea level in
	// m: the surface level's height when reported, else the station list's
	// elevation, else NaN.
	ElevationM float64

	// NominalTime is the synoptic observation time (date and nominal hour,
	// UTC). When the source's nominal hour is missing it is inferred from
	// the release time and NominalHourInferred is true.
	NominalTime         time.Time
	NominalHourInferred bool
	// LaunchTime is the release time in UTC when the source gives one
	// (LaunchTimeReported), else the nominal time.
	LaunchTime         time.Time
	LaunchTimeReported bool

	// DeclaredLevels is the number of levels the source's header states
	// (−1 when the format has no such count).
	DeclaredLevels int

	// PressureSource and HeightSource are the source's own data-source
	// codes for pressure and non-pressure levels, when given.
	PressureSource, HeightSource string

	// Descent is true for the profile a radiosonde measures while it falls
	// after the balloon burst (BUFR 3 09 056), false for an ascent. A
	// descent has its ascent's station and launch time, so it is part of
	// the identity (Key). Its levels are in the same order as an ascent's,
	// the lowest first (the reader reverses the order of reception; ElapsedS
	// keeps the time since launch); LatitudeDeg and LongitudeDeg are where
	// the descent began, and the level displacements are from the launch
	// site as for the ascent.
	Descent bool

	Source Source
	Levels []Level
}

// NominalHour returns the nominal hour UTC (0–23).
func (s *Sounding) NominalHour() int { return s.NominalTime.Hour() }

// Key is a sounding's identity: station, launch time and whether it is
// the flight's descent.
type Key struct {
	StationID  string
	LaunchTime time.Time
	Descent    bool
}

// Key returns the sounding's identity.
func (s *Sounding) Key() Key { return Key{s.StationID, s.LaunchTime, s.Descent} }

// YearHeadHours is the length of a year's head, h: the soundings whose
// nominal time lies this long after 00 UTC on 1 January can belong to the
// previous year's last local solar day. Local mean solar time differs from
// UTC by at most 12 h, so a local day that begins in one UTC year ends at
// the latest 36 h after the next year begins.
const YearHeadHours = 36

// InYearHead reports whether t lies in the head of its UTC year (before
// 12:00 UTC on 2 January). The store builds a station-year with the head
// of the following year as context (the afternoon pairing of a local day
// that straddles the new year), and readers that stage a year in pieces
// keep its head apart so that this context is read without the rest.
func InYearHead(t time.Time) bool {
	t = t.UTC()
	return t.Before(time.Date(t.Year(), time.January, 1, 0, 0, 0, 0, time.UTC).Add(YearHeadHours * time.Hour))
}
