package analyze

import "math"

// ---- 5 hPa gridding shared by Heffter and Liu & Liang ----

// grid is a profile resampled at fixed pressure steps from the surface.
type grid struct{ p, z, theta, speed []float64 }

// grid resamples the first n profile levels at p0, p0 − step, p0 − 2 step,
// … down to the highest searched level, interpolating z, θ and the wind
// components linearly in ln p (speed from the interpolated components; NaN
// where a bracketing wind is missing).
func (pr profile) grid(n int, stepPa float64, sc *scratch) grid {
	if n < 2 || !(stepPa > 0) {
		return grid{}
	}
	m := int((pr.p[0]-pr.p[n-1])/stepPa) + 1
	buf := sc.floats(4 * m)
	g := grid{p: buf[:m], z: buf[m : 2*m], theta: buf[2*m : 3*m], speed: buf[3*m:]}
	k := 1
	denK, den := 0, 0.0 // ln(p[k−1]/p[k]) of the bracket denK, computed once per bracket
	for j := 0; j < m; j++ {
		pj := pr.p[0] - float64(j)*stepPa
		for k < n-1 && pr.p[k] > pj {
			k++
		}
		if k != denK {
			denK, den = k, math.Log(pr.p[k-1]/pr.p[k])
		}
		f := math.Log(pr.p[k-1]/pj) / den
		// The bracket's two values of each variable, one bounds test each.
		z, th, u, v := pr.z[k-1:k+1], pr.theta[k-1:k+1], pr.u[k-1:k+1], pr.v[k-1:k+1]
		g.p[j], g.z[j], g.theta[j] = pj, lerp(z[0], z[1], f), lerp(th[0], th[1], f)
		g.speed[j] = math.Hypot(lerp(u[0], u[1], f), lerp(v[0], v[1], f))
	}
	return g
}

// lerp returns a + f (b − a).
func lerp(a, b, f float64) float64 { return a + f*(b-a) }

// ---- Heffter (1980), METHODS §4.2 ----

// HeffterConfig parameterises the Heffter method. Defaults from METHODS
// §4.2 (a toolkit's documentation citing Heffter 1980).
type HeffterConfig struct {
	GridStepPa       float64 // default 500 Pa (5 hPa)
	MinGradientKPerM float64 // critical dθ/dz, default 0.005 K/m
	MinThetaJumpK    float64 // θ_top − θ_base must exceed this; default 2 K
	MaxLayers        int     // lowest critical layers examined; default 5
	MaxBaseAGLM      float64 // critical-layer bases below this; default 4000 m
}

// DefaultHeffterConfig returns the defaults documented on the fields.
func DefaultHeffterConfig() HeffterConfig {
	return HeffterConfig{GridStepPa: 500, MinGradientKPerM: 0.005, MinThetaJumpK: 2, MaxLayers: 5, MaxBaseAGLM: 4000}
}

// HeffterHeight returns the Heffter (1980) boundary-layer height in m AGL
// of a profile already gridded at cfg.GridStepPa (zAGLM in m, increasing;
// thetaK in K), with a status and note (METHODS §4.2):
//
// Critical layers are maximal runs of grid intervals with
// dθ/dz ≥ MinGradientKPerM. Of the lowest MaxLayers critical layers with
// base below MaxBaseAGLM, the height is the base of the lowest whose
// θ_top − θ_base > MinThetaJumpK; when none qualifies, the base of the one
// with the largest Δθ (note "largest_jump"). A base at the ground gives
// status surface (height 0). No critical layer: undefined "no_critical_layer".
// NaN grid values end a layer and are never part of one.
func HeffterHeight(zAGLM, thetaK []float64, cfg HeffterConfig) (heightAGLM float64, status MixingHeightStatus, note string) {
	nan := math.NaN()
	if len(zAGLM) != len(thetaK) || len(zAGLM) < 2 {
		return nan, MixingHeightUndefined, "too_few_levels"
	}
	found, best, bestJump := 0, -1, math.Inf(-1)
	base := -1
	finish := func(b, t int) (int, bool) { // returns chosen base, done
		found++
		jump := thetaK[t] - thetaK[b]
		if jump > cfg.MinThetaJumpK {
			return b, true
		}
		if jump > bestJump {
			best, bestJump = b, jump
		}
		return -1, found >= cfg.MaxLayers
	}
	result := -1
	for j := 0; j+1 < len(zAGLM) && result < 0; j++ {
		dz := zAGLM[j+1] - zAGLM[j]
		crit := dz > 0 && (thetaK[j+1]-thetaK[j])/dz >= cfg.MinGradientKPerM
		if crit && base < 0 {
			if zAGLM[j] >= cfg.MaxBaseAGLM {
				break
			}
			base = j
		}
		if !crit && base >= 0 {
			b, done := finish(base, j)
			base = -1
			if b >= 0 {
				result = b
			} else if done {
				break
			}
		}
	}
	if result < 0 && base >= 0 && found < cfg.MaxLayers {
		if b, _ := finish(base, len(zAGLM)-1); b >= 0 {
			result = b
		}
	}
	note = ""
	if result < 0 {
		if best < 0 {
			return nan, MixingHeightUndefined, "no_critical_layer"
		}
		result, note = best, "largest_jump"
	}
	if zAGLM[result] <= zAGLM[0] {
		return 0, MixingHeightSurface, note
	}
	return zAGLM[result] - zAGLM[0], MixingHeightOK, note
}

// ---- Liu & Liang (2010), METHODS §4.4 ----

// LiuLiangRegime is a boundary-layer regime as Liu & Liang (2010) name
// them (the column soundings.liu_liang_regime).
type LiuLiangRegime string

// Liu & Liang regimes.
const (
	RegimeConvective LiuLiangRegime = "CBL"
	RegimeNeutral    LiuLiangRegime = "NRL"
	RegimeStable     LiuLiangRegime = "SBL"
)

// LiuLiangRegimes returns the Liu & Liang regimes in the order above.
func LiuLiangRegimes() []LiuLiangRegime {
	return []LiuLiangRegime{RegimeConvective, RegimeNeutral, RegimeStable}
}

// LiuLiangConfig parameterises the Liu & Liang (2010) method. Thresholds
// as implemented by a general-purpose toolkit (METHODS §4.4; the paper
// itself was not read): use LiuLiangLand or LiuLiangOcean.
type LiuLiangConfig struct {
	Surface               string  // "land" or "ocean", recorded
	GridStepPa            float64 // 500 Pa (5 hPa)
	RegimeThresholdK      float64 // δs: land 1.0 K, ocean 0.2 K
	OnsetK                float64 // δu: land 0.5 K, ocean 0.1 K
	CriticalGradientKPerM float64 // θ̇r: land 4 K/km, ocean 0.5 K/km
	// MinSearchAGLM: the CBL/NRL search for the onset level starts at this
	// height; default 0 (one implementation skips 150 m, METHODS §4.4).
	MinSearchAGLM float64
	// SBL thermal top: a drop of the gradient by more than
	// GradientDropKPerM from the level below; default 40 K/km.
	GradientDropKPerM float64
	// Low-level jet (SBL shear top): a wind maximum at or below
	// JetMaxAGLM exceeding the minimum speed above it (up to JetMaxAGLM)
	// by more than JetMinExcessMS. Defaults 1500 m and 2 m/s.
	JetMaxAGLM     float64
	JetMinExcessMS float64
}

// LiuLiangLand returns the land thresholds (METHODS §4.4).
func LiuLiangLand() LiuLiangConfig {
	return LiuLiangConfig{Surface: "land", GridStepPa: 500, RegimeThresholdK: 1.0, OnsetK: 0.5,
		CriticalGradientKPerM: 0.004, GradientDropKPerM: 0.040, JetMaxAGLM: 1500, JetMinExcessMS: 2}
}

// LiuLiangOcean returns the ocean thresholds (METHODS §4.4).
func LiuLiangOcean() LiuLiangConfig {
	c := LiuLiangLand()
	c.Surface, c.RegimeThresholdK, c.OnsetK, c.CriticalGradientKPerM = "ocean", 0.2, 0.1, 0.0005
	return c
}

// LiuLiangHeight returns the Liu & Liang (2010) boundary-layer height in m
// AGL of a profile gridded at cfg.GridStepPa (zAGLM in m increasing,
// thetaK in K, speedMS in m/s, NaN where missing), the regime, a status
// and a note. With 1-based grid levels as in METHODS §4.4:
//
//  1. Regime from Δθ = θ5 − θ2: CBL when < −δs, SBL when > +δs, else NRL.
//  2. CBL/NRL: the onset k is the lowest level (at or above MinSearchAGLM)
//     with θk − θ1 ≥ δu; the height is the lowest level j ≥ k whose
//     gradient to the next level is ≥ θ̇r.
//  3. SBL thermal top: the lowest level k ≥ 2 where the gradient g_k (to
//     the next level) is a local minimum (g_k < g_{k−1}, g_k ≤ g_{k+1})
//     and either g_{k−1} − g_k > GradientDropKPerM or one of g_{k+1},
//     g_{k+2} is below θ̇r (our reading of the toolkit's description).
//  4. SBL shear top: the nose of a low-level jet — the first speed maximum
//     (speed non-decreasing from the ground to it), at or below
//     JetMaxAGLM, exceeding the lowest speed above it up to JetMaxAGLM by
//     more than JetMinExcessMS. Missing speeds: no jet.
//  5. SBL height: the lower of the two tops (note "thermal" or "llj").
//
// Fewer than 5 grid levels: undefined "too_few_levels"; no level found:
// undefined "no_crossing".
func LiuLiangHeight(zAGLM, thetaK, speedMS []float64, cfg LiuLiangConfig) (heightAGLM float64, regime LiuLiangRegime, status MixingHeightStatus, note string) {
	nan := math.NaN()
	n := len(zAGLM)
	if len(thetaK) != n || len(speedMS) != n || n < 5 {
		return nan, "", MixingHeightUndefined, "too_few_levels"
	}
	grad := func(j int) float64 {
		if j < 0 || j+1 >= n {
			return nan
		}
		return (thetaK[j+1] - thetaK[j]) / (zAGLM[j+1] - zAGLM[j])
	}
	d := thetaK[4] - thetaK[1]
	regime = RegimeNeutral
	switch {
	case d < -cfg.RegimeThresholdK:
		regime = RegimeConvective
	case d > cfg.RegimeThresholdK:
		regime = RegimeStable
	case math.IsNaN(d):
		return nan, "", MixingHeightUndefined, "missing_theta"
	}
	ok := func(z float64, note string) (float64, LiuLiangRegime, MixingHeightStatus, string) {
		return z - zAGLM[0], regime, MixingHeightOK, note
	}
	if regime != RegimeStable {
		for k := 1; k < n; k++ {
			if zAGLM[k]-zAGLM[0] < cfg.MinSearchAGLM || !(thetaK[k]-thetaK[0] >= cfg.OnsetK) {
				continue
			}
			for j := k; j+1 < n; j++ {
				if grad(j) >= cfg.CriticalGradientKPerM {
					return ok(zAGLM[j], "")
				}
			}
			break
		}
		return nan, regime, MixingHeightUndefined, "no_crossing"
	}
	thermal := nan
	for k := 1; k+1 < n; k++ {
		gk, gb, ga := grad(k), grad(k-1), grad(k+1)
		// Local minimum, with 0.001 K/km of slack so that a constant
		// gradient above counts despite rounding.
		if !(gk < gb) || gk > ga+1e-6 {
			continue
		}
		if gb-gk > cfg.GradientDropKPerM || ga < cfg.CriticalGradientKPerM || grad(k+2) < cfg.CriticalGradientKPerM {
			thermal = zAGLM[k]
			break
		}
	}
	shear := nan
	for j := 1; j+1 < n && zAGLM[j]-zAGLM[0] <= cfg.JetMaxAGLM; j++ {
		if math.IsNaN(speedMS[j]) || math.IsNaN(speedMS[j-1]) || speedMS[j] < speedMS[j-1] {
			break
		}
		if speedMS[j+1] >= speedMS[j] {
			continue
		}
		lo := math.Inf(1)
		for i := j + 1; i < n && zAGLM[i]-zAGLM[0] <= cfg.JetMaxAGLM; i++ {
			lo = min(lo, speedMS[i])
		}
		if speedMS[j]-lo > cfg.JetMinExcessMS {
			shear = zAGLM[j]
		}
		break
	}
	switch {
	case !math.IsNaN(shear) && !(shear >= thermal):
		return ok(shear, "llj")
	case !math.IsNaN(thermal):
		return ok(thermal, "thermal")
	}
	return nan, regime, MixingHeightUndefined, "no_crossing"
}
