package qc

import "github.com/sondeclim/sondeclim/physics/thermo"

// Config holds every threshold of Check. Start from DefaultConfig and
// change fields. Units are SI (Pa, K, m, m/s) like the sounding model;
// temperature limits are absolute temperatures in K.
//
// Sources: "METHODS §6" means the recommended-checks table of the project's
// METHODS.md §6, where most defaults are proposals from memory, not
// published values; the two published ones (the −90…+50 °C profile range
// and the 33.5 m/s near-surface wind rule) are named where used.
type Config struct {
	// Constants is the thermodynamic constant set for the hydrostatic and
	// lapse-rate computations. Default thermo.Default() (codata2018,
	// Rd = 287.04749 J kg⁻¹ K⁻¹, the set the project's check values use).
	Constants thermo.Constants
	// SatVap is the saturation vapour pressure formula used to turn
	// dewpoints into mixing ratios for the virtual temperature. Default
	// thermo.Bolton (METHODS §1.3: radiosonde humidity is relative to
	// water).
	SatVap thermo.SatVapFormula

	// RequireSurface rejects a sounding without a surface level; when
	// false such a sounding is only suspect. Default false: METHODS §6
	// "Structural" asks for ≥ 1 surface level but rejects only what cannot
	// be parsed, and real files lack the surface line now and then (3 of
	// 662 Sterling 2016 soundings start at 1013 hPa, 4 m above the station)
	// while the analysis can start from the lowest level.
	RequireSurface bool

	// MinPressurePa and MaxPressurePa bound a plausible pressure.
	// Defaults 0 Pa (exclusive; METHODS §6 "pressures > 0") and 1100 hPa
	// (common practice, no source: above the highest sea-level pressures
	// observed).
	MinPressurePa, MaxPressurePa float64
	// PressureResolutionPa: a level whose pressure is out of the
	// decreasing order by no more than this is within the sensor's
	// resolution and is not flagged (high-resolution sondes report 0.1 hPa
	// and often repeat a value). Default 10 Pa (common practice, no source).
	PressureResolutionPa float64
	// MinHeightM and MaxHeightM bound a plausible geopotential height.
	// Defaults −500 gpm and 60 000 gpm (common practice, no source: below
	// the lowest land surface, above balloon burst heights).
	MinHeightM, MaxHeightM float64
	// MinTemperatureK and MaxTemperatureK bound a plausible temperature.
	// Defaults −95 °C and +60 °C (METHODS §6 "Gross T"; the narrower
	// −90…+50 °C is used elsewhere as a profile-reject test).
	MinTemperatureK, MaxTemperatureK float64
	// MaxDewpointDepressionK is the largest plausible dewpoint depression.
	// Default 70 K (METHODS §6 "Gross humidity").
	MaxDewpointDepressionK float64
	// DewpointExcessK is how far the dewpoint may exceed the temperature
	// before it is bad (rounding of T and the depression). Default 0.1 K
	// (METHODS §6: Td ≤ T + 0.1 K).
	DewpointExcessK float64
	// MaxRelHumidityPct is the largest accepted relative humidity; values
	// between 100 % and this are kept (Apply clips them to 100 %). Default
	// 105 % (METHODS §6 "accept to 105 % and clip").
	MaxRelHumidityPct float64
	// MaxWindSpeedMS is the largest plausible wind speed. Default
	// 120 m/s (METHODS §6 "Gross wind").
	MaxWindSpeedMS float64
	// NearSurfaceWindAGLM and NearSurfaceMaxWindMS: a wind faster than
	// NearSurfaceMaxWindMS below NearSurfaceWindAGLM above the station is
	// bad. Defaults 50 m and 33.5 m/s (METHODS §6, confirmed there as the
	// practice of a national laboratory's sonde processing).
	NearSurfaceWindAGLM, NearSurfaceMaxWindMS float64

	// HydrostaticTolM and HydrostaticTolFrac: a layer between two levels
	// with reported heights fails when |residual| exceeds
	// max(HydrostaticTolM, HydrostaticTolFrac × thickness). Defaults 20 m
	// and 1 % (METHODS §6 "Hydrostatic"; checked against the real Sterling
	// 2016 and Wien 2015 files in the tests).
	HydrostaticTolM, HydrostaticTolFrac float64

	// SpikeK: a temperature that lies more than SpikeK above (or below)
	// both neighbours and the ln p interpolation between them is a spike.
	// Default 10 K (METHODS §6 "Vertical T spike").
	SpikeK float64

	// SuperadiabaticMinAGLM and SuperadiabaticMinDepthPa: lapse rates are
	// checked only over layers whose base is higher than
	// SuperadiabaticMinAGLM above the surface and at least
	// SuperadiabaticMinDepthPa above the surface pressure, so that the
	// superadiabatic surface layer of a sunny day is allowed. Each layer
	// is at least SuperadiabaticLayerPa deep. Defaults 200 m, 50 hPa and
	// 10 hPa (METHODS §6 "Superadiabatic").
	SuperadiabaticMinAGLM, SuperadiabaticMinDepthPa, SuperadiabaticLayerPa float64
	// NightSunBelowDeg: when the sun at launch is lower than this (night),
	// the near-surface layers excused above are checked too, with the same
	// lapse-rate limit, and a superadiabatic one is suspect (never bad:
	// warm surfaces such as water or cities can keep one after dark).
	// Default 0° (METHODS §6 "Superadiabatic": allow near-surface layers by
	// day, flag them only at night; night is a sun below the horizon,
	// METHODS §8). NaN disables the night check; soundings without a
	// position are not checked.
	NightSunBelowDeg float64
	// SuspectLapseKPerM and BadLapseKPerM: a layer cooling with height
	// faster than these is suspect or bad. Defaults 12 K/km and 25 K/km
	// (METHODS §6 "Superadiabatic"; the dry adiabatic rate is 9.76 K/km).
	SuspectLapseKPerM, BadLapseKPerM float64

	// ColdHumidityK: humidity reported where the temperature is below this
	// is suspect (sensors of many eras are unreliable there). Default
	// −40 °C (METHODS §6 "Cold-humidity"). NaN disables the check.
	ColdHumidityK float64

	// MaxSurfacePressureDiffPa: a surface pressure that differs from the
	// U.S. Standard Atmosphere 1976 pressure at the station elevation by
	// more than this is suspect. Default 60 hPa (METHODS §6 "Surface
	// pressure vs elevation"; climate dependent).
	MaxSurfacePressureDiffPa float64

	// CoverageTopPa and CoverageTopAGLM: the sounding must reach
	// CoverageTopPa or CoverageTopAGLM above ground with usable
	// temperatures. CoverageLowPa and CoverageMinLevels: it must have at
	// least CoverageMinLevels levels with usable pressure and temperature
	// at pressures ≥ CoverageLowPa (surface included). Defaults 500 hPa,
	// 3000 m, 700 hPa and 3 (METHODS §6 "Depth / coverage").
	CoverageTopPa, CoverageTopAGLM, CoverageLowPa float64
	CoverageMinLevels                             int

	// MaxBadTemperatureFrac rejects a sounding when more than this
	// fraction of its reported temperatures is bad. Default 0.5 (common
	// practice, no source).
	MaxBadTemperatureFrac float64
}

// DefaultConfig returns the default thresholds (see Config for the source
// of each).
func DefaultConfig() Config {
	const c0 = thermo.ZeroCelsiusK
	return Config{
		Constants:      thermo.Default(),
		SatVap:         thermo.Bolton,
		RequireSurface: false,

		MinPressurePa: 0, MaxPressurePa: 110000, PressureResolutionPa: 10,
		MinHeightM: -500, MaxHeightM: 60000,
		MinTemperatureK: c0 - 95, MaxTemperatureK: c0 + 60,
		MaxDewpointDepressionK: 70,
		DewpointExcessK:        0.1,
		MaxRelHumidityPct:      105,
		MaxWindSpeedMS:         120,
		NearSurfaceWindAGLM:    50, NearSurfaceMaxWindMS: 33.5,

		HydrostaticTolM: 20, HydrostaticTolFrac: 0.01,
		SpikeK: 10,

		SuperadiabaticMinAGLM: 200, SuperadiabaticMinDepthPa: 5000, SuperadiabaticLayerPa: 1000,
		SuspectLapseKPerM: 0.012, BadLapseKPerM: 0.025,
		NightSunBelowDeg: 0,

		ColdHumidityK:            c0 - 40,
		MaxSurfacePressureDiffPa: 6000,

		CoverageTopPa: 50000, CoverageTopAGLM: 3000, CoverageLowPa: 70000, CoverageMinLevels: 3,
		MaxBadTemperatureFrac: 0.5,
	}
}
