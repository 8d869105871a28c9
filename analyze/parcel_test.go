package analyze

import (
	"math"
	"testing"
)

// TestAfternoonParcelBelowFirstLevel checks the Holzworth construction
// (Holzworth 1964, Mon. Wea. Rev. 92:235; 1967, J. Appl. Meteor. 6:1039;
// METHODS §4.1) where the crossing lies between the surface and the first
// reported level: the dry adiabat θ0 = Tmax (p0/p_sfc)^κ from the surface
// meets the morning θ profile, which is linear in height between reported
// levels, so with θ_sfc < θ0 < θ1 the height is z1 (θ0 − θ_sfc)/(θ1 − θ_sfc).
// κ = Rd/cp = 0.2857 (US Standard Atmosphere 1976: Rd = 287.053 J kg⁻¹ K⁻¹,
// cp = 1004.68 J kg⁻¹ K⁻¹ → 0.28572, from memory); p0 = 1000 hPa.
// Morning profile with standard levels only (a shallow surface inversion
// reported only by its 925 hPa level, 690 m up): the hand value is ≈ 328 m.
func TestAfternoonParcelBelowFirstLevel(t *testing.T) {
	const kappa, p0 = 0.2857, 100000.0
	p := []float64{100000, 92500, 85000, 70000} // Pa
	tC := []float64{10, 12, 8, -2}              // °C
	z := []float64{0, 690, 1400, 2950}          // m AGL
	theta := make([]float64, len(p))
	for i := range p {
		theta[i] = (tC[i] + 273.15) * math.Pow(p0/p[i], kappa)
	}
	prof := ParcelProfile{SurfacePressurePa: p[0], SurfaceTemperatureK: tC[0] + 273.15, CeilingAGLM: 5000,
		Kappa: kappa, P0Pa: p0, HeightAGLM: z, ThetaK: theta}
	const tmaxC = 14.0
	th0 := (tmaxC + 273.15) * math.Pow(p0/p[0], kappa)
	if !(theta[0] < th0 && th0 < theta[1]) {
		t.Fatalf("test profile: θ0 %.2f K not between θ_sfc %.2f K and θ1 %.2f K", th0, theta[0], theta[1])
	}
	want := z[1] * (th0 - theta[0]) / (theta[1] - theta[0]) // hand construction, ≈ 328 m
	mh := AfternoonMixingHeight(prof, tmaxC+273.15)
	if mh.Status != MixingHeightOK || math.Abs(mh.HeightAGLM-want) > 0.5 {
		t.Errorf("afternoon height %v m %q, want %.1f m ok (hand construction)", mh.HeightAGLM, mh.Status, want)
	}
	// The parcel cannot rise: Tmax equal to or below the surface
	// temperature under the inversion gives surface, 0 m (METHODS §4.1).
	for _, tmax := range []float64{tC[0], tC[0] - 1} {
		mh := AfternoonMixingHeight(prof, tmax+273.15)
		if mh.Status != MixingHeightSurface || mh.HeightAGLM != 0 {
			t.Errorf("Tmax %.1f °C: %v m %q, want 0 m surface", tmax, mh.HeightAGLM, mh.Status)
		}
	}
}
