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
// (METHODS §4.1, after Holzworth 1964/1967): the lowest height at which the
// environmental θ ≥ θ0, interpolated linearly in z between levels.
// zAGLM (m) and thetaK (K) describe the profile upward; index 0 is the
// surface level and is not searched. Levels with NaN height or θ are
// skipped.
//
// Status is MixingHeightSurface with height 0 when θ0 < θ of the first valid
// level above the surface, MixingHeightUndefined with NaN when no crossing lies
// at or below ceilingAGLM (or fewer than two levels, NaN θ0, or mismatched
// slices), else MixingHeightOK.
func ParcelMixingHeight(zAGLM, thetaK []float64, theta0K, ceilingAGLM float64) (heightAGLM float64, status MixingHeightStatus) {
	nan := math.NaN()
	if len(zAGLM) != len(thetaK) || math.IsNaN(theta0K) {
		return nan, MixingHeightUndefined
	}
	prev := -1
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
