package analyze

import (
	"fmt"
	"math"

	"github.com/sondeclim/sondeclim/physics/thermo"
)

// HeatDeficitReference is the kind of the heat deficit's top
// (HeatDeficitConfig.Reference).
type HeatDeficitReference string

// Reference kinds of the heat deficit's top.
const (
	HeatDeficitAGL      HeatDeficitReference = "agl"      // a fixed height above ground
	HeatDeficitMSL      HeatDeficitReference = "msl"      // a height above mean sea level, e.g. a basin's rim
	HeatDeficitPressure HeatDeficitReference = "pressure" // a pressure level
)

// HeatDeficitConfig sets the reference height h of the heat deficit
// (HeatDeficit). Reference is HeatDeficitAGL (HeightM is m above ground),
// HeatDeficitMSL (HeightM is gpm above mean sea level) or
// HeatDeficitPressure (PressurePa). The default is 1000 m above ground
// (proposal, no source: about the depth of the basin cold pools the heat
// deficit was introduced for; a basin's rim height, HeatDeficitMSL, is the
// better choice where one exists, as in Whiteman, Bian & Zhong 1999).
type HeatDeficitConfig struct {
	Reference  HeatDeficitReference
	HeightM    float64 // m AGL (agl) or gpm MSL (msl)
	PressurePa float64 // Pa (pressure)
}

// DefaultHeatDeficitConfig returns the default documented on
// HeatDeficitConfig.
func DefaultHeatDeficitConfig() HeatDeficitConfig {
	return HeatDeficitConfig{Reference: HeatDeficitAGL, HeightM: 1000}
}

// Label names the reference as recorded with every result, e.g.
// "agl_1000m", "msl_2200m" or "p_850hpa"; "" when the configuration is
// not valid.
func (c HeatDeficitConfig) Label() string {
	switch {
	case c.Reference == HeatDeficitAGL && c.HeightM > 0:
		return fmt.Sprintf("agl_%gm", c.HeightM)
	case c.Reference == HeatDeficitMSL && !math.IsNaN(c.HeightM) && !math.IsInf(c.HeightM, 0):
		return fmt.Sprintf("msl_%gm", c.HeightM)
	case c.Reference == HeatDeficitPressure && c.PressurePa > 0:
		return fmt.Sprintf("p_%ghpa", c.PressurePa/100)
	}
	return ""
}

// TopAGL returns the reference height h in m above ground for a profile
// with heights zAGLM (m AGL) and pressures pPa (surface first), whose
// ground lies groundMSLM gpm above mean sea level: HeightM itself, HeightM
// minus the ground, or the height of the pressure level interpolated
// linearly in ln p. NaN when it cannot be placed (invalid configuration,
// unknown ground for a sea-level reference, pressure level outside the
// profile).
func (c HeatDeficitConfig) TopAGL(zAGLM, pPa []float64, groundMSLM float64) float64 {
	return c.topAGL(zAGLM, pPa, groundMSLM, c.Label() != "")
}

// topAGL is TopAGL, told whether c has a Label (is valid).
func (c HeatDeficitConfig) topAGL(zAGLM, pPa []float64, groundMSLM float64, labelled bool) float64 {
	if !labelled {
		return math.NaN()
	}
	switch c.Reference {
	case HeatDeficitAGL:
		return c.HeightM
	case HeatDeficitMSL:
		return c.HeightM - groundMSLM // NaN when the ground is unknown
	}
	return thermo.InterpolateLogP(pPa, zAGLM, c.PressurePa)
}

// HeatDeficit returns the heat deficit of the layer from the lowest level
// of the profile up to the reference height topAGLM,
//
//	H = c_p ∫_{z_s}^{h} ρ(z) [θ(h) − θ(z)] dz,    ρ = p / (R_d T),
//
// in J m⁻² (divide by 10⁶ for MJ m⁻²): the heat that would have to be
// added to the column to bring every level to the potential temperature
// θ(h) at the top, i.e. to mix the layer out to a uniform θ(h). It is the
// column-integrated, energy form of the "accumulated cooling" of the AMS
// Glossary (the area between θ(h) and the θ profile, there in kinematic
// units K m) and is the stability measure of basin cold-air-pool studies
// (Whiteman, Bian & Zhong 1999, J. Appl. Meteor. 38, 1103).
//
// The profile is given by parallel slices, lowest level first and heights
// increasing: zAGLM (m above ground), pPa (Pa), tK (K) and thetaK (K).
// Levels with a NaN in any of them are skipped. θ and T at h are
// interpolated linearly in height and p linearly in ln p; the integrand is
// integrated by the trapezoidal rule over the levels (the profile's own
// resolution; radiosonde significant levels are where the profile bends,
// so linear interpolation between them is the sounding's own model). cpd
// and rd are the specific heat (J kg⁻¹ K⁻¹) and gas constant of dry air;
// density uses the temperature, not the virtual temperature (the moisture
// correction is below 0.5 % in cold-pool conditions).
//
// Edge cases: NaN when fewer than two usable levels, when topAGLM is NaN or
// not above the lowest level, or when the profile does not reach topAGLM
// (no extrapolation). H is zero for a dry-adiabatic (constant-θ) layer and
// negative where the layer is warmer than θ(h) (superadiabatic), which is
// kept rather than clipped so that sums and means stay honest.
func HeatDeficit(zAGLM, pPa, tK, thetaK []float64, topAGLM, cpd, rd float64) float64 {
	n := len(zAGLM)
	if len(pPa) != n || len(tK) != n || len(thetaK) != n || math.IsNaN(topAGLM) || !(cpd > 0) || !(rd > 0) {
		return math.NaN()
	}
	var z, rho, th [64]float64
	zs, rhos, ths := z[:0], rho[:0], th[:0]
	for i := range zAGLM {
		if math.IsNaN(zAGLM[i]) || !(pPa[i] > 0) || !(tK[i] > 0) || math.IsNaN(thetaK[i]) {
			continue
		}
		if len(zs) > 0 && !(zAGLM[i] > zs[len(zs)-1]) {
			continue // heights must increase; a repeated height adds no layer
		}
		zs, rhos, ths = append(zs, zAGLM[i]), append(rhos, pPa[i]/(rd*tK[i])), append(ths, thetaK[i])
		if zAGLM[i] >= topAGLM {
			break
		}
	}
	m := len(zs)
	if m < 2 || !(topAGLM > zs[0]) || zs[m-1] < topAGLM {
		return math.NaN()
	}
	// Replace the last level (at or above h) by the values at h.
	lo, hi := m-2, m-1
	f := (topAGLM - zs[lo]) / (zs[hi] - zs[lo])
	thH := ths[lo] + f*(ths[hi]-ths[lo])
	// ρ at h from p (ln p linear) and T (linear): both follow from the
	// bracketing densities' parts; interpolating ln ρ is equivalent to
	// first order and keeps the integrand smooth.
	rhoH := math.Exp(math.Log(rhos[lo]) + f*(math.Log(rhos[hi])-math.Log(rhos[lo])))
	zs[hi], rhos[hi], ths[hi] = topAGLM, rhoH, thH
	sum := 0.0
	for i := 1; i < m; i++ {
		a := rhos[i-1] * (thH - ths[i-1])
		b := rhos[i] * (thH - ths[i])
		sum += 0.5 * (a + b) * (zs[i] - zs[i-1])
	}
	return cpd * sum
}

// StableLayerConfig parameterises the deep stable layer of Wolyn & McKee
// (1989, Mon. Wea. Rev.): a sounding is under a deep stable layer when at
// least MinFraction of the lowest DepthM above ground has a lapse rate of
// MaxLapseKPerKm or less. Defaults 1500 m, 2.5 K/km and 0.65, from that
// paper's abstract (their 12 UTC, about 05 MST, sounding; seen on the
// abstract page, not the full text).
type StableLayerConfig struct {
	DepthM         float64 // m above ground
	MaxLapseKPerKm float64 // K/km; lapse rate −dT/dz
	MinFraction    float64 // 0–1
}

// DefaultStableLayerConfig returns the defaults documented on
// StableLayerConfig.
func DefaultStableLayerConfig() StableLayerConfig {
	return StableLayerConfig{DepthM: 1500, MaxLapseKPerKm: 2.5, MinFraction: 0.65}
}

// StableLayerFraction returns the fraction (0–1) of the layer from the
// lowest level up to depthM above it in which the lapse rate −dT/dz is at
// most maxLapseKPerKm (K/km), for a profile of heights zAGLM (m, increasing)
// and temperatures tK (K). Temperature varies linearly between levels, so
// each layer between adjacent levels has one lapse rate and counts whole
// or not at all; the layer holding the top is clipped there. Levels with
// NaN are skipped. NaN when fewer than two usable levels, when depthM is
// not positive or when the profile does not reach the top.
func StableLayerFraction(zAGLM, tK []float64, depthM, maxLapseKPerKm float64) float64 {
	if len(zAGLM) != len(tK) || !(depthM > 0) || math.IsNaN(maxLapseKPerKm) {
		return math.NaN()
	}
	prev := -1
	base, stable, reached := math.NaN(), 0.0, false
	for i := range zAGLM {
		if math.IsNaN(zAGLM[i]) || !(tK[i] > 0) {
			continue
		}
		if prev < 0 {
			prev, base = i, zAGLM[i]
			continue
		}
		dz := zAGLM[i] - zAGLM[prev]
		if !(dz > 0) {
			continue
		}
		lapse := -(tK[i] - tK[prev]) / dz * 1000
		top := min(zAGLM[i], base+depthM)
		if lapse <= maxLapseKPerKm {
			stable += top - zAGLM[prev]
		}
		prev = i
		if zAGLM[i] >= base+depthM {
			reached = true
			break
		}
	}
	if !reached {
		return math.NaN()
	}
	return stable / depthM
}

// HeatDeficitResult is the heat deficit of one sounding.
type HeatDeficitResult struct {
	Reference string  // HeatDeficitConfig.Label of the reference used
	TopAGLM   float64 // m AGL, the reference height h placed on this profile (NaN when it cannot be)
	JPerM2    float64 // J m⁻², NaN when not computable
}
