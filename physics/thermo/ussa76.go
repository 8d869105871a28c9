package thermo

import "math"

// U.S. Standard Atmosphere 1976 constants (USSA76 parameter list). Below
// 32 km USSA76 is identical to the ICAO standard atmosphere.
const (
	ussaG0      = 9.80665                   // m s⁻²
	ussaRd      = 8314.32 / 28.9644         // J kg⁻¹ K⁻¹, R*/M0
	ussaT0      = 288.15                    // K at sea level
	ussaP0      = 101325.0                  // Pa at sea level
	ussaLapse   = 0.0065                    // K per geopotential m, 0–11 km
	ussaH1      = 11000.0                   // gpm, tropopause
	ussaT1      = ussaT0 - ussaLapse*ussaH1 // 216.65 K
	ussaTop     = 20000.0                   // gpm, top of the isothermal layer handled here
	EarthRadius = 6356766.0                 // m, USSA76 effective Earth radius r0
)

var (
	ussaExp = ussaG0 / (ussaRd * ussaLapse)             // 5.25588
	ussaP1  = ussaP0 * math.Pow(ussaT1/ussaT0, ussaExp) // ≈ 22632.06 Pa
)

// StandardTemperature returns the USSA76 temperature in K at geopotential
// height hGpm (gpm): T = 288.15 − 0.0065 H up to 11 000 gpm, 216.65 K from
// 11 000 to 20 000 gpm. NaN outside −1000…20 000 gpm and for NaN.
func StandardTemperature(hGpm float64) float64 {
	switch {
	case !(hGpm >= -1000 && hGpm <= ussaTop):
		return math.NaN()
	case hGpm <= ussaH1:
		return ussaT0 - ussaLapse*hGpm
	}
	return ussaT1
}

// StandardPressure returns the USSA76 pressure in Pa at geopotential height
// hGpm (gpm):
//
//	p = 101325 (T/288.15)^{g0/(Rd·0.0065)}               below 11 000 gpm,
//	p = p11 exp(−g0 (H − 11000)/(Rd·216.65))             11 000–20 000 gpm,
//
// with USSA76 Rd = 287.053 J kg⁻¹ K⁻¹ and g0 = 9.80665 m s⁻², whatever
// constant set the caller uses elsewhere (the standard atmosphere is defined
// by its own constants). NaN outside −1000…20 000 gpm and for NaN.
func StandardPressure(hGpm float64) float64 {
	switch {
	case !(hGpm >= -1000 && hGpm <= ussaTop):
		return math.NaN()
	case hGpm <= ussaH1:
		return ussaP0 * math.Pow(StandardTemperature(hGpm)/ussaT0, ussaExp)
	}
	return ussaP1 * math.Exp(-ussaG0*(hGpm-ussaH1)/(ussaRd*ussaT1))
}

// StandardDensity returns the USSA76 air density ρ = p/(Rd T) in kg m⁻³ at
// geopotential height hGpm. NaN where StandardPressure is NaN.
func StandardDensity(hGpm float64) float64 {
	return StandardPressure(hGpm) / (ussaRd * StandardTemperature(hGpm))
}

// StandardHeight returns the USSA76 geopotential height in gpm at pressure
// pPa (Pa), the inverse of StandardPressure ("pressure altitude"). NaN for
// NaN and for pressures outside the −1000…20 000 gpm range.
func StandardHeight(pPa float64) float64 {
	if !(pPa > 0) {
		return math.NaN()
	}
	var h float64
	if pPa >= ussaP1 {
		h = (ussaT0 - ussaT0*math.Pow(pPa/ussaP0, 1/ussaExp)) / ussaLapse
	} else {
		h = ussaH1 - ussaRd*ussaT1/ussaG0*math.Log(pPa/ussaP1)
	}
	if !(h >= -1000 && h <= ussaTop) {
		return math.NaN()
	}
	return h
}

// GeopotentialHeight converts geometric height zM (m) to geopotential height
// in gpm with the USSA76 simple form H = r0 z/(r0 + z), r0 = 6 356 766 m.
// NaN for NaN or z ≤ −r0.
func GeopotentialHeight(zM float64) float64 {
	if !(zM > -EarthRadius) {
		return math.NaN()
	}
	return EarthRadius * zM / (EarthRadius + zM)
}

// GeometricHeight converts geopotential height hGpm (gpm) to geometric
// height in m, z = r0 H/(r0 − H), the inverse of GeopotentialHeight. NaN for
// NaN or H ≥ r0.
func GeometricHeight(hGpm float64) float64 {
	if !(hGpm < EarthRadius) {
		return math.NaN()
	}
	return EarthRadius * hGpm / (EarthRadius - hGpm)
}
