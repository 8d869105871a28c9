// Package analyze derives boundary-layer diagnostics from one canonical
// sounding: hypsometric heights for levels that lack them, per-level
// potential temperature, virtual potential temperature and mixing ratio,
// the surface-based temperature inversion, the lowest well-mixed layer and
// the parcel (Holzworth-type) mixing height.
//
// Analyze is the entry point. It never drops a sounding: when a sounding
// cannot be analysed its Result carries a short snake_case Status reason
// (for example "too_few_levels") and the diagnostics are marked absent, so
// that such soundings are counted as attempted but not valid.
//
// The thermodynamic profile is built only from levels that have both a
// pressure and a temperature, sorted by decreasing pressure, with exact
// duplicate pressures dropped (the first in source order is kept). Wind-only
// levels reported by height take part in height bookkeeping only. All
// heights in results are geopotential metres above ground (AGL); the ground
// is the station elevation when known, else the surface level's height.
//
// Each diagnostic lives in its own file with its own configuration block in
// Config, so that further methods (elevated inversions, gradient and
// Richardson-number heights) can be added beside them. The pure formulas
// are in the sub-package thermo.
package analyze
