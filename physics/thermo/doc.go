// Package thermo holds the thermodynamic formulas the analysis needs, as
// pure functions on numbers: a named, versioned set of physical constants;
// saturation vapour pressure over water and ice by several published
// formulas; humidity conversions; potential and virtual temperatures; the
// hypsometric layer thickness; layer means in pressure; and the U.S.
// Standard Atmosphere 1976 below 20 km.
//
// Units are SI throughout: pressure in Pa, temperature in K, height in m
// (geopotential metres where stated), mixing ratio and specific humidity in
// kg/kg, relative humidity as a fraction (0–1). Formulas published in hPa
// and °C are converted at the function boundary. Missing values are NaN and
// propagate: a NaN argument gives a NaN result, never a panic.
//
// Functions take the constants they need as plain arguments (for example
// kappa or epsilon), so that a caller can pick them from a Constants set:
//
//	c := thermo.Default()
//	theta := thermo.PotentialTemperature(tK, pPa, c.Kappa, c.P0Pa)
package thermo
