package analyze

import "math"

// Parcel is the parcel (Holzworth-type) mixing height of a sounding.
type Parcel struct {
	Status     MixingHeightStatus
	HeightAGLM float64 // m AGL; 0 for surface, NaN for undefined
	Theta0K    float64 // K; potential temperature of the lifted parcel
}

// ParcelMixingHeight returns the mixing height in m AGL where the dry
// adiabat θ0 meets the environmental potential-temperature profile
// (METHODS §4.1, after Holzworth 1964/1967): the lowest height above the
// surface at which the environmental θ ≥ θ0, the profile taken linear in z
// between levels, the surface level (index 0) included. zAGLM (m) and
// thetaK (K) describe the profile upward; index 0 is the surface level.
// Levels above it with NaN height or θ are skipped.
//
// When θ_sfc < θ0 the parcel is warmer than the surface air and rises: the
// crossing is interpolated from the surface upward, so it can lie between
// the surface and the first level above it (with standard levels only that
// level can be hundreds of metres up). When θ0 ≤ θ_sfc the parcel is no
// warmer than the surface air; it rises only through a superadiabatic layer
// (θ falling above the surface) and otherwise cannot rise.
//
// Status is MixingHeightSurface with height 0 when the parcel cannot rise:
// θ0 ≤ θ_sfc and θ0 < θ of the first valid level above the surface (with a
// NaN surface level, θ0 < θ of the first valid level). It is
// MixingHeightUndefined with NaN when no crossing lies at or below
// ceilingAGLM (or fewer than two levels, NaN θ0, or mismatched slices),
// else MixingHeightOK. METHODS §4.1 words the surface rule as θ0 < θ(first
// level above the surface); that reading drops the crossings below the
// first level, which its own linear-in-z construction places there.
func ParcelMixingHeight(zAGLM, thetaK []float64, theta0K, ceilingAGLM float64) (heightAGLM float64, status MixingHeightStatus) {
	nan := math.NaN()
	if len(zAGLM) != len(thetaK) || math.IsNaN(theta0K) {
		return nan, MixingHeightUndefined
	}
	prev := -1
	if len(zAGLM) > 0 && !math.IsNaN(zAGLM[0]) && thetaK[0] < theta0K {
		prev = 0 // buoyant at the surface: interpolate from the surface up
	}
	for k := 1; k < len(zAGLM); k++ {
		z, th := zAGLM[k], thetaK[k]
		if math.IsNaN(z) || math.IsNaN(th) {
			continue
		}
		if z > ceilingAGLM && (prev < 0 || th < theta0K) {
			return nan, MixingHeightUndefined
		}
		switch {
		case prev < 0 && theta0K < th:
			return 0, MixingHeightSurface
		case th >= theta0K:
			h := z
			if prev >= 0 && th > thetaK[prev] {
				h = zAGLM[prev] + (theta0K-thetaK[prev])/(th-thetaK[prev])*(z-zAGLM[prev])
			}
			if h > ceilingAGLM {
				return nan, MixingHeightUndefined
			}
			return h, MixingHeightOK
		}
		prev = k
	}
	return nan, MixingHeightUndefined
}
