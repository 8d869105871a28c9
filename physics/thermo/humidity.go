package thermo

import "math"

// VapourPressureFromDewpoint returns the vapour pressure e = es(Td) in Pa for
// dewpoint tdK in K, with es from formula f. Radiosonde dewpoints are with
// respect to liquid water, so f should be a water formula. NaN for NaN tdK.
func VapourPressureFromDewpoint(tdK float64, f SatVapFormula) float64 {
	return f.SaturationVapourPressure(tdK)
}

// MixingRatio returns the water-vapour mixing ratio in kg/kg,
//
//	w = ε e/(p − e),
//
// for vapour pressure ePa and total pressure pPa in Pa (Hobbs 1977, as
// documented by MetPy). NaN when either input is NaN, when e < 0 or when
// e ≥ p (no physical solution).
func MixingRatio(ePa, pPa, epsilon float64) float64 {
	if !(ePa >= 0) || !(pPa > ePa) {
		return math.NaN()
	}
	return epsilon * ePa / (pPa - ePa)
}

// VapourPressureFromMixingRatio returns the vapour pressure in Pa,
//
//	e = p w/(w + ε),
//
// the inverse of MixingRatio, for mixing ratio w in kg/kg and pressure pPa
// in Pa. NaN for NaN inputs or w < 0.
func VapourPressureFromMixingRatio(w, pPa, epsilon float64) float64 {
	if !(w >= 0) || !(pPa > 0) {
		return math.NaN()
	}
	return pPa * w / (w + epsilon)
}

// SaturationMixingRatio returns the saturation mixing ratio in kg/kg at
// temperature tK (K) and pressure pPa (Pa): ws = ε es(T)/(p − es(T)), es by
// formula f. NaN for NaN inputs or when es(T) ≥ p.
func SaturationMixingRatio(tK, pPa, epsilon float64, f SatVapFormula) float64 {
	return MixingRatio(f.SaturationVapourPressure(tK), pPa, epsilon)
}

// SpecificHumidity returns the specific humidity q = w/(1 + w) in kg/kg for
// mixing ratio w in kg/kg (mass of vapour per mass of moist air). NaN for
// NaN or negative w.
func SpecificHumidity(w float64) float64 {
	if !(w >= 0) {
		return math.NaN()
	}
	return w / (1 + w)
}

// RelativeHumidity returns the relative humidity with respect to water as a
// fraction, RH = es(Td)/es(T) (WMO definition by vapour pressures), for
// temperature tK and dewpoint tdK in K, es by formula f. NaN for NaN
// inputs. It is not clipped: Td > T gives RH > 1.
func RelativeHumidity(tK, tdK float64, f SatVapFormula) float64 {
	return f.SaturationVapourPressure(tdK) / f.SaturationVapourPressure(tK)
}

// MixingRatioFromRelativeHumidity returns the mixing ratio in kg/kg for
// relative humidity rh (fraction) at temperature tK and pressure pPa, in
// the WMO form (WMO-No. 8, eq. 4.A.15/16, as documented by MetPy):
//
//	w = ε ws RH/(ε + ws (1 − RH)),  ws = SaturationMixingRatio(T, p).
//
// NaN for NaN inputs or negative rh.
func MixingRatioFromRelativeHumidity(rh, tK, pPa, epsilon float64, f SatVapFormula) float64 {
	if !(rh >= 0) {
		return math.NaN()
	}
	ws := SaturationMixingRatio(tK, pPa, epsilon, f)
	return epsilon * ws * rh / (epsilon + ws*(1-rh))
}

// DewpointFromVapourPressure returns the dewpoint in K for vapour pressure
// ePa in Pa, by inverting Bolton's (1980) formula:
//
//	Td = 243.5 L/(17.67 − L) °C,  L = ln(e/611.2 Pa).
//
// NaN for NaN or non-positive ePa.
func DewpointFromVapourPressure(ePa float64) float64 {
	if !(ePa > 0) {
		return math.NaN()
	}
	l := math.Log(ePa / 611.2)
	return 243.5*l/(17.67-l) + ZeroCelsiusK
}

// DewpointFromRelativeHumidity returns the dewpoint in K for temperature tK
// (K) and relative humidity rh (fraction), by the WMO Magnus form:
//
//	Td = 243.12 γ/(17.62 − γ) °C,  γ = ln(RH) + 17.62 t/(243.12 + t).
//
// NaN for NaN inputs or non-positive rh.
func DewpointFromRelativeHumidity(tK, rh float64) float64 {
	if !(rh > 0) {
		return math.NaN()
	}
	t := validK(tK) - ZeroCelsiusK
	g := math.Log(rh) + 17.62*t/(243.12+t)
	return 243.12*g/(17.62-g) + ZeroCelsiusK
}
