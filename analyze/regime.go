package analyze

import (
	"math"

	"github.com/sondeclim/sondeclim/physics/sun"
)

// BLRegime is the boundary-layer regime of a sounding (Result.Regime), the
// column soundings.bl_regime. It decides which mixing-height methods may
// enter the consensus (Method.Regimes, METHODS §4.6a).
type BLRegime string

// Boundary-layer regimes.
const (
	// BLConvective: the ground heats the air and mixes it upward; the
	// mixing height is the top of the convective (or, near sunset, the
	// decaying afternoon) mixed layer.
	BLConvective BLRegime = "convective"
	// BLStable: a stable (nocturnal) boundary layer rests on the ground;
	// the mixing height is its depth. The layer above it up to the
	// previous day's capping inversion is the residual layer
	// (Result.ResidualTopAGLM), not mixed from the ground.
	BLStable BLRegime = "stable"
	// BLNeutral: sun below the horizon but no stable layer at the ground
	// (windy or overcast nights): a mechanically mixed, near-neutral
	// layer, coupled with the residual layer above it.
	BLNeutral BLRegime = "neutral"
	// BLUnknown: no sun class (no position) and no Liu–Liang regime; the
	// consensus then uses every consensus method, as before the regimes.
	BLUnknown BLRegime = ""
)

// BLRegimes lists the regimes a method may serve, in documentation order.
var BLRegimes = []BLRegime{BLConvective, BLStable, BLNeutral}

// ClassifyRegime returns the boundary-layer regime of a sounding from its
// sun class (package sun), whether a significant surface-based inversion
// is present, and its Liu–Liang regime (RegimeConvective, RegimeNeutral,
// RegimeStable or "" when undefined). The rule (METHODS §4.6a; the split
// into three regimes and the near-surface θ test are Liu & Liang 2010,
// J. Climate 23, 5790; combining them with the sun and the surface
// inversion is our proposal, no source):
//
//  1. stable when a surface-based inversion is present (it passed the
//     significance rule, InversionConfig), or when the Liu–Liang regime is
//     SBL (θ rises by more than δs between the 2nd and 5th 5-hPa grid
//     levels, a stable layer based just above the ground);
//  2. otherwise, with the sun above the horizon (day or low sun):
//     convective — by day, and in the morning once the night's inversion
//     is gone, and in the evening before one has formed;
//  3. otherwise, with the sun below the horizon (civil twilight or night):
//     neutral;
//  4. without a sun class (no position): the Liu–Liang regime alone, CBL
//     convective and NRL neutral; unknown when that is undefined too.
func ClassifyRegime(sunClass sun.Class, sbiPresent bool, liuLiang LiuLiangRegime) BLRegime {
	switch {
	case sbiPresent || liuLiang == RegimeStable:
		return BLStable
	case sunClass == sun.Day || sunClass == sun.LowSun:
		return BLConvective
	case sun.Below(sunClass):
		return BLNeutral
	case liuLiang == RegimeConvective:
		return BLConvective
	case liuLiang == RegimeNeutral:
		return BLNeutral
	}
	return BLUnknown
}

// fitsRegime reports whether method m's result may define the mixing
// height of a sounding in regime g: g is among m.Regimes (an unknown
// regime admits every method) and, for the Liu–Liang method, its own
// regime agrees — its SBL height only in the stable regime, its CBL/NRL
// height only outside it (the two are different constructions, §4.4).
func fitsRegime(m Method, g BLRegime, liuLiang LiuLiangRegime) bool {
	if g == BLUnknown {
		return true
	}
	if m.Name == MethodLiuLiang && (g == BLStable) != (liuLiang == RegimeStable) {
		return false
	}
	for _, r := range m.Regimes {
		if r == g {
			return true
		}
	}
	return false
}

// regimeConsensus appends to out the names in names whose methods fit
// regime g, and returns it.
func regimeConsensus(out, names []string, g BLRegime, liuLiang LiuLiangRegime) []string {
	for _, name := range names {
		if m, ok := LookupMethod(name); ok && fitsRegime(m, g, liuLiang) {
			out = append(out, name)
		}
	}
	return out
}

// residualTop returns the top of the residual layer, m AGL, for a sounding
// in the stable or neutral regime (NaN in the others, or when none is
// found): the previous day's mixed layer, left aloft when the ground cooled,
// is capped by the inversion that capped it in the afternoon (Stull 1988,
// An Introduction to Boundary Layer Meteorology, §1.5, from memory). Its top
// is the base of the lowest (significant) elevated inversion above the
// night's mixing height floor, and below maxAGLM; failing that, the
// Heffter height when it lies above the floor (Heffter's critical layer,
// found from the ground up, is then the residual layer's cap). floor is the
// regime's mixing height, or the top of the surface-based inversion when
// that is higher or the mixing height is undefined.
func (r *Result) residualTop(maxAGLM float64) float64 {
	nan := math.NaN()
	if r.Regime != BLStable && r.Regime != BLNeutral {
		return nan
	}
	floor := 0.0
	if c := r.MixingHeightConsensus; c.Status == MixingHeightOK {
		floor = c.HeightAGLM
	}
	if r.SBI.Present && r.SBI.TopAGLM > floor {
		floor = r.SBI.TopAGLM
	}
	for _, v := range r.Inversions {
		if !v.SurfaceBased && v.BaseAGLM > floor && v.BaseAGLM <= maxAGLM {
			return v.BaseAGLM
		}
	}
	if h, ok := r.MixingHeight(MethodHeffter); ok && h.Status == MixingHeightOK && h.HeightAGLM > floor {
		return h.HeightAGLM
	}
	return nan
}
