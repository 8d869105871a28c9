package analyze

import "math"

// MixedLayer is the lowest well-mixed layer (METHODS §2). Heights are m
// AGL.
type MixedLayer struct {
	Found bool
	// BaseAGLM is where the search starts: the surface level, or the top of
	// the surface-based inversion when there is one. It is set whenever the
	// sounding was analysed, even when no layer was found.
	BaseAGLM       float64
	TopAGLM        float64 // m AGL; NaN when not found
	BasePressurePa float64 // Pa
	TopPressurePa  float64 // Pa; NaN when not found
	// ThetaK and MixingRatioKgKg are mass-weighted means over the layer,
	// ∫X dp/Δp (as thermo.MassWeightedMean); the mixing-ratio mean is NaN when
	// humidity is missing at the base or top.
	ThetaK          float64
	MixingRatioKgKg float64
	// Spreads (max − min) inside the layer; the mixing-ratio spread is
	// taken over the levels that have humidity.
	ThetaRangeK          float64
	ThetaVRangeK         float64
	MixingRatioRangeKgKg float64
	Levels               int // profile levels in the layer, base and top included; 0 when not found
	// SuperadiabaticTopAGLM is the top of the near-surface superadiabatic
	// layer that was allowed at the bottom of this layer (see
	// MixedLayerConfig.SuperadiabaticMaxDepthM), m AGL; NaN when none.
	SuperadiabaticTopAGLM float64
}

func noMixedLayer() MixedLayer {
	nan := math.NaN()
	return MixedLayer{BaseAGLM: nan, TopAGLM: nan, BasePressurePa: nan, TopPressurePa: nan,
		ThetaK: nan, MixingRatioKgKg: nan, ThetaRangeK: nan, ThetaVRangeK: nan, MixingRatioRangeKgKg: nan,
		SuperadiabaticTopAGLM: nan}
}

// span tracks the minimum and maximum of a variable, ignoring NaN.
type span struct{ lo, hi float64 }

func newSpan() span { return span{math.Inf(1), math.Inf(-1)} }

func (s span) with(v float64) span {
	// What math.Min and math.Max give: for a non-NaN v and bounds that
	// are never NaN, Min(lo, v) is v when v < lo and lo when v > lo or
	// v == lo ≠ 0 (equal non-zero floats have the same bits); only zeros
	// of either sign need Min's own rule (and Max's alike).
	if v != v {
		return s
	}
	if v < s.lo {
		s.lo = v
	} else if v == 0 && s.lo == 0 {
		s.lo = min(s.lo, v)
	}
	if v > s.hi {
		s.hi = v
	} else if v == 0 && s.hi == 0 {
		s.hi = max(s.hi, v)
	}
	return s
}

func (s span) width() float64 {
	if s.hi < s.lo {
		return 0
	}
	return s.hi - s.lo
}

// mixedLayer grows a layer upward from profile position base through the
// first n levels while the θv spread stays within MaxThetaVRangeK and the
// mixing-ratio spread within MaxMixingRatioRangeKgKg (θ stands in for θv
// where humidity is missing). The layer is well mixed when it holds at
// least MinLevels levels and is at least MinDepthM deep.
//
// When allowSA is true and base is the surface (position 0), a
// superadiabatic run at the bottom (θv strictly decreasing level by level,
// its top no higher than SuperadiabaticMaxDepthM) belongs to the layer but
// the spread tests start at its top.
func (pr profile) mixedLayer(base, n int, cfg MixedLayerConfig, allowSA bool) MixedLayer {
	ml := noMixedLayer()
	if base < 0 || base >= n {
		return ml
	}
	ml.BaseAGLM, ml.BasePressurePa = pr.z[base], pr.p[base]
	from := base
	if allowSA && base == 0 && cfg.SuperadiabaticMaxDepthM > 0 {
		for from+1 < n && pr.thetav[from+1] < pr.thetav[from] && pr.z[from+1]-pr.z[0] <= cfg.SuperadiabaticMaxDepthM {
			from++
		}
	}
	tv, th, w := newSpan().with(pr.thetav[from]), newSpan(), newSpan().with(pr.w[from])
	for k := base; k <= from; k++ {
		th = th.with(pr.theta[k])
	}
	top := from
	for k := from + 1; k < n; k++ {
		tv2, w2 := tv.with(pr.thetav[k]), w.with(pr.w[k])
		if tv2.width() > cfg.MaxThetaVRangeK || w2.width() > cfg.MaxMixingRatioRangeKgKg {
			break
		}
		tv, w, th, top = tv2, w2, th.with(pr.theta[k]), k
	}
	if top-base+1 < cfg.MinLevels || pr.z[top]-pr.z[base] < cfg.MinDepthM || top == from && from > base {
		return ml
	}
	ml.Found, ml.Levels = true, top-base+1
	if from > base {
		ml.SuperadiabaticTopAGLM = pr.z[from]
	}
	ml.TopAGLM, ml.TopPressurePa = pr.z[top], pr.p[top]
	ml.ThetaRangeK, ml.ThetaVRangeK, ml.MixingRatioRangeKgKg = th.width(), tv.width(), w.width()
	ps := pr.p[base : top+1]
	ml.ThetaK = levelMassMean(ps, pr.theta[base:top+1])
	ml.MixingRatioKgKg = levelMassMean(ps, pr.w[base:top+1])
	return ml
}

// levelMassMean is thermo.MassWeightedMean for a layer whose ends are the
// first and last of the given levels (p strictly decreasing, Pa), without
// allocating: ∫X dp/Δp by the trapezoid rule in p, interior NaN values
// bridged, NaN when either end value is NaN.
func levelMassMean(p, x []float64) float64 {
	n := len(p)
	if n < 2 || math.IsNaN(x[0]) || math.IsNaN(x[n-1]) {
		return math.NaN()
	}
	var s float64
	prev := 0
	for i := 1; i < n; i++ {
		if math.IsNaN(x[i]) {
			continue
		}
		s += 0.5 * (x[prev] + x[i]) * (p[prev] - p[i])
		prev = i
	}
	return s / (p[0] - p[n-1])
}

// mixedLayers returns every well-mixed layer that starts at or above
// profile position start within the first n levels, lowest first: a layer
// is grown from each candidate base (mixedLayer); when one is found the
// next search starts at the level above its top, otherwise at the next
// level. Layers therefore never overlap.
func (pr profile) mixedLayers(start, n int, cfg MixedLayerConfig, allowSA bool) []MixedLayer {
	out, _ := pr.mixedLayersFrom(nil, start, n, cfg, allowSA)
	return out
}

// mixedLayersFrom is mixedLayers, appending the layers to out (empty) and
// also returning mixedLayer(start, …), which it grows first anyway.
func (pr profile) mixedLayersFrom(out []MixedLayer, start, n int, cfg MixedLayerConfig, allowSA bool) ([]MixedLayer, MixedLayer) {
	var first MixedLayer
	if start >= n-1 {
		return out, pr.mixedLayer(start, n, cfg, allowSA)
	}
	for b := start; b < n-1; {
		ml := pr.mixedLayer(b, n, cfg, allowSA)
		if b == start {
			first = ml
		}
		if !ml.Found {
			b++
			continue
		}
		out = append(out, ml)
		b += ml.Levels
	}
	return out, first
}
