package analyze

import (
	"math"

	"github.com/sondeclim/sondeclim/analyze/thermo"
)

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
	// ∫X dp/Δp (thermo.MassWeightedMean); the mixing-ratio mean is NaN when
	// humidity is missing at the base or top.
	ThetaK          float64
	MixingRatioKgKg float64
	// Spreads (max − min) inside the layer; the mixing-ratio spread is
	// taken over the levels that have humidity.
	ThetaRangeK          float64
	ThetaVRangeK         float64
	MixingRatioRangeKgKg float64
	Levels               int // profile levels in the layer, base and top included; 0 when not found
}

func noMixedLayer() MixedLayer {
	nan := math.NaN()
	return MixedLayer{BaseAGLM: nan, TopAGLM: nan, BasePressurePa: nan, TopPressurePa: nan,
		ThetaK: nan, MixingRatioKgKg: nan, ThetaRangeK: nan, ThetaVRangeK: nan, MixingRatioRangeKgKg: nan}
}

// span tracks the minimum and maximum of a variable, ignoring NaN.
type span struct{ lo, hi float64 }

func newSpan() span { return span{math.Inf(1), math.Inf(-1)} }

func (s span) with(v float64) span {
	if !math.IsNaN(v) {
		s.lo, s.hi = math.Min(s.lo, v), math.Max(s.hi, v)
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
func (pr profile) mixedLayer(base, n int, cfg MixedLayerConfig) MixedLayer {
	ml := noMixedLayer()
	if base < 0 || base >= n {
		return ml
	}
	ml.BaseAGLM, ml.BasePressurePa = pr.z[base], pr.p[base]
	tv, th, w := newSpan().with(pr.thetav[base]), newSpan().with(pr.theta[base]), newSpan().with(pr.w[base])
	top := base
	for k := base + 1; k < n; k++ {
		tv2, w2 := tv.with(pr.thetav[k]), w.with(pr.w[k])
		if tv2.width() > cfg.MaxThetaVRangeK || w2.width() > cfg.MaxMixingRatioRangeKgKg {
			break
		}
		tv, w, th, top = tv2, w2, th.with(pr.theta[k]), k
	}
	if top-base+1 < cfg.MinLevels || pr.z[top]-pr.z[base] < cfg.MinDepthM {
		return ml
	}
	ml.Found, ml.Levels = true, top-base+1
	ml.TopAGLM, ml.TopPressurePa = pr.z[top], pr.p[top]
	ml.ThetaRangeK, ml.ThetaVRangeK, ml.MixingRatioRangeKgKg = th.width(), tv.width(), w.width()
	ps := pr.p[base : top+1]
	ml.ThetaK = thermo.MassWeightedMean(ps, pr.theta[base:top+1], ps[0], ps[len(ps)-1])
	ml.MixingRatioKgKg = thermo.MassWeightedMean(ps, pr.w[base:top+1], ps[0], ps[len(ps)-1])
	return ml
}
