// Package analyze derives boundary-layer diagnostics from one canonical
// sounding: hypsometric heights for levels that lack them, per-level
// potential temperature, virtual potential temperature and mixing ratio,
// the sun's elevation and a day/low-sun/civil-twilight/night class at launch (sub-package
// sun), every temperature inversion below the ceiling with its humidity
// and wind changes and a documented class, every well-mixed layer, the
// mixing height by several methods (parcel, virtual parcel, Heffter, bulk
// Richardson at two critical values, Liu & Liang, SBI top, lowest
// elevated inversion base) with a consensus, spread and resolution flag,
// and the transport wind and ventilation index.
//
// Analyze is the entry point. It never drops a sounding: when a sounding
// cannot be analysed its Result carries a short snake_case Status reason
// (for example "too_few_levels") and the diagnostics are marked absent
// (every mixing-height method present with status "undefined"), so that
// such soundings are counted as attempted but not valid.
//
// The thermodynamic profile is built only from levels that have both a
// pressure and a temperature, sorted by decreasing pressure, with exact
// duplicate pressures dropped (the first in source order is kept). Winds
// come from every level with a height and a wind (wind-only levels
// included), interpolated linearly in height to the thermodynamic levels
// that lack one; never extrapolated, and a missing wind is never taken as
// calm. All heights in results are geopotential metres above ground
// (AGL); the ground is the station elevation when known, else the surface
// level's height.
//
// After all soundings of a station are analysed, AfternoonMixingHeight and
// PairAfternoon give the Holzworth afternoon mixing height from a morning
// profile and a daily maximum temperature (from the same day's afternoon
// sounding or from a daily-maxima file, package ingest/dailymax). Each method has its own configuration
// block in Config with the source of every default beside it. The pure
// formulas are in the sub-packages thermo (thermodynamics), sun (solar
// position) and stats (quantiles and trend tests).
package analyze
