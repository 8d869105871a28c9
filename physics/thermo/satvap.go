package thermo

import (
	"fmt"
	"math"
)

// ZeroCelsiusK is the Celsius scale offset, 0 °C = 273.15 K.
const ZeroCelsiusK = 273.15

// SatVapFormula selects a saturation vapour pressure formula. The zero
// value is Bolton, the default.
type SatVapFormula uint8

const (
	// Bolton is Bolton (1980) eq. 10 over water, the default.
	Bolton SatVapFormula = iota
	// MagnusWater is the Magnus form recommended in the WMO CIMO Guide
	// (WMO-No. 8, 2008), over water.
	MagnusWater
	// MagnusIce is the WMO CIMO Guide Magnus form over ice.
	MagnusIce
	// GoffGratchWater is the Goff–Gratch equation over water
	// (Smithsonian Meteorological Tables, List 1951).
	GoffGratchWater
	// GoffGratchIce is the Goff–Gratch equation over ice.
	GoffGratchIce
	// HylandWexlerWater is Hyland & Wexler (1983) over water.
	HylandWexlerWater
	// HylandWexlerIce is Hyland & Wexler (1983) over ice.
	HylandWexlerIce
	numSatVapFormulas
)

var satVapNames = [numSatVapFormulas]string{"bolton", "magnus_wmo_water", "magnus_wmo_ice", "goff_gratch_water", "goff_gratch_ice", "hyland_wexler_water", "hyland_wexler_ice"}

// String returns the snake_case name of the formula, as recorded in outputs.
func (f SatVapFormula) String() string {
	if f < numSatVapFormulas {
		return satVapNames[f]
	}
	return fmt.Sprintf("satvap(%d)", uint8(f))
}

// SaturationVapourPressure returns the saturation vapour pressure in Pa at
// temperature tK (K) by the selected formula. It returns NaN for NaN or
// non-positive tK and for an unknown formula.
func (f SatVapFormula) SaturationVapourPressure(tK float64) float64 {
	switch f {
	case Bolton:
		return SatVapBolton(tK)
	case MagnusWater:
		return SatVapMagnusWater(tK)
	case MagnusIce:
		return SatVapMagnusIce(tK)
	case GoffGratchWater:
		return SatVapGoffGratchWater(tK)
	case GoffGratchIce:
		return SatVapGoffGratchIce(tK)
	case HylandWexlerWater:
		return SatVapHylandWexlerWater(tK)
	case HylandWexlerIce:
		return SatVapHylandWexlerIce(tK)
	}
	return math.NaN()
}

// validK returns tK when it is a usable absolute temperature, else NaN.
func validK(tK float64) float64 {
	if !(tK > 0) || math.IsInf(tK, 0) {
		return math.NaN()
	}
	return tK
}

// SatVapBolton returns the saturation vapour pressure over water in Pa,
//
//	es = 611.2 exp(17.67 t/(t + 243.5)),  t = tK − 273.15 in °C,
//
// Bolton (1980), Mon. Wea. Rev. 108, 1047, eq. 10; within 0.3 % for
// −35 < t < 35 °C. NaN for NaN or non-positive tK.
func SatVapBolton(tK float64) float64 {
	t := validK(tK) - ZeroCelsiusK
	return 611.2 * math.Exp(17.67*t/(t+243.5))
}

// SatVapMagnusWater returns the saturation vapour pressure over water in Pa,
//
//	ew = 611.2 exp(17.62 t/(243.12 + t)),  t in °C,
//
// the Magnus form of the WMO CIMO Guide (WMO-No. 8, 2008), intended for
// −45 to 60 °C. NaN for NaN or non-positive tK.
func SatVapMagnusWater(tK float64) float64 {
	t := validK(tK) - ZeroCelsiusK
	return 611.2 * math.Exp(17.62*t/(243.12+t))
}

// SatVapMagnusIce returns the saturation vapour pressure over ice in Pa,
//
//	ei = 611.2 exp(22.46 t/(272.62 + t)),  t in °C,
//
// the Magnus form of the WMO CIMO Guide (WMO-No. 8, 2008), intended for
// −65 to 0 °C. NaN for NaN or non-positive tK.
func SatVapMagnusIce(tK float64) float64 {
	t := validK(tK) - ZeroCelsiusK
	return 611.2 * math.Exp(22.46*t/(272.62+t))
}

// SatVapGoffGratchWater returns the saturation vapour pressure over water
// in Pa by the Goff–Gratch equation (Smithsonian Meteorological Tables,
// List 1951), with T = tK and Ts = 373.16 K:
//
//	log10 ew = −7.90298(Ts/T−1) + 5.02808 log10(Ts/T)
//	           − 1.3816e−7 (10^{11.344(1−T/Ts)} − 1)
//	           + 8.1328e−3 (10^{−3.49149(Ts/T−1)} − 1) + log10(1013.246)   [hPa]
//
// The classical tables (6.1078 hPa at 0 °C) were computed with
// T = t + 273.16; pass tK accordingly to reproduce them. NaN for NaN or
// non-positive tK.
func SatVapGoffGratchWater(tK float64) float64 {
	T := validK(tK)
	const ts = 373.16
	l := -7.90298*(ts/T-1) + 5.02808*math.Log10(ts/T) -
		1.3816e-7*(math.Pow(10, 11.344*(1-T/ts))-1) +
		8.1328e-3*(math.Pow(10, -3.49149*(ts/T-1))-1) + math.Log10(1013.246)
	return 100 * math.Pow(10, l)
}

// SatVapGoffGratchIce returns the saturation vapour pressure over ice in Pa
// by the Goff–Gratch equation (Smithsonian Meteorological Tables), with
// T = tK and T0 = 273.16 K:
//
//	log10 ei = −9.09718(T0/T−1) − 3.56654 log10(T0/T) + 0.876793(1−T/T0) + log10(6.1071)   [hPa]
//
// NaN for NaN or non-positive tK.
func SatVapGoffGratchIce(tK float64) float64 {
	T := validK(tK)
	const t0 = 273.16
	l := -9.09718*(t0/T-1) - 3.56654*math.Log10(t0/T) + 0.876793*(1-T/t0) + math.Log10(6.1071)
	return 100 * math.Pow(10, l)
}

// SatVapHylandWexlerWater returns the saturation vapour pressure over water
// in Pa by Hyland & Wexler (1983), ASHRAE Trans. 89(2A), valid 273–473 K:
//
//	ln ew = −5800.2206/T + 1.3914993 − 0.048640239 T + 4.1764768e−5 T²
//	        − 1.4452093e−8 T³ + 6.5459673 ln T                           [Pa]
//
// NaN for NaN or non-positive tK; values outside the range are returned
// unchecked (the formula extrapolates smoothly a little below 273 K).
func SatVapHylandWexlerWater(tK float64) float64 {
	T := validK(tK)
	return math.Exp(-5800.2206/T + 1.3914993 - 0.048640239*T + 4.1764768e-5*T*T -
		1.4452093e-8*T*T*T + 6.5459673*math.Log(T))
}

// SatVapHylandWexlerIce returns the saturation vapour pressure over ice in
// Pa by Hyland & Wexler (1983), valid 173–273 K:
//
//	ln ei = −5674.5359/T + 6.3925247 − 9.677843e−3 T + 6.2215701e−7 T²
//	        + 2.0747825e−9 T³ − 9.484024e−13 T⁴ + 4.1635019 ln T        [Pa]
//
// NaN for NaN or non-positive tK.
func SatVapHylandWexlerIce(tK float64) float64 {
	T := validK(tK)
	return math.Exp(-5674.5359/T + 6.3925247 - 9.677843e-3*T + 6.2215701e-7*T*T +
		2.0747825e-9*T*T*T - 9.484024e-13*T*T*T*T + 4.1635019*math.Log(T))
}
