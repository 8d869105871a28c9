package analyze

import (
	"fmt"
	"math"
	"time"

	"github.com/sondeclim/sondeclim/physics/sun"
	"github.com/sondeclim/sondeclim/physics/thermo"
)

// ParcelProfile is the part of an analysed sounding that the afternoon
// (Holzworth) mixing height needs: the potential-temperature profile and
// the surface values. Its slices are the caller's even when the Result
// came from an Analyzer (which reuses the Result's other slices); treat
// them as read-only.
type ParcelProfile struct {
	SurfacePressurePa   float64   // Pa
	SurfaceTemperatureK float64   // K
	CeilingAGLM         float64   // m AGL, the search ceiling of the analysis
	Kappa, P0Pa         float64   // Poisson constant and reference pressure (Pa) of the constant set
	HeightAGLM          []float64 // m AGL, upward, surface first
	ThetaK              []float64 // K
}

// AfternoonMixingHeight returns the Holzworth afternoon mixing height of a
// morning sounding's profile p for the day's maximum surface temperature
// tmaxK (K): the parcel θ0 = Tmax (p0/p_sfc)^κ lifted dry-adiabatically
// until it meets the morning θ profile (ParcelMixingHeight; METHODS §4.1,
// after Holzworth 1967, 1972 and the U.S. EPA monitoring guidance §6.5.1).
// The result's Method is "parcel_afternoon" and its Note "theta0=…K".
// Undefined ("no_profile" or "no_tmax") when the profile is empty or tmaxK
// is NaN.
func AfternoonMixingHeight(p ParcelProfile, tmaxK float64) MixingHeight {
	const method = "parcel_afternoon"
	switch {
	case len(p.HeightAGLM) < 2 || !(p.SurfacePressurePa > 0):
		return undefinedMH(method, "no_profile")
	case !(tmaxK > 0):
		return undefinedMH(method, "no_tmax")
	}
	th0 := thermo.PotentialTemperature(tmaxK, p.SurfacePressurePa, p.Kappa, p.P0Pa)
	h, st := ParcelMixingHeight(p.HeightAGLM, p.ThetaK, th0, p.CeilingAGLM)
	note := fmt.Sprintf("theta0=%.2fK", th0)
	if st == MixingHeightUndefined {
		note = "no_crossing"
	}
	return mhFrom(method, h, st, note)
}

// DayKey identifies a station's local solar day.
type DayKey struct {
	StationID string
	Date      time.Time // midnight UTC of the local solar date
}

// DailyMaxima maps a station's local day to its maximum surface
// temperature in K.
type DailyMaxima map[DayKey]float64

// DaySounding is one analysed sounding as the afternoon pairing needs it.
type DaySounding struct {
	StationID    string
	LaunchTime   time.Time // UTC
	LongitudeDeg float64   // degrees east; NaN excludes the sounding
	Profile      ParcelProfile
}

// PairingConfig sets the local mean solar time windows (hours, start
// inclusive, end exclusive) that make a sounding a morning or an afternoon
// one. Defaults: morning 03–10 h, afternoon 12–20 h (proposal, no source:
// the windows hold the US 12 UTC launches, about 05–07 h local mean time,
// and the 00 UTC launches, about 17–19 h; a surface temperature that late
// is below the day's maximum, so user-supplied maxima are preferred).
type PairingConfig struct {
	MorningFromH, MorningToH     float64
	AfternoonFromH, AfternoonToH float64
}

// DefaultPairingConfig returns the defaults documented on PairingConfig.
func DefaultPairingConfig() PairingConfig {
	return PairingConfig{MorningFromH: 3, MorningToH: 10, AfternoonFromH: 12, AfternoonToH: 20}
}

// TmaxSource is the source of the maximum temperature of an afternoon
// estimate (the column afternoon_mixing.tmax_source).
//
// TmaxFromLaterSounding is not a daily maximum: it is the surface
// temperature of the same local day's later sounding, in the afternoon
// window of PairingConfig (12–20 h local mean solar time). For US stations
// that is the 00 UTC launch at about 18–19 h, near sunset in summer and
// one to two hours after it in winter, when the surface has cooled below
// the day's maximum (the evening surface inversion in winter; a few K, not
// measured here). The afternoon mixing height computed from it is
// therefore biased low, most in winter; give daily maxima (--daily-max)
// for the Holzworth construction proper (METHODS §4.1: Tmax of 12–16 LST).
type TmaxSource string

// Sources of Tmax.
const (
	TmaxFromDailyMaxima   TmaxSource = "daily_maxima"
	TmaxFromLaterSounding TmaxSource = "later_sounding"
)

// TmaxSources returns the sources of Tmax in the order above.
func TmaxSources() []TmaxSource { return []TmaxSource{TmaxFromDailyMaxima, TmaxFromLaterSounding} }

// AfternoonEstimate is the afternoon mixing height of one morning sounding.
type AfternoonEstimate struct {
	Morning   int       // index of the morning sounding in the input
	Afternoon int       // index of the afternoon sounding used for Tmax, −1 when none
	StationID string    //
	LocalDate time.Time // local solar date (midnight UTC)
	TmaxK     float64   // K; NaN when no maximum was found
	// TmaxSource is TmaxFromDailyMaxima, TmaxFromLaterSounding or ""
	// (then MixingHeight is undefined with note "no_tmax").
	TmaxSource   TmaxSource
	MixingHeight MixingHeight
}

// PairAfternoon returns one AfternoonEstimate per morning sounding in
// soundings, in input order. Soundings are grouped by station and local
// solar date (sun.LocalSolarDate, from the longitude); a sounding is a
// morning one when its local mean solar time lies in the morning window.
// The maximum temperature is the user's value for that station and date
// in maxima (may be nil) when present, else the highest surface
// temperature among the same day's afternoon soundings; it feeds
// AfternoonMixingHeight with the morning profile. Soundings without a
// longitude or launch time are skipped.
func PairAfternoon(soundings []DaySounding, maxima DailyMaxima, cfg PairingConfig) []AfternoonEstimate {
	type pm struct {
		i   int
		key DayKey
	}
	var mornings []pm
	best := map[DayKey]int{}
	in := func(h, from, to float64) bool { return h >= from && h < to }
	for i, s := range soundings {
		d, ok := sun.LocalSolarDate(s.LaunchTime, s.LongitudeDeg)
		if !ok {
			continue
		}
		key, lst := DayKey{s.StationID, d}, sun.LocalMeanSolarTime(s.LaunchTime, s.LongitudeDeg)
		switch {
		case in(lst, cfg.MorningFromH, cfg.MorningToH):
			mornings = append(mornings, pm{i, key})
		case in(lst, cfg.AfternoonFromH, cfg.AfternoonToH):
			t := s.Profile.SurfaceTemperatureK
			if j, seen := best[key]; !math.IsNaN(t) && (!seen || t > soundings[j].Profile.SurfaceTemperatureK) {
				best[key] = i
			}
		}
	}
	out := make([]AfternoonEstimate, 0, len(mornings))
	for _, m := range mornings {
		e := AfternoonEstimate{Morning: m.i, Afternoon: -1, StationID: m.key.StationID, LocalDate: m.key.Date, TmaxK: math.NaN()}
		if t, ok := maxima[m.key]; ok {
			e.TmaxK, e.TmaxSource = t, TmaxFromDailyMaxima
		} else if j, ok := best[m.key]; ok {
			e.Afternoon, e.TmaxK, e.TmaxSource = j, soundings[j].Profile.SurfaceTemperatureK, TmaxFromLaterSounding
		}
		e.MixingHeight = AfternoonMixingHeight(soundings[m.i].Profile, e.TmaxK)
		out = append(out, e)
	}
	return out
}
