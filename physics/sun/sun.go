// Package sun computes the sun's position for a radiosonde launch: solar
// declination, equation of time, local apparent solar time and the solar
// elevation angle, and classifies a launch as day, low sun, civil twilight
// or night from that elevation.
//
// The position uses the low-precision formulas of the Astronomical Almanac
// (1996 edition, page C24): mean elements of the Earth's orbit with a
// two-term equation of the centre, stated there to be accurate to about
// 0.01° between 1950 and 2050. Atmospheric refraction is not applied: the
// elevation is geometric (true), which lowers it by about 0.5° near the
// horizon compared with what an observer sees; the day/night thresholds
// used for classification are far coarser than that.
package sun

import (
	"math"
	"time"
)

const deg = math.Pi / 180

// j2000 is 2000-01-01 12:00 TT, taken as UTC (the 64 s difference is far
// below the formulas' precision).
var j2000 = time.Date(2000, 1, 1, 12, 0, 0, 0, time.UTC)

// Position is the sun's apparent place at an instant.
type Position struct {
	DaysSinceJ2000       float64 // d, days from 2000-01-01 12:00 UTC
	MeanLongitudeDeg     float64 // L, in [0, 360)
	MeanAnomalyDeg       float64 // g, in [0, 360)
	EclipticLongitudeDeg float64 // λ, in [0, 360)
	ObliquityDeg         float64 // ε
	RightAscensionDeg    float64 // α, in [0, 360)
	DeclinationDeg       float64 // δ, in [−90, 90]
	// EquationOfTimeMin is apparent minus mean solar time in minutes,
	// 4 min/° × (L − α) reduced to (−720, 720]; about −14 min in
	// mid-February and +16 min in early November.
	EquationOfTimeMin float64
}

// At returns the sun's position at instant t by the Astronomical Almanac
// low-precision formulas (1996, p. C24):
//
//	d = days since J2000.0
//	L = 280.461° + 0.9856474° d          (mean longitude)
//	g = 357.528° + 0.9856003° d          (mean anomaly)
//	λ = L + 1.915° sin g + 0.020° sin 2g (ecliptic longitude)
//	ε = 23.439° − 0.0000004° d           (obliquity of the ecliptic)
//	tan α = cos ε sin λ / cos λ,  sin δ = sin ε sin λ.
//
// A zero t gives a Position with every field NaN.
func At(t time.Time) Position {
	nan := math.NaN()
	if t.IsZero() {
		return Position{nan, nan, nan, nan, nan, nan, nan, nan}
	}
	d := t.Sub(j2000).Hours() / 24
	l := mod360(280.461 + 0.9856474*d)
	g := mod360(357.528 + 0.9856003*d)
	lam := mod360(l + 1.915*math.Sin(g*deg) + 0.020*math.Sin(2*g*deg))
	eps := 23.439 - 0.0000004*d
	ra := mod360(math.Atan2(math.Cos(eps*deg)*math.Sin(lam*deg), math.Cos(lam*deg)) / deg)
	dec := math.Asin(math.Sin(eps*deg)*math.Sin(lam*deg)) / deg
	eot := l - ra
	for eot > 180 {
		eot -= 360
	}
	for eot <= -180 {
		eot += 360
	}
	return Position{DaysSinceJ2000: d, MeanLongitudeDeg: l, MeanAnomalyDeg: g, EclipticLongitudeDeg: lam,
		ObliquityDeg: eps, RightAscensionDeg: ra, DeclinationDeg: dec, EquationOfTimeMin: 4 * eot}
}

func mod360(x float64) float64 {
	x = math.Mod(x, 360)
	if x < 0 {
		x += 360
	}
	return x
}

// LocalMeanSolarTime returns the local mean solar time of instant t at
// longitude lonDeg (degrees east) in hours in [0, 24): UTC + λ/15 h. NaN
// for a NaN longitude or a zero t.
func LocalMeanSolarTime(t time.Time, lonDeg float64) float64 {
	if t.IsZero() || math.IsNaN(lonDeg) || math.IsInf(lonDeg, 0) {
		return math.NaN()
	}
	u := t.UTC()
	h := float64(u.Hour()) + float64(u.Minute())/60 + (float64(u.Second())+float64(u.Nanosecond())/1e9)/3600
	return modHours(h + lonDeg/15)
}

// LocalApparentSolarTime returns the local apparent (true) solar time in
// hours in [0, 24): the local mean solar time plus the equation of time.
// The sun crosses the meridian at 12 h. NaN as for LocalMeanSolarTime.
func LocalApparentSolarTime(t time.Time, lonDeg float64) float64 {
	m := LocalMeanSolarTime(t, lonDeg)
	if math.IsNaN(m) {
		return m
	}
	return modHours(m + At(t).EquationOfTimeMin/60)
}

func modHours(h float64) float64 {
	h = math.Mod(h, 24)
	if h < 0 {
		h += 24
	}
	return h
}

// LocalSolarDate returns the calendar date (UTC fields of the shifted
// instant, time at midnight) of the local mean solar day that contains t
// at longitude lonDeg: the date of t + λ/15 h. The second result is false
// for a NaN longitude or a zero t.
func LocalSolarDate(t time.Time, lonDeg float64) (time.Time, bool) {
	if t.IsZero() || math.IsNaN(lonDeg) || math.IsInf(lonDeg, 0) {
		return time.Time{}, false
	}
	s := t.UTC().Add(time.Duration(lonDeg / 15 * float64(time.Hour)))
	return time.Date(s.Year(), s.Month(), s.Day(), 0, 0, 0, 0, time.UTC), true
}

// ElevationDeg returns the sun's geometric elevation angle in degrees at
// instant t for latitude latDeg (north) and longitude lonDeg (east):
//
//	sin h = sin φ sin δ + cos φ cos δ cos H,  H = 15° (LAST − 12 h),
//
// with δ from At and LAST the local apparent solar time. No refraction.
// NaN when the latitude or longitude is NaN or out of range, or t is zero.
func ElevationDeg(t time.Time, latDeg, lonDeg float64) float64 {
	if !(latDeg >= -90 && latDeg <= 90) || !(lonDeg >= -360 && lonDeg <= 360) || t.IsZero() {
		return math.NaN()
	}
	p := At(t)
	last := modHours(LocalMeanSolarTime(t, lonDeg) + p.EquationOfTimeMin/60)
	ha := 15 * (last - 12) * deg
	phi, dec := latDeg*deg, p.DeclinationDeg*deg
	s := math.Sin(phi)*math.Sin(dec) + math.Cos(phi)*math.Cos(dec)*math.Cos(ha)
	return math.Asin(math.Max(-1, math.Min(1, s))) / deg
}

// Class is the class of a launch by solar elevation (the column
// soundings.sun_class), in the trade's words: twilight
// is the sun below the horizon, civil twilight down to 6° below
// (Astronomical Almanac definitions, as restated by glossaries and
// observatory pages, e.g. metaglossary.com "civil twilight"); the sun low
// above the horizon is not twilight.
type Class string

// Sun classes.
const (
	Day           Class = "day"            // sun higher than the low-sun band
	LowSun        Class = "low_sun"        // sun above the horizon but low (default 0° to 10°)
	CivilTwilight Class = "civil_twilight" // sun below the horizon, at most 6° (default)
	Night         Class = "night"          // sun lower than civil twilight
	Unknown       Class = "unknown"        // position or time unknown
)

// Classes lists the sun classes from the highest sun to the lowest, then
// Unknown: the order tables use.
var Classes = []Class{Day, LowSun, CivilTwilight, Night, Unknown}

// Thresholds bound the sun classes in degrees of geometric solar
// elevation (DefaultThresholds):
//
//   - day above DayAboveDeg (10°: the low-sun split of METHODS §8, from
//     memory there; a sun this low heats the ground little, so morning
//     surface inversions often persist);
//   - low sun from HorizonDeg (0°) to DayAboveDeg;
//   - civil twilight from NightBelowDeg (−6°, the Astronomical Almanac's
//     civil twilight) to HorizonDeg;
//   - night below NightBelowDeg.
//
// The elevation is geometric, without refraction: the almanac's sunrise
// and sunset (upper limb on the refracted horizon) come at about −0.83°
// geometric, so the 0° boundary falls a few minutes after sunrise and
// before sunset at mid-latitudes.
type Thresholds struct {
	DayAboveDeg   float64
	HorizonDeg    float64
	NightBelowDeg float64
}

// DefaultThresholds returns day above 10°, low sun 0° to 10°, civil
// twilight −6° to 0°, night below −6°.
func DefaultThresholds() Thresholds {
	return Thresholds{DayAboveDeg: 10, HorizonDeg: 0, NightBelowDeg: -6}
}

// Classify returns Day when elevationDeg > DayAboveDeg, LowSun when it is
// ≥ HorizonDeg, CivilTwilight when it is ≥ NightBelowDeg, Night below, and
// Unknown for NaN.
func (th Thresholds) Classify(elevationDeg float64) Class {
	switch {
	case math.IsNaN(elevationDeg):
		return Unknown
	case elevationDeg > th.DayAboveDeg:
		return Day
	case elevationDeg >= th.HorizonDeg:
		return LowSun
	case elevationDeg >= th.NightBelowDeg:
		return CivilTwilight
	}
	return Night
}

// Below reports whether a class is one of the sun below the horizon
// (civil twilight or night).
func Below(class Class) bool { return class == CivilTwilight || class == Night }
