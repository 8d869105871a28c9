package thermo

import "math"

// PotentialTemperature returns θ = T (p0/p)^κ in K for temperature tK in K
// and pressure pPa in Pa (Poisson's equation; κ = Rd/cpd, p0 the reference
// pressure, usually 1000 hPa). NaN for NaN inputs or non-positive pPa.
func PotentialTemperature(tK, pPa, kappa, p0Pa float64) float64 {
	if !(pPa > 0) {
		return math.NaN()
	}
	return tK * powFrac(p0Pa/pPa, kappa)
}

// TemperatureFromPotentialTemperature returns T = θ (p/p0)^κ in K, the
// inverse of PotentialTemperature: the temperature on the dry adiabat θ at
// pressure pPa. NaN for NaN inputs or non-positive pPa.
func TemperatureFromPotentialTemperature(thetaK, pPa, kappa, p0Pa float64) float64 {
	if !(pPa > 0) {
		return math.NaN()
	}
	return thetaK * powFrac(pPa/p0Pa, kappa)
}

// powFrac returns math.Pow(x, y), bit for bit. For 0 < y < 0.5 (κ is about
// 0.286) it is the one step the standard library's Pow takes for such a y,
// Exp(y Log x) (math/pow.go: the fractional part is y itself, the integer
// part is 0, so its squaring loop does nothing and Ldexp(a, 0) returns a),
// without the special-case tests, Modf, Frexp and Ldexp around it, for
// x > 0 (the ratio of two pressures): there Pow's special cases agree,
// x = 1 gives Exp(0) = 1 and x = +Inf gives +Inf. Zero, negative and NaN x
// go to Pow. TestPowFrac checks the two against each other.
func powFrac(x, y float64) float64 {
	if y > 0 && y < 0.5 && x > 0 {
		return math.Exp(y * math.Log(x))
	}
	return math.Pow(x, y)
}

// VirtualTemperature returns Tv = T (w + ε)/(ε (1 + w)) in K for temperature
// tK in K and mixing ratio w in kg/kg (Hobbs 2006 p. 80, as documented by
// MetPy); liquid water is ignored. NaN for NaN inputs.
func VirtualTemperature(tK, w, epsilon float64) float64 {
	return tK * (w + epsilon) / (epsilon * (1 + w))
}

// VirtualPotentialTemperature returns θv = θ (w + ε)/(ε (1 + w)) in K for
// potential temperature thetaK in K and mixing ratio w in kg/kg (Markowski
// & Richardson 2010 p. 13, as documented by MetPy). NaN for NaN inputs.
func VirtualPotentialTemperature(thetaK, w, epsilon float64) float64 {
	return VirtualTemperature(thetaK, w, epsilon)
}

// Thickness returns the geopotential thickness Z2 − Z1 in m of the layer
// between pressures p1Pa (lower) and p2Pa (upper) by the hypsometric
// equation with the mean virtual temperature taken as the trapezoid of the
// end values in ln p:
//
//	Z2 − Z1 = (Rd/g0) (Tv1 + Tv2)/2 ln(p1/p2)
//
// (Hobbs 2006 eq. 3.24, as documented by MetPy). Tv in K, rd in
// J kg⁻¹ K⁻¹, g0 in m s⁻². The result is negative when p2 > p1. NaN for
// NaN inputs or non-positive pressures.
func Thickness(p1Pa, p2Pa, tv1K, tv2K, rd, g0 float64) float64 {
	if !(p1Pa > 0) || !(p2Pa > 0) {
		return math.NaN()
	}
	return ThicknessLn(math.Log(p1Pa/p2Pa), tv1K, tv2K, rd, g0)
}

// ThicknessLn is Thickness with ln(p1/p2) given (lnRatio), for callers
// that integrate over the same pair of pressures more than once and keep
// the logarithm: the same operations as Thickness on positive pressures.
func ThicknessLn(lnRatio, tv1K, tv2K, rd, g0 float64) float64 {
	return rd / g0 * 0.5 * (tv1K + tv2K) * lnRatio
}
