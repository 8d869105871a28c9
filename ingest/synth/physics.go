package synth

import "math"

// Physical constants, SI units.
const (
	rdJPerKgK = 287.04749       // gas constant of dry air, J/(kg K) (METHODS §1.6)
	g0MPerS2  = 9.80665         // standard gravity, m/s² (USSA76, METHODS §1.1)
	kappa     = 2.0 / 7.0       // Rd/cp with cp = 3.5 Rd (METHODS §1.1)
	epsilon   = 0.6219569100577 // Rd/Rv = Mw/Md (METHODS §1.1; the thermo.CODATA2018 value)
	p0Pa      = 100000.0        // reference pressure of θ, Pa (METHODS §1.2)
	zeroCK    = 273.15          // 0 °C in K
	// dryLapseKPerM is the dry-adiabatic lapse rate g0/cp ≈ 9.76 K/km
	// (METHODS §1.2).
	dryLapseKPerM = g0MPerS2 / (3.5 * rdJPerKgK)
)

// satVapourPressureHPa returns the saturation vapour pressure over water in
// hPa for a temperature tC in °C: es = 6.112 exp(17.67 t/(t + 243.5))
// (Bolton 1980 eq. 10; METHODS §1.3).
func satVapourPressureHPa(tC float64) float64 {
	return 6.112 * math.Exp(17.67*tC/(tC+243.5))
}

// dewpointC inverts Bolton's formula: the dewpoint in °C at which the
// saturation vapour pressure equals eHPa (hPa, > 0): Td = 243.5 L/(17.67 − L),
// L = ln(e/6.112) (METHODS §1.4).
func dewpointC(eHPa float64) float64 {
	l := math.Log(eHPa / 6.112)
	return 243.5 * l / (17.67 - l)
}

// mixingRatio returns w = ε e/(p − e) in kg/kg for a dewpoint tdK in K at
// pressure pPa in Pa (METHODS §1.4).
func mixingRatio(tdK, pPa float64) float64 {
	e := satVapourPressureHPa(tdK - zeroCK)
	p := pPa / 100
	return epsilon * e / (p - e)
}

// virtualTemperatureW returns Tv = T (w + ε)/(ε (1 + w)) in K for T in K and
// the mixing ratio w in kg/kg (METHODS §1.5).
func virtualTemperatureW(tK, w float64) float64 {
	return tK * (w + epsilon) / (epsilon * (1 + w))
}

// dewpointFromW returns the dewpoint in K of air with mixing ratio w (kg/kg)
// at pressure pPa (Pa): e = p w/(w + ε), then Bolton's inverse.
func dewpointFromW(w, pPa float64) float64 {
	e := pPa / 100 * w / (w + epsilon)
	return dewpointC(e) + zeroCK
}
